/**
 * Detector response: the single-ion pulse, its deposition into digitizer samples, and the trigger
 * jitter model. Expected values come from the normal distribution's tables and closed forms, not
 * from the code under test.
 */
import { describe, expect, it } from 'vitest';
import {
  applyTriggerJitter,
  depositGaussianPulse,
  effectivePulseSd_s,
  erfSeries,
  GAUSSIAN_FWHM_PER_SD,
  standardNormalCdf,
  triggerOffsets_s,
  type DetectorSettings,
} from '../../src/analysis/detectorResponse';
import { buildSpectrum } from '../../src/analysis/spectrum';
import { findPeaks } from '../../src/analysis/peaks';
import { Fate } from '../../src/physics/fates';

const NS = 1e-9;

/** Weighted mean and variance of a sampled profile (bin centres as abscissae). */
function moments(t: Float64Array, y: Float64Array): { mean: number; variance: number; area: number } {
  let area = 0;
  let m1 = 0;
  for (let k = 0; k < y.length; k++) {
    area += y[k];
    m1 += y[k] * t[k];
  }
  const mean = m1 / area;
  let m2 = 0;
  for (let k = 0; k < y.length; k++) m2 += y[k] * (t[k] - mean) ** 2;
  return { mean, variance: m2 / area, area };
}

describe('standard normal CDF', () => {
  it('matches tabulated values (from memory; standard normal table, Abramowitz & Stegun Table 26.1)', () => {
    expect(standardNormalCdf(0)).toBe(0.5);
    expect(standardNormalCdf(1)).toBeCloseTo(0.8413447460685429, 10);
    expect(standardNormalCdf(1.96)).toBeCloseTo(0.9750021048517795, 10);
    expect(standardNormalCdf(3)).toBeCloseTo(0.9986501019683699, 10);
    expect(standardNormalCdf(-2)).toBeCloseTo(0.022750131948179195, 10);
    // erf(1) = 0.8427007929497149 (same table source, from memory)
    expect(erfSeries(1)).toBeCloseTo(0.8427007929497149, 14);
  });

  it('agrees with Simpson-rule integration of the gaussian density (independent quadrature)', () => {
    const density = (u: number): number => Math.exp(-0.5 * u * u) / Math.sqrt(2 * Math.PI);
    for (const upper of [-3.3, -0.71, 0.2, 1.234, 2.5, 4.1]) {
      // Φ(x) = 0.5 + ∫_0^x φ, composite Simpson with 2000 intervals.
      const m = 2000;
      const h = upper / m;
      let s = density(0) + density(upper);
      for (let i = 1; i < m; i++) s += (i % 2 === 1 ? 4 : 2) * density(i * h);
      const reference = 0.5 + (s * h) / 3;
      expect(Math.abs(standardNormalCdf(upper) - reference)).toBeLessThan(1e-11);
    }
  });
});

describe('single-ion pulse deposited into samples', () => {
  it('a gaussian pulse of FWHM w gives a peak of FWHM w and area = the ion intensity (fine sampling)', () => {
    const w = 1.5 * NS;
    const dt = w / 200;
    const samples = new Float64Array(2000);
    const centre = 1000.37 * dt; // off the sample grid
    const weight = 0.85; // e.g. grid transmission
    const inside = depositGaussianPulse(samples, 0, dt, centre, w / GAUSSIAN_FWHM_PER_SD, weight);
    let sum = 0;
    for (const v of samples) sum += v;
    expect(sum).toBeCloseTo(weight, 12);
    expect(inside).toBeCloseTo(weight, 12);
    const t = Float64Array.from({ length: samples.length }, (_, k) => (k + 0.5) * dt);
    const peaks = findPeaks(t, samples);
    expect(peaks).toHaveLength(1);
    // FWHM = 2·sqrt(2 ln 2)·σ for a gaussian (definition of the normal density).
    expect(Math.abs(peaks[0].fwhm_s! - w) / w).toBeLessThan(1e-4);
  });

  it("integrated sampling adds Δt²/12 to the variance (Sheppard's correction, Proc. London Math. Soc. 29, 353, 1898)", () => {
    const dt = 1 * NS;
    for (const [sd, phase] of [
      [1.2 * NS, 0.13],
      [2.0 * NS, 0.5],
      [3.7 * NS, 0.91],
    ]) {
      const samples = new Float64Array(200);
      const centre = (100 + phase) * dt;
      depositGaussianPulse(samples, 0, dt, centre, sd, 1);
      const t = Float64Array.from({ length: samples.length }, (_, k) => (k + 0.5) * dt);
      const m = moments(t, samples);
      // For a gaussian with σ ≥ Δt the correction is exact to ~exp(−2π²σ²/Δt²).
      expect(Math.abs(m.variance - (sd * sd + (dt * dt) / 12)) / (sd * sd)).toBeLessThan(1e-8);
      expect(Math.abs(m.mean - centre) / dt).toBeLessThan(1e-8);
    }
  });

  it('a pulse much narrower than the sample interval fills one or two samples: measured FWHM between Δt and 2Δt', () => {
    const dt = 1 * NS;
    const t = Float64Array.from({ length: 64 }, (_, k) => (k + 0.5) * dt);
    for (const phase of [0.02, 0.3, 0.5, 0.77, 0.999]) {
      const samples = new Float64Array(64);
      depositGaussianPulse(samples, 0, dt, (30 + phase) * dt, (dt / 20) / GAUSSIAN_FWHM_PER_SD, 1);
      let filled = 0;
      for (const v of samples) if (v > 1e-12) filled++;
      expect(filled).toBeGreaterThanOrEqual(1);
      expect(filled).toBeLessThanOrEqual(2);
      const peak = findPeaks(t, samples)[0];
      expect(peak.fwhm_s!).toBeGreaterThanOrEqual(dt * (1 - 1e-12));
      expect(peak.fwhm_s!).toBeLessThanOrEqual(2 * dt * (1 + 1e-12));
    }
  });

  it('sd 0 (ideal detector) puts the whole intensity in the sample holding the arrival time', () => {
    const samples = new Float64Array(10);
    depositGaussianPulse(samples, 5 * NS, 1 * NS, 8.2 * NS, 0, 2);
    expect(samples[3]).toBe(2);
    expect(samples.reduce((a, b) => a + b, 0)).toBe(2);
    expect(depositGaussianPulse(samples, 5 * NS, 1 * NS, 4.9 * NS, 0, 2)).toBe(0);
  });
});

