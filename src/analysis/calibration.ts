/**
 * External mass calibration of a TOF spectrum: t = t0 + a·√(m/z) [+ b·(m/z)].
 *
 * The square-root law is the TOF kinematics (t ∝ √(m/z) at fixed energy); t0 absorbs the trigger
 * and electronics delays, and the optional b term the small departures a real source and mirror
 * give (common practice, no source). The fit is ordinary (or weighted) least squares in time, on
 * the centred and scaled variable u = (√(m/z) − mean)/spread with a Householder QR factorisation,
 * so the tiny condition number of [1, u, u²] replaces the poor one of [1, √(m/z), m/z].
 * Errors are reported in m/z: residual_ppm = (m/z from the calibration − true m/z)/true m/z · 1e6.
 */

export interface CalibrationCoefficients {
  readonly t0_s: number;
  readonly a_s_per_sqrtTh: number;
  /** 0 for the two-parameter law. */
  readonly b_s_per_Th: number;
}

export interface Calibrant {
  /** True m/z (Th). */
  readonly mz: number;
  /** Measured peak time (s). */
  readonly time_s: number;
  /** Relative weight in the fit; 1 when absent. */
  readonly weight?: number;
}

export interface CalibrationReport {
  readonly model: 'sqrt' | 'sqrt+linear';
  readonly coefficients: CalibrationCoefficients;
  /** Per calibrant, in input order: (calibrated m/z − true m/z)/true m/z · 1e6. */
  readonly residuals_ppm: number[];
  /** Root mean square of residuals_ppm. */
  readonly rms_ppm: number;
  readonly maxAbsResidual_ppm: number;
  /** Calibrants minus fitted parameters; 0 means the law passes exactly through the points. */
  readonly degreesOfFreedom: number;
}

export interface CalibrationIssue {
  readonly path: string;
  readonly message: string;
}

export type CalibrationResult = { readonly ok: true; readonly report: CalibrationReport } | { readonly ok: false; readonly issues: CalibrationIssue[] };

export interface UnknownAssessment {
  readonly mz: number;
  readonly time_s: number;
  /** m/z the calibration assigns to time_s; null when the time lies outside the calibration's range. */
  readonly measuredMz: number | null;
  readonly error_ppm: number | null;
}

/** Relative m/z error in ppm. */
export function massError_ppm(measuredMz: number, trueMz: number): number {
  return ((measuredMz - trueMz) / trueMz) * 1e6;
}

export function timeFromMz(mz: number, c: CalibrationCoefficients): number {
  return c.t0_s + c.a_s_per_sqrtTh * Math.sqrt(mz) + c.b_s_per_Th * mz;
}

/**
 * m/z for a time: the root s = √(m/z) ≥ 0 of b·s² + a·s + (t0 − t) = 0 that tends to (t − t0)/a as
 * b → 0, computed as c/q with q = −(a + sign(a)·√disc)/2 to avoid cancellation (Numerical Recipes,
 * Press et al., 3rd ed., §5.6). Null when there is no such root (t before t0, or past the turning
 * point of a law with b < 0).
 */
export function mzFromTime(time_s: number, c: CalibrationCoefficients): number | null {
  const a = c.a_s_per_sqrtTh;
  const b = c.b_s_per_Th;
  const constant = c.t0_s - time_s;
  let s: number;
  if (b === 0) {
    if (a === 0) return null;
    s = -constant / a;
  } else {
    const disc = a * a - 4 * b * constant;
    if (!(disc >= 0)) return null;
    const q = -0.5 * (a + (a >= 0 ? 1 : -1) * Math.sqrt(disc));
    if (q === 0) return null;
    s = constant / q;
  }
  if (!(s >= 0) || !Number.isFinite(s)) return null;
  return s * s;
}

