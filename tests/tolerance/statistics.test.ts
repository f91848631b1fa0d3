/** The Monte-Carlo statistics: normal quantile, the stratified design, sample percentiles. */
import { describe, expect, it } from 'vitest';
import { standardNormalCdf } from '../../src/analysis/detectorResponse';
import { histogram, normalQuantile, quantile, stratifiedNormalDesign, summarise } from '../../src/tolerance/statistics';

describe('normalQuantile', () => {
  it('matches tabulated quantiles of the standard normal distribution', () => {
    // Abramowitz & Stegun, Handbook of Mathematical Functions, Table 26.5 (percentage points): 1.959963985 at 0.975, 1.644853627 at 0.95, 3.090232306 at 0.999.
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963985, 8);
    expect(normalQuantile(0.95)).toBeCloseTo(1.644853627, 8);
    expect(normalQuantile(0.999)).toBeCloseTo(3.090232306, 8);
    expect(normalQuantile(0.5)).toBeCloseTo(0, 12);
  });

  it('inverts Φ across the range, both tails included', () => {
    // Φ (standardNormalCdf) is tabulated to ~2e-11 absolute, so the round trip is checked in absolute terms.
    for (const p of [1e-12, 1e-6, 0.001, 0.02, 0.0243, 0.1, 0.3, 0.7, 0.9, 0.9757, 0.999, 1 - 1e-9]) {
      const x = normalQuantile(p);
      expect(Math.abs(standardNormalCdf(x) - p)).toBeLessThan(1e-10 + 2e-9 * Math.min(p, 1 - p));
    }
    expect(normalQuantile(1e-6)).toBeCloseTo(-4.753424309, 7); // A&S Table 26.5 region, from memory
    expect(() => normalQuantile(0)).toThrow(RangeError);
    expect(() => normalQuantile(1)).toThrow(RangeError);
  });
});

describe('stratifiedNormalDesign', () => {
  it('puts the weighted sum in one stratum per draw, and is reproducible', () => {
    const weights = [3, -1, 0.5, 2];
    const n = 200;
    const z = stratifiedNormalDesign(n, weights, 9);
    const norm = Math.hypot(...weights);
    const strata = new Set<number>();
    for (const row of z) {
      const along = row.reduce((a, v, k) => a + (v * weights[k]) / norm, 0);
      strata.add(Math.floor(standardNormalCdf(along) * n));
    }
    expect(strata.size).toBe(n);
    expect(stratifiedNormalDesign(n, weights, 9)).toEqual(z);
    expect(stratifiedNormalDesign(n, weights, 10)).not.toEqual(z);
  });

  it('keeps each coordinate standard normal (mean 0, variance 1 within sampling error)', () => {
    const z = stratifiedNormalDesign(4000, [1, 1, 0], 4);
    for (let k = 0; k < 3; k++) {
      const s = summarise(z.map((row) => row[k]));
      // 4000 draws: sd of the sample mean 0.016, of the sample sd ~0.011 (5 sd bounds).
      expect(Math.abs(s.mean!)).toBeLessThan(0.08);
      expect(Math.abs(s.sd! - 1)).toBeLessThan(0.06);
    }
  });
});

describe('percentiles and histograms', () => {
  it('interpolates between order statistics (Hyndman & Fan 1996, definition 7, the default of R and numpy)', () => {
    // numpy.percentile([1, 2, 3, 4], [5, 50, 95]) = 1.15, 2.5, 3.85.
    const sorted = [1, 2, 3, 4];
    expect(quantile(sorted, 0.05)).toBeCloseTo(1.15, 12);
    expect(quantile(sorted, 0.5)).toBeCloseTo(2.5, 12);
    expect(quantile(sorted, 0.95)).toBeCloseTo(3.85, 12);
    expect(quantile([], 0.5)).toBe(null);
  });

  it('counts every finite value once and leaves nulls out', () => {
    const h = histogram([0, 1, 2, 3, null, 4, Number.NaN], 4);
    expect(h.counts.reduce((a, b) => a + b, 0)).toBe(5);
    expect(h.edges).toEqual([0, 1, 2, 3, 4]);
    expect(summarise([null, 2, 4]).count).toBe(2);
  });
});
