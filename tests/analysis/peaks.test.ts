/**
 * Peak finding and the IUPAC 2013 resolving-power definitions (Murray et al., Pure Appl. Chem. 85,
 * 1515–1609): checked on analytic gaussians whose widths, centroids and valleys are known in
 * closed form.
 */
import { describe, expect, it } from 'vitest';
import { findPeaks, peakInMz, valleysBetween } from '../../src/analysis/peaks';

const NS = 1e-9;

/** Samples of Σ heights·exp(−(t−centre)²/2σ²) at t_k = start + k·dt. */
function gaussians(start: number, dt: number, count: number, list: { centre: number; sd: number; height: number }[]) {
  const t = new Float64Array(count);
  const y = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    t[k] = start + k * dt;
    for (const g of list) y[k] += g.height * Math.exp(-((t[k] - g.centre) ** 2) / (2 * g.sd * g.sd));
  }
  return { t, y };
}

/** Maximum of a smooth function near x0 by golden-section search (independent of the code under test). */
function goldenMax(f: (x: number) => number, lo: number, hi: number): number {
  const r = (Math.sqrt(5) - 1) / 2;
  let a = lo;
  let b = hi;
  for (let i = 0; i < 200; i++) {
    const c = b - r * (b - a);
    const d = a + r * (b - a);
    if (f(c) > f(d)) b = d;
    else a = c;
  }
  return f((a + b) / 2);
}

describe('IUPAC 2013 widths on an analytic gaussian', () => {
  const sd = 2 * NS;
  const centre = 20_000.3 * NS; // 20 µs flight time, off the sample grid
  const { t, y } = gaussians(19_950 * NS, sd / 200, 25_000, [{ centre, sd, height: 7 }]);
  const [peak] = findPeaks(t, y);

  it('FWHM = 2·sqrt(2·ln 2)·σ (definition of the normal density)', () => {
    expect(Math.abs(peak.fwhm_s! / (2 * Math.sqrt(2 * Math.LN2) * sd) - 1)).toBeLessThan(1e-5);
  });

  it('10 % valley width: full width at 5 % height = 2·sqrt(2·ln 20)·σ', () => {
    // exp(−x²/2σ²) = 0.05  ⇒  x = σ·sqrt(2·ln 20); the width is twice that.
    expect(Math.abs(peak.width5pct_s! / (2 * Math.sqrt(2 * Math.log(20)) * sd) - 1)).toBeLessThan(1e-5);
  });

  it('R = t/(2Δt) at FWHM and at the 10 % valley (m ∝ t² for TOF)', () => {
    const fwhm = 2 * Math.sqrt(2 * Math.LN2) * sd;
    const w5 = 2 * Math.sqrt(2 * Math.log(20)) * sd;
    expect(Math.abs(peak.resolvingPowerFwhm! / (centre / (2 * fwhm)) - 1)).toBeLessThan(1e-5);
    expect(Math.abs(peak.resolvingPower10pctValley! / (centre / (2 * w5)) - 1)).toBeLessThan(1e-5);
  });

  it('area = Σ samples ≈ √(2π)·σ·h/Δt', () => {
    expect(Math.abs(peak.area / ((Math.sqrt(2 * Math.PI) * sd * 7) / (sd / 200)) - 1)).toBeLessThan(1e-9);
  });

  it('in m/z: with t = a·√(m/z), R = m/Δm equals t/(2Δt) to second order in Δt/t', () => {
    const a = centre / Math.sqrt(1500); // puts the peak at m/z 1500
    const inMz = peakInMz(peak, { t0_s: 0, a_s_per_sqrtTh: a, b_s_per_Th: 0 });
    expect(inMz.mz!).toBeCloseTo(1500, 6);
    expect(Math.abs(inMz.resolvingPowerFwhm! / peak.resolvingPowerFwhm! - 1)).toBeLessThan(1e-6);
    expect(Math.abs(inMz.resolvingPower10pctValley! / peak.resolvingPower10pctValley! - 1)).toBeLessThan(1e-6);
  });
});

describe('centroid (intensity-weighted over the region above half height)', () => {
  it('is the centre of a symmetric peak sampled symmetrically', () => {
    const dt = 0.1 * NS;
    const centre = 1000 * dt;
    const { t, y } = gaussians(0, dt, 2001, [{ centre, sd: 0.7 * NS, height: 1 }]);
    expect(Math.abs(findPeaks(t, y)[0].centroid_s - centre)).toBeLessThan(1e-9 * dt);
  });

  it('stays near the centre wherever the samples fall, even at 3 samples per FWHM', () => {
    const dt = 1 * NS;
    for (const phase of [0.1, 0.25, 0.4, 0.5, 0.77]) {
      const centre = (100 + phase) * dt;
      const sd = 3 * dt / (2 * Math.sqrt(2 * Math.LN2));
      const { t, y } = gaussians(0, dt, 200, [{ centre, sd, height: 1 }]);
      const peak = findPeaks(t, y)[0];
      // Symmetric sampling cannot bias a symmetric peak; asymmetric sampling is bounded by a few % of Δt.
      expect(Math.abs(peak.centroid_s - centre)).toBeLessThan(0.05 * dt);
    }
  });
});

