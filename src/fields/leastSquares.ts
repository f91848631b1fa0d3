/**
 * Linear least squares min |A·c − b| by Householder QR (Golub & Van Loan, Matrix Computations,
 * §5.3): stable for the moderately conditioned polynomial bases of a transfer map, where the
 * normal equations would square the condition number. Columns that are (numerically) dependent on
 * earlier ones get a zero coefficient instead of a huge one, so a population without spread in
 * some coordinate (an on-axis beam, one energy) still gives a usable fit.
 */

/**
 * Solve in place: `a` is rows×cols, row-major, and is overwritten by the factorisation; `b`
 * (length rows) is overwritten too. Returns the coefficients (length cols). A column whose part
 * independent of the earlier columns is below `dependence` times its norm is left out (coefficient 0).
 */
export function solveLeastSquares(a: Float64Array, rows: number, cols: number, b: Float64Array, dependence = 1e-10): Float64Array<ArrayBuffer> {
  return solveLeastSquaresMany(a, rows, cols, [b], dependence)[0];
}

/**
 * As solveLeastSquares for several right-hand sides with the same matrix: one factorisation, each
 * `b` overwritten; returns one coefficient array per right-hand side.
 */
export function solveLeastSquaresMany(a: Float64Array, rows: number, cols: number, bs: readonly Float64Array[], dependence = 1e-10): Float64Array<ArrayBuffer>[] {
  if (rows < cols) throw new Error(`least squares needs at least as many rows as columns (${rows} < ${cols})`);
  for (const b of bs) if (b.length < rows) throw new Error(`right-hand side has ${b.length} values, the matrix ${rows} rows`);
  const diag = new Float64Array(cols);
  // Column norms as plain sums of squares: the callers' bases are normalised to order one, so
  // neither overflow nor underflow is near, and Math.hypot in this loop dominated the fit's time.
  const original2 = new Float64Array(cols);
  for (let i = 0; i < rows; i++) {
    const o = i * cols;
    for (let k = 0; k < cols; k++) original2[k] += a[o + k] * a[o + k];
  }
  const dots = new Float64Array(cols);
  for (let k = 0; k < cols; k++) {
    let norm2 = 0;
    for (let i = k; i < rows; i++) norm2 += a[i * cols + k] * a[i * cols + k];
    const norm = Math.sqrt(norm2);
    // What is left of the column after projecting out the earlier ones: too little, and its
    // coefficient would be huge, cancelling others, and the fit would swing between the samples.
    if (norm === 0 || norm <= dependence * Math.sqrt(original2[k])) {
      diag[k] = 0; // dependent column: left out of the fit
      continue;
    }
    const xk = a[k * cols + k];
    const alpha = xk > 0 ? -norm : norm;
    // v = x − alpha·e1, stored in place of column k below the diagonal (v_k kept apart).
    const vk = xk - alpha;
    a[k * cols + k] = vk;
    const vNorm2 = norm2 - xk * xk + vk * vk; // |x|² with x_k replaced by v_k
    // Reflect the later columns, row by row (contiguous in memory): dots first, then the update.
    dots.fill(0, k + 1);
    for (let i = k; i < rows; i++) {
      const o = i * cols;
      const v = a[o + k];
      for (let j = k + 1; j < cols; j++) dots[j] += v * a[o + j];
    }
    for (let j = k + 1; j < cols; j++) dots[j] = (2 * dots[j]) / vNorm2;
    for (let i = k; i < rows; i++) {
      const o = i * cols;
      const v = a[o + k];
      for (let j = k + 1; j < cols; j++) a[o + j] -= dots[j] * v;
    }
    for (const b of bs) {
      let dot = 0;
      for (let i = k; i < rows; i++) dot += a[i * cols + k] * b[i];
      const f = (2 * dot) / vNorm2;
      for (let i = k; i < rows; i++) b[i] -= f * a[i * cols + k];
    }
    diag[k] = alpha;
  }
  return bs.map((b) => {
    const c = new Float64Array(cols);
    for (let k = cols - 1; k >= 0; k--) {
      if (diag[k] === 0) continue;
      let sum = b[k];
      for (let j = k + 1; j < cols; j++) sum -= a[k * cols + j] * c[j];
      c[k] = sum / diag[k];
    }
    return c;
  });
}
