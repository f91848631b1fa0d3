/**
 * The statistics the Monte-Carlo part needs: the standard normal quantile, sample percentiles and
 * histograms (the draw design is src/tolerance/latticeDesign.ts).
 */
import { standardNormalCdf } from '../analysis/detectorResponse';

// Rational approximations of P. J. Acklam's inverse normal CDF (relative error < 1.2e-9; coefficients
// from memory, checked in the test against tabulated quantiles), followed in the central region by
// one Newton step on the project's Φ (standardNormalCdf).
const A = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const B = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const C = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const D = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
const P_LOW = 0.02425;

/** Φ⁻¹(p) for 0 < p < 1. */
export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError(`normalQuantile: p must lie in (0, 1) (got ${p})`);
  let x: number;
  if (p < P_LOW) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5]) / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1);
  } else if (p <= 1 - P_LOW) {
    const q = p - 0.5;
    const r = q * q;
    x = ((((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q) / (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1);
  } else {
    const q = Math.sqrt(-2 * Math.log(1 - p));
    x = -(((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5]) / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1);
  }
  // Newton only in the central region: in the tails the table's absolute error (~2e-11) exceeds
  // what the rational form already achieves relative to p.
  if (p >= P_LOW && p <= 1 - P_LOW) {
    const pdf = Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
    x -= (standardNormalCdf(x) - p) / pdf;
  }
  return x;
}

/**
 * Sample quantile with linear interpolation between order statistics at plotting positions
 * (k − ½)/n (Hazen; Hyndman & Fan, Am. Stat. 50 (1996) 361, definition 5), clamped to the extremes.
 * The Monte Carlo's draws put one value in each of n equal-probability strata of a lattice
 * coordinate, whose k-th value sits at probability (k − ½)/n on average: at those positions the
 * percentiles of the design carry no offset, while definition 7 ((k − 1)/(n − 1)) read the 95th
 * percentile at 0.9489 for n = 400 (0.7 % low in a normal's 1.645).
 */
export function quantile(sorted: ArrayLike<number>, p: number): number | null {
  const n = sorted.length;
  if (n === 0) return null;
  const h = n * p - 0.5;
  if (h <= 0) return sorted[0];
  if (h >= n - 1) return sorted[n - 1];
  const lo = Math.floor(h);
  return sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]);
}

export interface Summary {
  readonly count: number;
  readonly mean: number | null;
  readonly sd: number | null;
  readonly median: number | null;
  readonly p5: number | null;
  readonly p95: number | null;
}

/** Summary of the finite values (nulls and non-finite values are counted out). */
export function summarise(values: readonly (number | null)[]): Summary {
  const finite = values.filter((v): v is number => v !== null && Number.isFinite(v));
  const sorted = Float64Array.from(finite).sort();
  const n = sorted.length;
  if (n === 0) return { count: 0, mean: null, sd: null, median: null, p5: null, p95: null };
  let sum = 0;
  for (const v of sorted) sum += v;
  const mean = sum / n;
  let sq = 0;
  for (const v of sorted) sq += (v - mean) ** 2;
  return { count: n, mean, sd: n > 1 ? Math.sqrt(sq / (n - 1)) : 0, median: quantile(sorted, 0.5), p5: quantile(sorted, 0.05), p95: quantile(sorted, 0.95) };
}

export interface Histogram {
  /** Bin edges, length bins + 1. */
  readonly edges: number[];
  readonly counts: number[];
}

/** Equal-width histogram of the finite values over their range (one bin when they are all equal). */
export function histogram(values: readonly (number | null)[], bins = 30): Histogram {
  const finite = values.filter((v): v is number => v !== null && Number.isFinite(v));
  if (finite.length === 0) return { edges: [], counts: [] };
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of finite) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  if (!(hi > lo)) return { edges: [lo, hi], counts: [finite.length] };
  const width = (hi - lo) / bins;
  const counts = new Array<number>(bins).fill(0);
  for (const v of finite) counts[Math.min(bins - 1, Math.floor((v - lo) / width))]++;
  return { edges: Array.from({ length: bins + 1 }, (_, k) => lo + k * width), counts };
}
