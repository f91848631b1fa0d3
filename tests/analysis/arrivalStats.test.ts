import { describe, expect, it } from 'vitest';
import { arrivalStats, fwhmFromHistogram, GAUSSIAN_FWHM_FRACTION, resolvingPowerTof, shortestInterval } from '../../src/analysis/arrivalStats';
import { SeededRandom } from '../../src/ions/random';

const sortedNormal = (n: number, mu: number, sigma: number, seed = 5) => {
  const r = new SeededRandom(seed);
  const a = new Float64Array(n);
  for (let i = 0; i < n; i++) a[i] = mu + sigma * r.normal();
  return a.sort();
};

describe('resolving power (IUPAC 2013, Murray et al., Pure Appl. Chem. 85, 1515)', () => {
  it('R = m/Δm becomes t/(2Δt) for TOF because m ∝ t²', () => {
    // Independent check: m = k·t², Δm ≈ 2k·t·Δt, so m/Δm = t/(2Δt).
    const t = 40e-6;
    const dt = 4e-9;
    const k = 3.7e12;
    const dm = k * (t + dt / 2) ** 2 - k * (t - dt / 2) ** 2;
    expect(resolvingPowerTof(t, dt)).toBeCloseTo((k * t * t) / dm, 6);
    expect(resolvingPowerTof(t, 0)).toBeNull();
  });
});

describe('arrival-time FWHM', () => {
  it('the gaussian FWHM fraction is erf(√ln2)', () => {
    // erf(0.8325546) = 0.7609681 (Abramowitz & Stegun 7.1; value from memory, checked by series here).
    const x = Math.sqrt(Math.LN2);
    let sum = 0;
    for (let n = 0; n < 40; n++) {
      let term = x ** (2 * n + 1) / (2 * n + 1);
      for (let k = 1; k <= n; k++) term *= -1 / k;
      sum += term;
    }
    expect((2 / Math.sqrt(Math.PI)) * sum).toBeCloseTo(GAUSSIAN_FWHM_FRACTION, 9);
  });

  it('histogram and shortest-interval estimates give 2√(2 ln 2)·σ for a gaussian sample', () => {
    const sigma = 2e-9;
    const s = sortedNormal(200_000, 30e-6, sigma);
    const expected = 2 * Math.sqrt(2 * Math.LN2) * sigma;
    expect(Math.abs(fwhmFromHistogram(s)! / expected - 1)).toBeLessThan(0.03);
    expect(Math.abs(shortestInterval(s, GAUSSIAN_FWHM_FRACTION)! / expected - 1)).toBeLessThan(0.02);
  });

  it('a uniform arrival distribution has FWHM equal to its width', () => {
    const n = 100_000;
    const a = new Float64Array(n);
    const r = new SeededRandom(9);
    for (let i = 0; i < n; i++) a[i] = 10e-6 + 5e-9 * r.uniform();
    a.sort();
    expect(Math.abs(fwhmFromHistogram(a)! / 5e-9 - 1)).toBeLessThan(0.05);
  });

  it('far outliers do not change the FWHM of the main peak', () => {
    const s = sortedNormal(50_000, 30e-6, 1e-9);
    const withTail = new Float64Array(s.length + 50);
    withTail.set(s);
    for (let i = 0; i < 50; i++) withTail[s.length + i] = 35e-6 + i * 1e-7;
    withTail.sort();
    expect(Math.abs(fwhmFromHistogram(withTail)! / fwhmFromHistogram(s)! - 1)).toBeLessThan(0.1);
  });

  it('degenerate inputs give null or zero, never NaN', () => {
    expect(arrivalStats(new Float64Array(0)).fwhm_s).toBeNull();
    expect(fwhmFromHistogram(new Float64Array([1, 1, 1, 1, 1]))).toBe(0);
    const one = arrivalStats(new Float64Array([2e-5]));
    expect(one.mean_s).toBe(2e-5);
    expect(one.resolvingPower).toBeNull();
  });
});
