/**
 * Centroid and rms width of a peak as the fit compares them: the first and second moments of the
 * sampled profile over a window of fixed half-width centred on the centroid itself (found by
 * iterating c ← mean over [c − W, c + W]). Samples are bins; one cut by the window edge counts by
 * the fraction inside, so the moments move smoothly with the peak, which the least-squares Jacobian
 * needs. The same estimator is applied to the measured and to the simulated spectrum.
 *
 * Counting statistics: when sample k holds y_k counts (variance y_k, Poisson), first-order error
 * propagation gives Var(c) = Σ f_k²(x_k − c)² y_k / S² and Var(w²) = Σ f_k²((x_k − c)² − w²)² y_k / S²
 * with S = Σ f_k y_k (the window's own movement does not enter to first order at the fixed point).
 */

export interface WindowedMoments {
  readonly centroid: number;
  /** sqrt of the second central moment in the window. */
  readonly rmsWidth: number;
  /** Σ f_k y_k in the window. */
  readonly area: number;
  /** Counting-statistics variances (see the module comment), for y in counts. */
  readonly centroidVariance: number;
  readonly rmsWidthVariance: number;
  readonly window: readonly [number, number];
  readonly converged: boolean;
}

/**
 * Moments of y(x) (x ascending, bins between midpoints of neighbours) in a self-centred window of
 * half-width `halfWidth` starting from `guess`; null when the window holds no positive signal.
 */
export function windowedMoments(x: ArrayLike<number>, y: ArrayLike<number>, guess: number, halfWidth: number): WindowedMoments | null {
  const n = x.length;
  if (n < 2 || !(halfWidth > 0)) return null;
  let c = guess;
  let converged = false;
  let sums = sumsInWindow(x, y, c, halfWidth);
  for (let iter = 0; iter < 50 && sums !== null; iter++) {
    const next = sums.m1 / sums.m0;
    const moved = Math.abs(next - c);
    c = next;
    sums = sumsInWindow(x, y, c, halfWidth);
    if (moved <= 1e-9 * halfWidth) {
      converged = true;
      break;
    }
  }
  if (sums === null) return null;
  const S = sums.m0;
  const centroid = sums.m1 / S;
  const w2 = Math.max(sums.m2 / S - (centroid - c) * (centroid - c), 0);
  let varC = 0;
  let varW2 = 0;
  forEachBin(x, c, halfWidth, (k, f) => {
    const counts = Math.max(y[k], 0);
    const d = x[k] - centroid;
    varC += f * f * d * d * counts;
    const e = d * d - w2;
    varW2 += f * f * e * e * counts;
  });
  varC /= S * S;
  varW2 /= S * S;
  const w = Math.sqrt(w2);
  return {
    centroid,
    rmsWidth: w,
    area: S,
    centroidVariance: varC,
    rmsWidthVariance: w > 0 ? varW2 / (4 * w2) : Infinity,
    window: [c - halfWidth, c + halfWidth],
    converged,
  };
}

interface Sums {
  m0: number;
  m1: number;
  m2: number;
}

/** Σ f·y, Σ f·y·(x − c) + c·Σ f·y, and Σ f·y·(x − c)² over the window about c. */
function sumsInWindow(x: ArrayLike<number>, y: ArrayLike<number>, c: number, halfWidth: number): Sums | null {
  let m0 = 0;
  let m1 = 0;
  let m2 = 0;
  forEachBin(x, c, halfWidth, (k, f) => {
    const w = f * y[k];
    const d = x[k] - c;
    m0 += w;
    m1 += w * d;
    m2 += w * d * d;
  });
  if (!(m0 > 0)) return null;
  return { m0, m1: m1 + c * m0, m2 };
}

/** Calls visit(k, fraction of bin k inside [c − W, c + W]) for every bin that overlaps it. */
function forEachBin(x: ArrayLike<number>, c: number, halfWidth: number, visit: (k: number, fraction: number) => void): void {
  const n = x.length;
  const lo = c - halfWidth;
  const hi = c + halfWidth;
  let k = lowerIndex(x, lo);
  for (; k < n; k++) {
    const left = k === 0 ? x[0] - 0.5 * (x[1] - x[0]) : 0.5 * (x[k - 1] + x[k]);
    const right = k === n - 1 ? x[n - 1] + 0.5 * (x[n - 1] - x[n - 2]) : 0.5 * (x[k] + x[k + 1]);
    if (left >= hi) break;
    if (right <= lo) continue;
    const inside = Math.min(right, hi) - Math.max(left, lo);
    if (inside > 0) visit(k, inside / (right - left));
  }
}

/** First index whose bin may reach past `value` (binary search on the ascending x). */
function lowerIndex(x: ArrayLike<number>, value: number): number {
  let a = 0;
  let b = x.length - 1;
  while (a < b) {
    const m = (a + b) >> 1;
    if (x[m] < value) a = m + 1;
    else b = m;
  }
  return Math.max(0, a - 1);
}
