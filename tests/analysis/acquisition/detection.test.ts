/**
 * Counting and analog detection. References: the non-paralysable dead-time law m = n/(1 + nτ)
 * (G. F. Knoll, Radiation Detection and Measurement, 4th ed., Wiley 2010, ch. 4); the Poisson
 * dead-time correction of accumulated TOF counting (Stephan, Zehnpfenning & Benninghoven,
 * J. Vac. Sci. Technol. A 12 (1994) 405, formula from memory); the secondary-electron detection
 * probability 1 − e^(−γ) (Fraser, Int. J. Mass Spectrom. 215 (2002) 13).
 */
import { describe, expect, it } from 'vitest';
import { allocateEnsemble } from '../../../src/ions/ensemble';
import { SeededRandom } from '../../../src/ions/random';
import { Fate } from '../../../src/physics/fates';
import { blockedFraction, countNonParalysable, correctDeadTime } from '../../../src/analysis/acquisition/deadTime';
import { simulateDetection, singlePulseHeight, type DetectionConfig, type DetectionInput } from '../../../src/analysis/acquisition/detection';
import { detectionProbability } from '../../../src/analysis/acquisition/detectionYield';
import { moduloShots, partitionShots } from '../../../src/analysis/acquisition/shots';
import type { AcquisitionSettings } from '../../../src/analysis/spectrum';

describe('non-paralysable dead time (Knoll ch. 4)', () => {
  it.each([
    [1e6, 100e-9],
    [5e6, 100e-9],
    [2e7, 50e-9],
  ])('a Poisson stream of rate %s /s with τ = %s s is counted at n/(1 + nτ)', (rate, tau) => {
    const rng = new SeededRandom(21);
    const n = 400_000;
    const t = new Float64Array(n);
    let clock = 0;
    for (let i = 0; i < n; i++) {
      clock += -Math.log(1 - rng.uniform()) / rate;
      t[i] = clock;
    }
    const order = Int32Array.from({ length: n }, (_, i) => i);
    const counted = new Uint8Array(n);
    const m = countNonParalysable(t, order, 0, n, tau, counted) / clock;
    const expected = rate / (1 + rate * tau);
    // Counted events form a renewal process; their count's relative sd is below 1/sqrt(count).
    expect(Math.abs(m / expected - 1)).toBeLessThan(5 / Math.sqrt(m * clock));
  });

  it('an event blocks the bins inside its dead time wholly and the last one by half on average', () => {
    expect(blockedFraction(8, 7)).toBe(1);
    expect(blockedFraction(8, 8)).toBe(0.5);
    expect(blockedFraction(8, 9)).toBe(0);
    expect(blockedFraction(8.5, 8)).toBeCloseTo(0.875, 15);
    expect(blockedFraction(8.5, 9)).toBeCloseTo(0.125, 15);
  });

  it('the correction leaves a histogram without dead-time losses unchanged at low counts', () => {
    const counts = Float64Array.from([0, 1, 0, 2, 0, 0, 1]);
    const { corrected } = correctDeadTime(counts, 1e9, 0);
    for (let i = 0; i < counts.length; i++) expect(corrected[i]).toBeCloseTo(counts[i], 6);
  });
});

/** A single peak of `ions` arrivals, gaussian about 10 µs with the given sd. */
function peakInput(ions: number, sd_s: number, ionsPerShot: number, seed = 4): DetectionInput {
  const ens = allocateEnsemble([{ label: 'p', mz: 500, charge: 1, abundance: 1 }], [ions]);
  const rng = new SeededRandom(seed, 77);
  const arrival = new Float64Array(ions);
  for (let i = 0; i < ions; i++) arrival[i] = 10e-6 + sd_s * rng.normal();
  return {
    arrival_s: arrival,
    fate: new Uint8Array(ions).fill(Fate.DETECTED),
    weight: new Float64Array(ions).fill(1),
    finalSpeed_m_per_s: new Float64Array(ions).fill(8e4),
    blockStart: ens.speciesStart,
    partition: partitionShots(ens, ionsPerShot, 'poisson', seed),
  };
}

const settings = (sampleInterval_s: number): AcquisitionSettings => ({
  pulseFwhm_s: 1e-9,
  detectorJitterSd_s: 0,
  triggerJitterSd_s: 0,
  shots: 1,
  seed: 3,
  sampleInterval_s,
  recordStart_s: 9.95e-6,
  recordLength_s: 0.1e-6,
});

