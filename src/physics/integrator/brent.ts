/**
 * Brent's root finder (R. P. Brent, "Algorithms for Minimization without Derivatives",
 * Prentice-Hall 1973, Ch. 4, procedure `zero`): inverse quadratic interpolation and secant steps
 * safeguarded by bisection, so it never does worse than bisection and usually converges
 * superlinearly. Allocation-free: the function is an object with an `evaluate` method (no closure
 * needed per call) and the report goes into a caller-owned object.
 */

/** A scalar function of one variable, as an object so callers can reuse one instance. */
export interface ScalarFunction {
  evaluate(x: number): number;
}

/** Filled in place by `findRootBrent`. */
export interface RootReport {
  /** Best estimate of the root (the bracket end with the smaller |f|). */
  root: number;
  /** f(root). */
  fRoot: number;
  /** The other end of the final bracket; the exact root lies between `root` and `other`. */
  other: number;
  /** Function evaluations made (the two end values are supplied by the caller). */
  evaluations: number;
  /** False when the iteration cap was hit before the bracket shrank to the tolerance. */
  converged: boolean;
}

export function createRootReport(): RootReport {
  return { root: 0, fRoot: 0, other: 0, evaluations: 0, converged: false };
}

const MACHINE_EPSILON = Number.EPSILON;

/**
 * Find a root of `fn` in [a, b] given fa = f(a) and fb = f(b) with fa·fb ≤ 0. The bracket shrinks
 * until it is below 4·eps·|x| + 2·absTol (Brent's tolerance), so with absTol ≈ eps·|x| the root is
 * located to a few units in the last place. Returns the root; when the values do not bracket a
 * root (or are not numbers) it returns NaN and sets `report.converged = false`.
 */
export function findRootBrent(
  fn: ScalarFunction,
  a: number,
  b: number,
  fa: number,
  fb: number,
  absTol: number,
  maxIterations: number,
  report: RootReport,
): number {
  report.evaluations = 0;
  report.converged = false;
  if (!(fa * fb <= 0)) {
    report.root = Number.NaN;
    report.fRoot = Number.NaN;
    report.other = Number.NaN;
    return Number.NaN;
  }
  if (fa === 0 || fb === 0) {
    const atA = fa === 0;
    report.root = atA ? a : b;
    report.fRoot = 0;
    report.other = atA ? a : b;
    report.converged = true;
    return report.root;
  }
  // Brent's variables: b is the best estimate, a the previous one, c the other side of the bracket.
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  let evaluations = 0;
  for (;;) {
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol = 2 * MACHINE_EPSILON * Math.abs(b) + absTol;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb === 0) {
      report.converged = true;
      break;
    }
    if (evaluations >= maxIterations) break;
    if (Math.abs(e) < tol || Math.abs(fa) <= Math.abs(fb)) {
      d = m;
      e = m;
    } else {
      let s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        // Secant step.
        p = 2 * m * s;
        q = 1 - s;
      } else {
        // Inverse quadratic interpolation.
        const qa = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1));
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      s = e;
      e = d;
      if (2 * p < 3 * m * q - Math.abs(tol * q) && p < Math.abs(0.5 * s * q)) {
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    }
    a = b;
    fa = fb;
    if (Math.abs(d) > tol) b += d;
    else b += m > 0 ? tol : -tol;
    fb = fn.evaluate(b);
    evaluations++;
    if ((fb > 0 && fc > 0) || (fb <= 0 && fc <= 0)) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
  }
  report.root = b;
  report.fRoot = fb;
  report.other = c;
  report.evaluations = evaluations;
  return b;
}
