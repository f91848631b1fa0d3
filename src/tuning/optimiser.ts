/**
 * Derivative-free bounded minimisers for the auto-tune: golden-section search in 1-D (Kiefer 1953,
 * Proc. Am. Math. Soc. 4, 502) and Nelder–Mead in n-D (Nelder & Mead 1965, Comput. J. 7, 308;
 * coefficients and tie-breaking as in Lagarias et al. 1998, SIAM J. Optim. 9, 112). Bounds are handled by
 * working in the unit box and projecting trial points onto it. Both are deterministic: the same
 * function and start give the same sequence of evaluations.
 */

export type CostFunction = (x: readonly number[]) => number;

export interface MinimiseResult {
  readonly x: number[];
  readonly f: number;
  readonly evaluations: number;
}

const INV_PHI = (Math.sqrt(5) - 1) / 2; // 1/φ ≈ 0.618

/**
 * Minimum of a unimodal f on [a, b]; stops when the bracket is narrower than `tol`.
 * The best point seen is returned, so a non-unimodal f still gives its best sampled value.
 */
export function goldenSection(f: (x: number) => number, a: number, b: number, tol: number, maxEvaluations = 200): MinimiseResult {
  let lo = Math.min(a, b);
  let hi = Math.max(a, b);
  let x1 = hi - INV_PHI * (hi - lo);
  let x2 = lo + INV_PHI * (hi - lo);
  let f1 = f(x1);
  let f2 = f(x2);
  let evaluations = 2;
  let bestX = f1 <= f2 ? x1 : x2;
  let bestF = Math.min(f1, f2);
  while (hi - lo > tol && evaluations < maxEvaluations) {
    if (f1 <= f2) {
      hi = x2;
      x2 = x1;
      f2 = f1;
      x1 = hi - INV_PHI * (hi - lo);
      f1 = f(x1);
      if (f1 < bestF) [bestX, bestF] = [x1, f1];
    } else {
      lo = x1;
      x1 = x2;
      f1 = f2;
      x2 = lo + INV_PHI * (hi - lo);
      f2 = f(x2);
      if (f2 < bestF) [bestX, bestF] = [x2, f2];
    }
    evaluations++;
  }
  return { x: [bestX], f: bestF, evaluations };
}

export interface NelderMeadOptions {
  readonly lower: readonly number[];
  readonly upper: readonly number[];
  /** Initial simplex edge as a fraction of each bound width (default 0.1). */
  readonly initialStep?: number;
  /** Stop when every vertex lies within this fraction of the bound widths of the best (default 1e-4). */
  readonly xTol?: number;
  /** Or when the costs of the vertices agree to this relative tolerance (default 1e-9). */
  readonly fTol?: number;
  readonly maxEvaluations?: number;
}

/** Bounded Nelder–Mead from `start`. */
export function nelderMead(f: CostFunction, start: readonly number[], options: NelderMeadOptions): MinimiseResult {
  const n = start.length;
  const { lower, upper } = options;
  const width = lower.map((lo, i) => upper[i] - lo);
  const step = options.initialStep ?? 0.1;
  const xTol = options.xTol ?? 1e-4;
  const fTol = options.fTol ?? 1e-9;
  const maxEvaluations = options.maxEvaluations ?? 200 * n;
  let evaluations = 0;
  const clamp01 = (u: number): number => (u < 0 ? 0 : u > 1 ? 1 : u);
  const toX = (u: readonly number[]): number[] => u.map((ui, i) => lower[i] + clamp01(ui) * width[i]);
  const cost = (u: number[]): number => {
    evaluations++;
    const value = f(toX(u));
    return Number.isNaN(value) ? Infinity : value;
  };

  // Simplex in unit-box coordinates; each edge steps inwards from the start when it would leave the box.
  const u0 = start.map((x, i) => clamp01(width[i] > 0 ? (x - lower[i]) / width[i] : 0));
  const simplex: number[][] = [u0];
  for (let i = 0; i < n; i++) {
    const v = u0.slice();
    v[i] = v[i] + step <= 1 ? v[i] + step : v[i] - step;
    simplex.push(v);
  }
  const fs = simplex.map(cost);

  const centroid = new Array<number>(n);
  const along = (from: readonly number[], t: number): number[] => from.map((fi, i) => clamp01(centroid[i] + t * (fi - centroid[i])));

  while (evaluations < maxEvaluations) {
    // Order best → worst; stable on ties so the run is reproducible.
    const order = fs.map((_, i) => i).sort((a, b) => fs[a] - fs[b] || a - b);
    const sorted = order.map((i) => simplex[i]);
    const sortedF = order.map((i) => fs[i]);
    for (let i = 0; i <= n; i++) {
      simplex[i] = sorted[i];
      fs[i] = sortedF[i];
    }
    let diameter = 0;
    for (let k = 1; k <= n; k++) for (let i = 0; i < n; i++) diameter = Math.max(diameter, Math.abs(simplex[k][i] - simplex[0][i]));
    if (diameter < xTol) break;
    if (Number.isFinite(fs[n]) && Math.abs(fs[n] - fs[0]) <= fTol * Math.max(Math.abs(fs[0]), 1e-300)) break;

    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += simplex[k][i];
      centroid[i] = s / n;
    }
    const worst = simplex[n];
    const reflected = along(worst, -1);
    const fr = cost(reflected);
    if (fr < fs[0]) {
      const expanded = along(worst, -2);
      const fe = cost(expanded);
      if (fe < fr) [simplex[n], fs[n]] = [expanded, fe];
      else [simplex[n], fs[n]] = [reflected, fr];
      continue;
    }
    if (fr < fs[n - 1]) {
      [simplex[n], fs[n]] = [reflected, fr];
      continue;
    }
    // Contraction: outside when the reflection improved on the worst, inside otherwise.
    const outside = fr < fs[n];
    const contracted = along(outside ? reflected : worst, 0.5);
    const fc = cost(contracted);
    if (fc < (outside ? fr : fs[n])) {
      [simplex[n], fs[n]] = [contracted, fc];
      continue;
    }
    // Shrink towards the best vertex.
    for (let k = 1; k <= n; k++) {
      simplex[k] = simplex[k].map((v, i) => simplex[0][i] + 0.5 * (v - simplex[0][i]));
      fs[k] = cost(simplex[k]);
    }
  }
  let best = 0;
  for (let k = 1; k <= n; k++) if (fs[k] < fs[best]) best = k;
  return { x: toX(simplex[best]), f: fs[best], evaluations };
}

/** Points of the Halton sequence in the unit box (bases 2, 3, 5, ...), a deterministic spread of restart points. */
export function haltonPoint(index: number, dimensions: number): number[] {
  const primes = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29];
  const out: number[] = [];
  for (let d = 0; d < dimensions; d++) {
    const base = primes[d % primes.length];
    let f = 1;
    let r = 0;
    for (let i = index + 1; i > 0; i = Math.floor(i / base)) {
      f /= base;
      r += f * (i % base);
    }
    out.push(r);
  }
  return out;
}