describe('counting detection with dead time', () => {
  const input = peakInput(200_000, 1e-9, 1.5);
  const config = (deadTime_s: number, channels = 1): DetectionConfig => ({
    detector: { mode: 'counting', deadTime_s, channels, correction: true },
    yieldLaw: null,
    settings: settings(0.25e-9),
  });

  it('loses counts and shifts the peak early; the correction restores the area and most of the shift', () => {
    const r = simulateDetection(input, config(2e-9));
    const b = r.blocks[0];
    expect(b.events).toBe(200_000);
    const lost = 1 - b.counted / b.events;
    expect(lost).toBeGreaterThan(0.2);
    const shift = b.measured!.centroid_s - b.ideal!.centroid_s;
    expect(shift).toBeLessThan(-0.1e-9);
    // Measured on this case: 40 % lost, −0.33 ns shift; corrected area within 0.02 %, shift −0.003 ns.
    expect(Math.abs(b.corrected!.area / b.ideal!.area - 1)).toBeLessThan(0.01);
    expect(Math.abs(b.corrected!.centroid_s - b.ideal!.centroid_s)).toBeLessThan(0.05 * Math.abs(shift));
  });

  it('more channels share the load: fewer counts lost', () => {
    const one = simulateDetection(input, config(2e-9, 1)).blocks[0];
    const four = simulateDetection(input, config(2e-9, 4)).blocks[0];
    expect(four.counted).toBeGreaterThan(one.counted);
    expect(simulateDetection(input, config(0)).blocks[0].counted).toBe(200_000);
  });
});

describe('analog detection', () => {
  const s = settings(0.5e-9);
  const sd = s.pulseFwhm_s / 2.3548200450309493;
  const h1 = singlePulseHeight(s.sampleInterval_s, sd);

  it('with no gain spread, saturation or noise the measured record is the ideal one', () => {
    const input = peakInput(20_000, 2e-9, 5);
    const r = simulateDetection(input, { detector: { mode: 'analog', gainRelativeSd: 0, saturation_ions: null, baselineNoise_ions: 0 }, yieldLaw: null, settings: s });
    for (let k = 0; k < r.ideal.length; k++) expect(r.measured[k]).toBeCloseTo(r.ideal[k], 9);
  });

  it('gain spread keeps the mean area; saturation flattens the top and loses area', () => {
    const input = peakInput(40_000, 2e-9, 50);
    const spread = simulateDetection(input, { detector: { mode: 'analog', gainRelativeSd: 0.5, saturation_ions: null, baselineNoise_ions: 0 }, yieldLaw: null, settings: s }).blocks[0];
    expect(Math.abs(spread.measured!.area / spread.ideal!.area - 1)).toBeLessThan(0.02);
    const sat = simulateDetection(input, { detector: { mode: 'analog', gainRelativeSd: 0.5, saturation_ions: 3, baselineNoise_ions: 0 }, yieldLaw: null, settings: s });
    const b = sat.blocks[0];
    expect(sat.clippedSamples).toBeGreaterThan(0);
    expect(b.measured!.area).toBeLessThan(0.9 * b.ideal!.area);
    expect(Math.max(...sat.measured)).toBeLessThanOrEqual(sat.shots * 3 * h1 * (1 + 1e-12));
    // A flat top is wider at half height than the unsaturated peak.
    expect(b.measured!.fwhm_s!).toBeGreaterThan(b.ideal!.fwhm_s!);
  });

  it('baseline noise has the stated sd per sample, summed over shots', () => {
    const input = peakInput(2_000, 2e-9, 0.5);
    const r = simulateDetection(input, { detector: { mode: 'analog', gainRelativeSd: 0, saturation_ions: null, baselineNoise_ions: 0.1 }, yieldLaw: null, settings: { ...s, recordLength_s: 2e-6 } });
    let s2 = 0;
    let n = 0;
    for (let k = 0; k < r.ideal.length; k++) {
      if (r.time_s[k] < 10.5e-6) continue; // far from the peak
      s2 += (r.measured[k] - r.ideal[k]) ** 2;
      n++;
    }
    const expected = 0.1 * h1 * Math.sqrt(r.shots);
    expect(Math.abs(Math.sqrt(s2 / n) / expected - 1)).toBeLessThan(0.1);
  });
});

describe('detection yield (secondary-electron emission, Fraser 2002; threshold, Beuhler & Friedman 1980)', () => {
  const law = { thresholdSpeed_m_per_s: 2e3, slope_per_m_per_s: 0.05e-3, openAreaFraction: 0.6 };
  it('is zero below the threshold speed, open-area fraction × (1 − e^(−γ)) above', () => {
    expect(detectionProbability(law, 1.9e3)).toBe(0);
    expect(detectionProbability(law, 22e3)).toBeCloseTo(0.6 * (1 - Math.exp(-1)), 12);
    expect(detectionProbability(law, 1e6)).toBeCloseTo(0.6, 12);
  });
  it('thins counting events by the law', () => {
    const input = peakInput(50_000, 1e-9, 0.1);
    const slow = { ...input, finalSpeed_m_per_s: new Float64Array(50_000).fill(12e3) };
    const r = simulateDetection(slow, { detector: { mode: 'counting', deadTime_s: 0, channels: 1, correction: false }, yieldLaw: law, settings: settings(0.25e-9) });
    const p = detectionProbability(law, 12e3);
    expect(r.blocks[0].meanEfficiency).toBeCloseTo(p, 12);
    expect(Math.abs(r.blocks[0].events / 50_000 - p)).toBeLessThan(5 * Math.sqrt((p * (1 - p)) / 50_000));
  });
  it('a fixed one-ion-per-shot partition is the modulo rule', () => {
    const p = moduloShots(10, 3);
    expect(Array.from(p.shotOfIon)).toEqual([0, 1, 2, 0, 1, 2, 0, 1, 2, 0]);
  });
});