/** Fits the calibration law to the calibrants: ≥ 2 for t0 and a, ≥ 3 with the b term. */
export function fitCalibration(calibrants: readonly Calibrant[], options: { readonly quadratic?: boolean } = {}): CalibrationResult {
  const quadratic = options.quadratic ?? false;
  const p = quadratic ? 3 : 2;
  const n = calibrants.length;
  const issues: CalibrationIssue[] = [];
  if (n < p) issues.push({ path: 'calibrants', message: `need at least ${p} calibrants for the ${quadratic ? 'three' : 'two'}-parameter law (got ${n})` });
  calibrants.forEach((c, i) => {
    if (!Number.isFinite(c.mz) || c.mz <= 0) issues.push({ path: `calibrants[${i}].mz`, message: `must be a finite number > 0 (got ${c.mz})` });
    if (!Number.isFinite(c.time_s)) issues.push({ path: `calibrants[${i}].time_s`, message: `must be finite (got ${c.time_s})` });
    if (c.weight !== undefined && !(Number.isFinite(c.weight) && c.weight > 0)) {
      issues.push({ path: `calibrants[${i}].weight`, message: `must be a finite number > 0 (got ${c.weight})` });
    }
  });
  if (issues.length > 0) return { ok: false, issues };

  // Centred, scaled abscissa.
  let mean = 0;
  for (const c of calibrants) mean += Math.sqrt(c.mz);
  mean /= n;
  let spread = 0;
  for (const c of calibrants) spread = Math.max(spread, Math.abs(Math.sqrt(c.mz) - mean));
  if (!(spread > 0)) return { ok: false, issues: [{ path: 'calibrants', message: 'all calibrants have the same m/z; need distinct values' }] };

  // Weighted design matrix (column-major) and right-hand side.
  const design = new Float64Array(n * p);
  const rhs = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const c = calibrants[i];
    const root = Math.sqrt(c.weight ?? 1);
    const u = (Math.sqrt(c.mz) - mean) / spread;
    design[i] = root;
    design[n + i] = root * u;
    if (quadratic) design[2 * n + i] = root * u * u;
    rhs[i] = root * c.time_s;
  }
  const coef = solveLeastSquaresQR(design, rhs, n, p);
  if (coef === null) {
    return { ok: false, issues: [{ path: 'calibrants', message: `fewer than ${p} distinct m/z values: the calibration law is not determined` }] };
  }
  // Back from t = c0 + c1·u + c2·u² to t = t0 + a·s + b·s², u = (s − mean)/spread.
  const [c0, c1, c2 = 0] = coef;
  const k = spread;
  const coefficients: CalibrationCoefficients = {
    t0_s: c0 - (c1 * mean) / k + (c2 * mean * mean) / (k * k),
    a_s_per_sqrtTh: c1 / k - (2 * c2 * mean) / (k * k),
    b_s_per_Th: c2 / (k * k),
  };

  const residuals_ppm: number[] = [];
  for (let i = 0; i < n; i++) {
    const c = calibrants[i];
    const fitted = mzFromTime(c.time_s, coefficients);
    if (fitted === null) {
      return { ok: false, issues: [{ path: `calibrants[${i}].time_s`, message: 'the fitted law has no m/z at this time (calibrants inconsistent with t = t0 + a·√(m/z) + b·(m/z))' }] };
    }
    residuals_ppm.push(massError_ppm(fitted, c.mz));
  }
  let sq = 0;
  let maxAbs = 0;
  for (const r of residuals_ppm) {
    sq += r * r;
    maxAbs = Math.max(maxAbs, Math.abs(r));
  }
  return {
    ok: true,
    report: {
      model: quadratic ? 'sqrt+linear' : 'sqrt',
      coefficients,
      residuals_ppm,
      rms_ppm: Math.sqrt(sq / n),
      maxAbsResidual_ppm: maxAbs,
      degreesOfFreedom: n - p,
    },
  };
}

/** Mass errors of unknowns (true m/z known to the simulation) under a calibration. */
export function assessUnknowns(unknowns: readonly { readonly mz: number; readonly time_s: number }[], c: CalibrationCoefficients): UnknownAssessment[] {
  return unknowns.map((u) => {
    const measuredMz = mzFromTime(u.time_s, c);
    return { mz: u.mz, time_s: u.time_s, measuredMz, error_ppm: measuredMz === null ? null : massError_ppm(measuredMz, u.mz) };
  });
}

/**
 * Least squares min ‖A·x − y‖ for a column-major n×p matrix A (n ≥ p) by Householder QR
 * (Golub & Van Loan, Matrix Computations, 4th ed., §5.2, §5.3.3). A and y are overwritten.
 * Null when A is rank deficient (a diagonal of R below 1e-12 of the largest column norm).
 */
export function solveLeastSquaresQR(a: Float64Array, y: Float64Array, n: number, p: number): number[] | null {
  let largestNorm = 0;
  for (let j = 0; j < p; j++) {
    let norm = 0;
    for (let i = 0; i < n; i++) norm += a[j * n + i] ** 2;
    largestNorm = Math.max(largestNorm, Math.sqrt(norm));
  }
  if (!(largestNorm > 0)) return null;
  const diag = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    const col = j * n;
    let norm = 0;
    for (let i = j; i < n; i++) norm += a[col + i] ** 2;
    norm = Math.sqrt(norm);
    if (norm <= 1e-12 * largestNorm) return null;
    // Reflect x = A[j:, j] onto −sign(x_j)·‖x‖·e_1, the sign choice that avoids cancellation.
    const xj = a[col + j];
    const alpha = xj >= 0 ? -norm : norm;
    a[col + j] = xj - alpha; // v = x − alpha·e_1, stored in place of x
    const vNormSq = 2 * norm * norm - 2 * alpha * xj; // ‖x‖² − 2·alpha·x_j + alpha²
    diag[j] = alpha;
    for (let k = j + 1; k < p; k++) {
      let dot = 0;
      for (let i = j; i < n; i++) dot += a[col + i] * a[k * n + i];
      const f = (2 * dot) / vNormSq;
      for (let i = j; i < n; i++) a[k * n + i] -= f * a[col + i];
    }
    let dotY = 0;
    for (let i = j; i < n; i++) dotY += a[col + i] * y[i];
    const fy = (2 * dotY) / vNormSq;
    for (let i = j; i < n; i++) y[i] -= fy * a[col + i];
  }
  // Back substitution R·x = (Qᵀy)[0:p]; R's diagonal is in diag, above it in a.
  const x = new Array<number>(p).fill(0);
  for (let j = p - 1; j >= 0; j--) {
    let sum = y[j];
    for (let k = j + 1; k < p; k++) sum -= a[k * n + j] * x[k];
    x[j] = sum / diag[j];
  }
  return x;
}