describe('valleys between neighbouring peaks', () => {
  it('two equal gaussians Δ apart: valley = 2·exp(−Δ²/8σ²) over the true peak height', () => {
    const sd = 1 * NS;
    for (const sep of [3 * sd, 4 * sd, 5.5 * sd]) {
      const c1 = 100 * NS;
      const c2 = c1 + sep;
      const { t, y } = gaussians(80 * NS, sd / 100, 4000 + Math.round(sep / (sd / 100)), [
        { centre: c1, sd, height: 1 },
        { centre: c2, sd, height: 1 },
      ]);
      const peaks = findPeaks(t, y);
      expect(peaks).toHaveLength(2);
      const [valley] = valleysBetween(t, y, peaks);
      const f = (x: number): number => Math.exp(-((x - c1) ** 2) / (2 * sd * sd)) + Math.exp(-((x - c2) ** 2) / (2 * sd * sd));
      const apex = goldenMax(f, c1 - sd, c1 + sd);
      const expected = (2 * Math.exp(-(sep * sep) / (8 * sd * sd))) / apex;
      expect(Math.abs(valley.valleyFraction / expected - 1)).toBeLessThan(1e-4);
      expect(Math.abs(valley.time_s - (c1 + c2) / 2)).toBeLessThan(sd / 100);
    }
  });

  it('two equal gaussians separated by the single-peak 5 % width leave a 10 % valley (the IUPAC equivalence)', () => {
    const sd = 1 * NS;
    const sep = 2 * Math.sqrt(2 * Math.log(20)) * sd;
    const { t, y } = gaussians(80 * NS, sd / 100, 5000, [
      { centre: 90 * NS, sd, height: 1 },
      { centre: 90 * NS + sep, sd, height: 1 },
    ]);
    const peaks = findPeaks(t, y);
    const [valley] = valleysBetween(t, y, peaks);
    // Each tail adds exp(−sep²/2σ²) = 0.05²⁰... ≈ 6e-6 to the other's apex: the equivalence holds to ~1e-5.
    expect(Math.abs(valley.valleyFraction - 0.1)).toBeLessThan(1e-4);
  });

  it('an unresolved pair has no FWHM: the profile never falls to half height between them', () => {
    const sd = 1 * NS;
    const { t, y } = gaussians(80 * NS, sd / 50, 2000, [
      { centre: 95 * NS, sd, height: 1 },
      { centre: 97.5 * NS, sd, height: 1 },
    ]);
    const peaks = findPeaks(t, y);
    expect(peaks).toHaveLength(2);
    expect(peaks[0].fwhm_s).toBeNull();
    expect(peaks[1].fwhm_s).toBeNull();
    expect(peaks[0].resolvingPowerFwhm).toBeNull();
    expect(valleysBetween(t, y, peaks)[0].valleyFraction).toBeGreaterThan(0.5);
  });
});

describe('peak finding', () => {
  const sd = 1 * NS;
  const list = [
    { centre: 50 * NS, sd, height: 1 },
    { centre: 60 * NS, sd, height: 0.3 },
    { centre: 63.5 * NS, sd, height: 0.5 },
    { centre: 80 * NS, sd, height: 0.004 }, // below 1 % of the tallest
    { centre: 53 * NS, sd: 0.05 * NS, height: 0.008 }, // a bump on a flank: above 1 % height, low prominence
  ];
  const { t, y } = gaussians(30 * NS, 0.01 * NS, 6000, list);

  it('finds the peaks above height and prominence thresholds, in time order', () => {
    const peaks = findPeaks(t, y);
    expect(peaks.map((p) => Math.round(p.apexTime_s / (0.1 * NS)) / 10)).toEqual([50, 60, 63.5]);
    expect(peaks[0].height).toBeCloseTo(1, 3);
  });

  it('lower thresholds reveal the small peak and the flank bump', () => {
    const peaks = findPeaks(t, y, { minRelativeHeight: 0.001, minRelativeProminence: 0.001 });
    expect(peaks.map((p) => Math.round(p.apexTime_s / (0.1 * NS)) / 10)).toEqual([50, 53, 60, 63.5, 80]);
  });

  it('minimum separation keeps the taller of two close apexes', () => {
    const peaks = findPeaks(t, y, { minSeparation_s: 5 * NS });
    expect(peaks.map((p) => Math.round(p.apexTime_s / (0.1 * NS)) / 10)).toEqual([50, 63.5]);
  });

  it('areas split at the valley add up to the whole signal', () => {
    const peaks = findPeaks(t, y, { minRelativeHeight: 0.001, minRelativeProminence: 0.001 });
    const total = y.reduce((a, b) => a + b, 0);
    expect(peaks.reduce((a, p) => a + p.area, 0)).toBeCloseTo(total, 9);
  });

  it('an empty or flat spectrum has no peaks', () => {
    expect(findPeaks(new Float64Array(10), new Float64Array(10))).toEqual([]);
    expect(findPeaks(Float64Array.of(0, 1, 2), Float64Array.of(1, 1, 1))).toEqual([]);
  });
});
