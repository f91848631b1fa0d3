/** Small closed forms behind the analytic starts, against tabulated or textbook values. */
import { describe, expect, it } from 'vitest';
import { erfc, truncatedNormalMean, wileyMcLarenFocus_m, wileyMcLarenK0 } from '../../src/tuning/analyticStarts';

describe('erfc', () => {
  it('matches Abramowitz & Stegun 1964, Table 7.1, to the fit accuracy (1.2e-7)', () => {
    for (const [x, erf] of [
      [0.5, 0.5204998778],
      [1, 0.8427007929],
      [2, 0.995322265],
    ]) {
      expect(Math.abs(erfc(x) - (1 - erf))).toBeLessThan(1.2e-7);
      expect(Math.abs(erfc(-x) - (1 + erf))).toBeLessThan(1.2e-7);
    }
  });
});

describe('mean of a truncated normal', () => {
  it('a standard normal truncated at 0 is the half-normal, mean √(2/π) (textbook)', () => {
    expect(truncatedNormalMean(0, 1, 0)).toBeCloseTo(Math.sqrt(2 / Math.PI), 6);
  });
  it('no truncation leaves the mean; a far cut changes it negligibly', () => {
    expect(truncatedNormalMean(400, 150, -Infinity)).toBe(400);
    expect(truncatedNormalMean(400, 20, 0)).toBe(400);
  });
});

describe('Wiley & McLaren 1955 space focus', () => {
  it('reduces to D = 2·s0 for a single field (d = 0, k0 = 1)', () => {
    expect(wileyMcLarenK0(2e-3, 1e6, 0, 0)).toBe(1);
    expect(wileyMcLarenFocus_m(2e-3, 0, 1)).toBeCloseTo(4e-3, 15);
  });
});
