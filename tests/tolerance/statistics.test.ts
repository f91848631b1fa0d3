/** The Monte-Carlo statistics: normal quantile, the stratified design, sample percentiles. */
import { describe, expect, it } from 'vitest';
import { standardNormalCdf } from '../../src/analysis/detectorResponse';
import { korobovGenerator, latticeNormalDesign, symmetricEigen } from '../../src/tolerance/latticeDesign';
import { histogram, normalQuantile, quantile, summarise } from '../../src/tolerance/statistics';

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

describe('latticeNormalDesign', () => {
  const project = (row: Float64Array, w: readonly number[]): number => row.reduce((a, v, k) => a + (v * w[k]) / Math.hypot(...w), 0);

  it('puts one species direction in one stratum per draw, and is reproducible', () => {
    const weights = [3, -1, 0.5, 2];
    const n = 200;
    const { z, design } = latticeNormalDesign(n, [weights], 4, 9);
    expect(design.latticeDimensions).toBe(1);
    const strata = new Set(z.map((row) => Math.floor(standardNormalCdf(project(row, weights)) * n)));
    expect(strata.size).toBe(n);
    expect(latticeNormalDesign(n, [weights], 4, 9).z).toEqual(z);
    expect(latticeNormalDesign(n, [weights], 4, 10).z).not.toEqual(z);
  });

  it('stratifies every lattice coordinate (principal directions of two species)', () => {
    const a = [-3, 3.45, 9.98, -1, 2.19];
    const b = [-3, 3.45, 9.98, -1, 1.1];
    const n = 400;
    const { z, design } = latticeNormalDesign(n, [a, b], 5, 3);
    expect(design.latticeDimensions).toBe(2);
    expect(design.latticeShare).toBeCloseTo(1, 12);
    const { vectors } = symmetricEigen(
      Array.from({ length: 5 }, (_, i) => Array.from({ length: 5 }, (_, j) => (a[i] * a[j]) / Math.hypot(...a) ** 2 + (b[i] * b[j]) / Math.hypot(...b) ** 2)),
    );
    for (const v of vectors.slice(0, 2)) {
      const strata = new Set(z.map((row) => Math.floor(standardNormalCdf(project(row, v)) * n)));
      expect(strata.size).toBe(n);
    }
  });

  it('keeps each coordinate standard normal (mean 0, variance 1 within sampling error)', () => {
    const { z } = latticeNormalDesign(4000, [[1, 1, 0], [1, -0.5, 0]], 3, 4);
    for (let k = 0; k < 3; k++) {
      const s = summarise(z.map((row) => row[k]));
      // 4000 draws: sd of the sample mean 0.016, of the sample sd ~0.011 (5 sd bounds).
      expect(Math.abs(s.mean!)).toBeLessThan(0.08);
      expect(Math.abs(s.sd! - 1)).toBeLessThan(0.06);
    }
  });

  it('lays out two near-parallel species so that both percentiles sit within 3 % at 400 draws', () => {
    // Sampling alone (no simulation): a plain sample's 95th percentile has sd
    // sqrt(0.95·0.05/400)/φ(1.645) = 0.106 of a normal's sd, 6.4 % of 1.645 (the asymptotic variance of a sample
    // quantile, Cramér, Mathematical Methods of Statistics, 1946, §28.5 — from memory).
    const a = [-3, 3.45, 9.98, -1, 2.19];
    const b = [-3, 3.45, 9.98, -1, 1.1];
    let worst = 0;
    for (let seed = 1; seed <= 20; seed++) {
      const { z } = latticeNormalDesign(400, [a, b], 5, seed);
      for (const w of [a, b]) {
        const y = Float64Array.from(z.map((row) => project(row, w))).sort();
        worst = Math.max(worst, Math.abs(quantile(y, 0.95)! / 1.6448536 - 1), Math.abs(quantile(y, 0.05)! / -1.6448536 - 1));
      }
    }
    expect(worst).toBeLessThan(0.03);
  });

  it('falls back to plain draws without a direction', () => {
    const { z, design } = latticeNormalDesign(10, [[0, 0]], 2, 1);
    expect(design.latticeDimensions).toBe(0);
    expect(z).toHaveLength(10);
  });
});

describe('korobovGenerator and symmetricEigen', () => {
  it('finds the Fibonacci lattice in two dimensions (Sloan & Joe 1994, §5.5: N = F_k, g = (1, F_{k−1}))', () => {
    // For N = 377 (a Fibonacci number) the best two-dimensional rank-1 lattice is (1, 233) or its mirror (1, 144).
    const g = korobovGenerator(377, [1, 1]);
    expect([144, 233]).toContain(g[1]);
  });

  it('diagonalises a symmetric matrix', () => {
    const m = [[2, 1, 0], [1, 2, 0], [0, 0, 5]];
    const { values, vectors } = symmetricEigen(m);
    expect(values[0]).toBeCloseTo(5, 12);
    expect(values[1]).toBeCloseTo(3, 12);
    expect(values[2]).toBeCloseTo(1, 12);
    for (let c = 0; c < 3; c++) {
      for (let i = 0; i < 3; i++) expect(m[i].reduce((s, x, j) => s + x * vectors[c][j], 0)).toBeCloseTo(values[c] * vectors[c][i], 12);
    }
  });
});

describe('percentiles and histograms', () => {
  it('interpolates between order statistics at (k − ½)/n (Hyndman & Fan 1996, definition 5; numpy method "hazen")', () => {
    // Q(p) = x_j + g·(x_{j+1} − x_j), j = ⌊np + ½⌋, g = np + ½ − j (1-based), clamped to the extremes.
    // numpy.percentile(range(1, 11), [5, 33, 50, 97], method='hazen') = 1.0, 3.8, 5.5, 10.0 (worked by hand).
    const sorted = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
    expect(quantile(sorted, 0.05)).toBeCloseTo(1, 12);
    expect(quantile(sorted, 0.33)).toBeCloseTo(3.8, 12);
    expect(quantile(sorted, 0.5)).toBeCloseTo(5.5, 12);
    expect(quantile(sorted, 0.97)).toBeCloseTo(10, 12);
    expect(quantile([1, 2, 3, 4], 0.05)).toBe(1);
    expect(quantile([], 0.5)).toBe(null);
  });

  it('counts every finite value once and leaves nulls out', () => {
    const h = histogram([0, 1, 2, 3, null, 4, Number.NaN], 4);
    expect(h.counts.reduce((a, b) => a + b, 0)).toBe(5);
    expect(h.edges).toEqual([0, 1, 2, 3, 4]);
    expect(summarise([null, 2, 4]).count).toBe(2);
  });
});