describe('timing jitter', () => {
  const base: DetectorSettings = { pulseFwhm_s: 1 * NS, detectorJitterSd_s: 0.3 * NS, triggerJitterSd_s: 0.5 * NS, shots: 4000, seed: 11 };

  /** `ions` ions all arriving at exactly `arrival`. */
  const sameArrival = (ions: number, arrival: number) => ({
    arrival_s: new Float64Array(ions).fill(arrival),
    fate: new Uint8Array(ions).fill(Fate.DETECTED),
  });

  it('detector jitter folds into the pulse in quadrature', () => {
    const pulseSd = 1 * NS / (2 * Math.sqrt(2 * Math.LN2));
    expect(effectivePulseSd_s(base)).toBeCloseTo(Math.hypot(pulseSd, 0.3 * NS), 20);
  });

  it('trigger jitter over many shots broadens a peak by the quadrature sum (statistical, seeded)', () => {
    const dt = 0.05 * NS;
    const settings = { ...base, sampleInterval_s: dt, recordStart_s: 9.99e-6, recordLength_s: 20 * NS };
    const spectrum = buildSpectrum(sameArrival(8000, 10e-6), settings);
    const m = moments(spectrum.time_s, spectrum.intensity);
    const pulseSd = 1 * NS / GAUSSIAN_FWHM_PER_SD;
    // Independent gaussian contributions add in variance; sampling adds Δt²/12 (Sheppard).
    const expectedVar = pulseSd ** 2 + (0.3 * NS) ** 2 + (0.5 * NS) ** 2 + dt ** 2 / 12;
    // Sample variance of 4000 shot offsets: relative sd √(2/4000) ≈ 2 % of the trigger part.
    expect(Math.abs(m.variance / expectedVar - 1)).toBeLessThan(0.05);
    const peaks = findPeaks(spectrum.time_s, spectrum.intensity, { minRelativeProminence: 0.2 });
    expect(peaks).toHaveLength(1);
    const expectedFwhm = GAUSSIAN_FWHM_PER_SD * Math.sqrt(expectedVar);
    expect(Math.abs(peaks[0].fwhm_s! / expectedFwhm - 1)).toBeLessThan(0.06);
    // Without the trigger term the peak is clearly narrower: the test can tell them apart.
    const quiet = buildSpectrum(sameArrival(8000, 10e-6), { ...settings, triggerJitterSd_s: 0 });
    const fwhmQuiet = findPeaks(quiet.time_s, quiet.intensity)[0].fwhm_s!;
    expect(peaks[0].fwhm_s! / fwhmQuiet).toBeGreaterThan(1.25);
  });

  it('with a single shot, trigger jitter moves the whole spectrum but broadens nothing', () => {
    const dt = 0.02 * NS;
    const settings = { ...base, shots: 1, triggerJitterSd_s: 3 * NS, sampleInterval_s: dt, recordStart_s: 9.97e-6, recordLength_s: 60 * NS };
    const spectrum = buildSpectrum(sameArrival(500, 10e-6), settings);
    const m = moments(spectrum.time_s, spectrum.intensity);
    const offset = triggerOffsets_s(settings)[0];
    expect(Math.abs(offset)).toBeGreaterThan(0);
    expect(Math.abs(m.mean - (10e-6 + offset))).toBeLessThan(1e-6 * NS);
    const expectedVar = effectivePulseSd_s(settings) ** 2 + dt ** 2 / 12;
    expect(Math.abs(m.variance / expectedVar - 1)).toBeLessThan(1e-6);
  });

  it('shots are assigned round-robin and reproduced by the seed', () => {
    const arrival = Float64Array.from({ length: 12 }, (_, i) => i * NS);
    const settings = { ...base, shots: 5 };
    const a = applyTriggerJitter(arrival, settings);
    const b = applyTriggerJitter(arrival, settings);
    expect(Array.from(a)).toEqual(Array.from(b));
    for (let i = 0; i + 5 < 12; i++) expect(a[i + 5] - arrival[i + 5]).toBeCloseTo(a[i] - arrival[i], 22);
    const other = applyTriggerJitter(arrival, { ...settings, seed: 12 });
    expect(other[0]).not.toBe(a[0]);
    const none = applyTriggerJitter(arrival, { ...settings, triggerJitterSd_s: 0 });
    expect(Array.from(none)).toEqual(Array.from(arrival));
  });
});
