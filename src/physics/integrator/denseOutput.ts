/**
 * The continuous extension of the last accepted step: y(t) for any t in [t_old, t], written into
 * a caller-provided array. Its coefficients cost extra right-hand-side evaluations for some
 * methods (3 for DOP853, none for DOPRI5), so they are built only on demand — typically only in a
 * step where an event changed sign — and at most once per step.
 *
 * Form (Hairer's, see tableaus.ts), with x = (t − t_old)/h:
 *   y(x) = y_old + x(F0 + (1−x)(F1 + x(F2 + (1−x)(F3 + …))))
 */
import type { RhsFunction, RungeKuttaWorkspace } from './rungeKutta';

/**
 * Build the interpolant of the workspace's last accepted step (no-op if already built). Must be
 * called before the next step starts, with the same right-hand side and context as the step.
 */
export function prepareDenseOutput<C>(ws: RungeKuttaWorkspace, rhs: RhsFunction<C>, context: C): void {
  if (ws.denseReady) return;
  const tab = ws.tableau;
  const n = ws.dimension;
  const s = tab.stages;
  const aStart = tab.aSparse.start;
  const aOffset = ws.aOffset;
  const aVal = tab.aSparse.value;
  const c = tab.c;
  const k = ws.k;
  const yOld = ws.yOld;
  const y = ws.y;
  const ys = ws.yStage;
  const h = ws.h;
  const tOld = ws.tOld;
  for (let j = s + 1; j < tab.totalStages; j++) {
    const pEnd = aStart[j + 1];
    for (let i = 0; i < n; i++) {
      let acc = 0;
      for (let p = aStart[j]; p < pEnd; p++) acc += aVal[p] * k[aOffset[p] + i];
      ys[i] = yOld[i] + h * acc;
    }
    rhs(tOld + c[j] * h, ys, ws.kRows[j], context);
    ws.evaluations++;
  }
  const F = ws.dense;
  const dStart = tab.dSparse.start;
  const dOffset = ws.dOffset;
  const dVal = tab.dSparse.value;
  const rows = tab.denseRows;
  for (let i = 0; i < n; i++) {
    const dy = y[i] - yOld[i];
    const fOld = k[i];
    const fNew = k[s * n + i];
    F[i] = dy;
    F[n + i] = h * fOld - dy;
    F[2 * n + i] = 2 * dy - h * (fOld + fNew);
    for (let r = 0; r < rows; r++) {
      let acc = 0;
      for (let p = dStart[r]; p < dStart[r + 1]; p++) acc += dVal[p] * k[dOffset[p] + i];
      F[(3 + r) * n + i] = h * acc;
    }
  }
  ws.denseReady = true;
}

/**
 * Evaluate the interpolant of the last accepted step at t into out[outOffset … outOffset + n − 1]
 * and return `out`. Requires `prepareDenseOutput` for this step. Meant for t within the step;
 * outside it the polynomial is an extrapolation of no guaranteed accuracy.
 */
export function evaluateDenseOutput(ws: RungeKuttaWorkspace, t: number, out: Float64Array, outOffset = 0): Float64Array {
  const n = ws.dimension;
  const F = ws.dense;
  const yOld = ws.yOld;
  const last = 2 + ws.tableau.denseRows;
  const x = (t - ws.tOld) / ws.h;
  const x1 = 1 - x;
  for (let i = 0; i < n; i++) {
    let acc = F[last * n + i];
    // Weight in front of the bracket holding F_r: x for even r, (1 − x) for odd r.
    for (let r = last - 1; r >= 0; r--) acc = F[r * n + i] + ((r + 1) & 1 ? x1 : x) * acc;
    out[outOffset + i] = yOld[i] + x * acc;
  }
  return out;
}
