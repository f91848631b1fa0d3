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
  if (rows < cols) throw new Error(`least squares needs at least as many rows as columns (${rows} < ${cols})`);
  const diag = new Float64Array(cols);
  const original = new Float64Array(cols);
  for (let k = 0; k < cols; k++) for (let i = 0; i < rows; i++) original[k] = Math.hypot(original[k], a[i * cols + k]);
  for (let k = 0; k < cols; k++) {
    let norm = 0;
    for (let i = k; i < rows; i++) norm = Math.hypot(norm, a[i * cols + k]);
    // What is left of the column after projecting out the earlier ones: too little, and its
    // coefficient would be huge, cancelling others, and the fit would swing between the samples.
    if (norm === 0 || norm <= dependence * original[k]) {
      diag[k] = 0; // dependent column: left out of the fit
      continue;
    }
    const alpha = a[k * cols + k] > 0 ? -norm : norm;
    // v = x − alpha·e1, stored in place of column k below the diagonal (v_k kept apart).
    const vk = a[k * cols + k] - alpha;
    a[k * cols + k] = vk;
    let vNorm2 = vk * vk;
    for (let i = k + 1; i < rows; i++) vNorm2 += a[i * cols + k] * a[i * cols + k];
    for (let j = k + 1; j < cols; j++) {
      let dot = 0;
      for (let i = k; i < rows; i++) dot += a[i * cols + k] * a[i * cols + j];
      const f = (2 * dot) / vNorm2;
      for (let i = k; i < rows; i++) a[i * cols + j] -= f * a[i * cols + k];
    }
    let dot = 0;
    for (let i = k; i < rows; i++) dot += a[i * cols + k] * b[i];
    const f = (2 * dot) / vNorm2;
    for (let i = k; i < rows; i++) b[i] -= f * a[i * cols + k];
    diag[k] = alpha;
  }
  const c = new Float64Array(cols);
  for (let k = cols - 1; k >= 0; k--) {
    if (diag[k] === 0) continue;
    let sum = b[k];
    for (let j = k + 1; j < cols; j++) sum -= a[k * cols + j] * c[j];
    c[k] = sum / diag[k];
  }
  return c;
}
