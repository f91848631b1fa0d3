/**
 * Motion along one axis, z'' = a(t, z), between two planes: the tracer's hot path for regions
 * without a closed form (a source stage whose potentials rise while the ions cross it, a
 * non-uniform mirror). This is `solve` (rungeKutta.ts) specialised to that problem: the same
 * method, step-size control, dense output and event rules, with the state written out as (z, v)
 * and its three terminal events built in instead of passed as closures:
 *
 *   AXIAL_HIGH (0)  z rises through `hi`        (direction +1)
 *   AXIAL_LOW  (1)  z falls through `lo`        (direction −1)
 *   AXIAL_TURN (2)  v changes sign: a turning point (either direction)
 *
 * Why a specialisation: in a uniform field (every source stage) the acceleration does not depend
 * on z, so the stage positions are never needed and their sums are skipped (`uniformInSpace`);
 * with the events built in as well, benchmark B2 runs about 1.3× faster than through `solve`
 * (bundled, `npm run bench`). Otherwise the arithmetic is the generic
 * driver's, operation for operation, so the two give the same numbers
 * (tests/physics/integrator/axialMotion.test.ts checks that on several force laws).
 *
 * The result goes into an ordinary SolveResult; after an event the workspace holds the step's
 * interpolant (evaluateDenseOutput works on it), as after `solve`.
 */
import { createRootReport, findRootBrent, type ScalarFunction } from './brent';
import { evaluateDenseOutput, prepareDenseOutput } from './denseOutput';
import { MESSAGE_TERMINAL_EVENT } from './events';
import {
  beginSolve,
  selectInitialStep,
  type RhsFunction,
  type RungeKuttaWorkspace,
  type SolveOptions,
  type SolveResult,
} from './rungeKutta';

/** The acceleration along the axis (m/s²) at time t (s) and position z (m). */
export interface AxialForce {
  acceleration(t: number, z: number): number;
  /** True when the acceleration does not depend on z (a uniform field): the stages then skip z. */
  readonly uniformInSpace: boolean;
}

export const AXIAL_HIGH = 0;
export const AXIAL_LOW = 1;
export const AXIAL_TURN = 2;

/** First-order form of the motion, for the generic helpers (initial step, dense-output stages). */
const axialRhs: RhsFunction<AxialForce> = (t, y, dydt, force) => {
  dydt[0] = y[1];
  dydt[1] = force.acceleration(t, y[0]);
};

/** One event function along the interpolant of the last step: component − offset. */
class AxialProbe implements ScalarFunction {
  ws: RungeKuttaWorkspace | null = null;
  component = 0;
  offset = 0;
  evaluate(t: number): number {
    const ws = this.ws as RungeKuttaWorkspace;
    return evaluateDenseOutput(ws, t, ws.yDense)[this.component] - this.offset;
  }
}

const probe = new AxialProbe();
/** (z0, v0) as an array for beginSolve. */
const state = new Float64Array(2);
const rootReport = createRootReport();
const MAX_ROOT_ITERATIONS = 100;
const ROOT_ABS_TOL_FRACTION = 1 / 1024;

function fail(result: SolveResult, ws: RungeKuttaWorkspace, message: string): SolveResult {
  result.status = 'failed';
  result.message = message;
  result.t = ws.t;
  result.y[0] = ws.y[0];
  result.y[1] = ws.y[1];
  result.rhsEvaluations = ws.evaluations;
  return result;
}

/** One step from (ws.stepStart, ws.y) of size ws.stepSize; stage 0 of ws.k holds f there. */
function axialStep(ws: RungeKuttaWorkspace, force: AxialForce): void {
  const t = ws.stepStart;
  const h = ws.stepSize;
  const tab = ws.tableau;
  const s = tab.stages;
  const aStart = tab.aSparse.start;
  const aOffset = ws.aOffset;
  const aVal = tab.aSparse.value;
  const c = tab.c;
  const k = ws.k;
  const z = ws.y[0];
  const v = ws.y[1];
  if (force.uniformInSpace) {
    for (let j = 1; j < s; j++) {
      let accV = 0;
      const pEnd = aStart[j + 1];
      for (let p = aStart[j]; p < pEnd; p++) accV += aVal[p] * k[aOffset[p] + 1];
      k[2 * j] = v + h * accV;
      k[2 * j + 1] = force.acceleration(t + c[j] * h, z);
    }
  } else {
    for (let j = 1; j < s; j++) {
      let accZ = 0;
      let accV = 0;
      const pEnd = aStart[j + 1];
      for (let p = aStart[j]; p < pEnd; p++) {
        const coef = aVal[p];
        const o = aOffset[p];
        accZ += coef * k[o];
        accV += coef * k[o + 1];
      }
      k[2 * j] = v + h * accV;
      k[2 * j + 1] = force.acceleration(t + c[j] * h, z + h * accZ);
    }
  }
  const bEnd = tab.bSparse.start[1];
  const bOffset = ws.bOffset;
  const bVal = tab.bSparse.value;
  let accZ = 0;
  let accV = 0;
  for (let p = 0; p < bEnd; p++) {
    const coef = bVal[p];
    const o = bOffset[p];
    accZ += coef * k[o];
    accV += coef * k[o + 1];
  }
  const zNew = z + h * accZ;
  const vNew = v + h * accV;
  ws.yNew[0] = zNew;
  ws.yNew[1] = vNew;
  k[2 * s] = vNew;
  k[2 * s + 1] = force.acceleration(ws.stepEnd, zNew);
  ws.evaluations += s;
}

/** Scaled error norm of the step just taken (as `errorNorm` in rungeKutta.ts), into ws.stepError. */
function axialError(ws: RungeKuttaWorkspace, rtol: number): void {
  const tab = ws.tableau;
  const eEnd = tab.eSparse.start[1];
  const eOffset = ws.eOffset;
  const eVal = tab.eSparse.value;
  const e3End = tab.e3Sparse.col.length;
  const e3Offset = ws.e3Offset;
  const e3Val = tab.e3Sparse.value;
  const k = ws.k;
  const y = ws.y;
  const yNew = ws.yNew;
  const atol = ws.atol;
  let sum = 0;
  let sum3 = 0;
  for (let i = 0; i < 2; i++) {
    const scale = atol[i] + Math.max(Math.abs(y[i]), Math.abs(yNew[i])) * rtol;
    let acc = 0;
    for (let p = 0; p < eEnd; p++) acc += eVal[p] * k[eOffset[p] + i];
    const r = acc / scale;
    sum += r * r;
    if (e3End > 0) {
      let acc3 = 0;
      for (let p = 0; p < e3End; p++) acc3 += e3Val[p] * k[e3Offset[p] + i];
      const r3 = acc3 / scale;
      sum3 += r3 * r3;
    }
  }
  const hAbs = Math.abs(ws.stepSize);
  if (e3End === 0) {
    ws.stepError = hAbs * Math.sqrt(sum / 2);
    return;
  }
  let denominator = sum + 0.01 * sum3;
  if (!(denominator > 0)) denominator = 1;
  ws.stepError = (hAbs * sum) / Math.sqrt(denominator * 2);
}

/**
 * Integrate z'' = force(t, z) from (t0, z0, v0) towards tEnd, stopping at the first of the three
 * events. `ws` must be a workspace of dimension 2 (any tableau). Never throws for numerical
 * trouble: the status says 'done', 'event' (result.terminalEvent is AXIAL_HIGH/LOW/TURN) or
 * 'failed' (with a message), as for `solve`.
 */
export function solveAxial(
  ws: RungeKuttaWorkspace,
  force: AxialForce,
  t0: number,
  z0: number,
  v0: number,
  tEnd: number,
  lo: number,
  hi: number,
  options: SolveOptions,
  result: SolveResult,
): SolveResult {
  if (ws.dimension !== 2 || result.y.length !== 2) {
    result.status = 'failed';
    result.message = `axial motion needs dimension 2: workspace ${ws.dimension}, result ${result.y.length}`;
    return result;
  }
  state[0] = z0;
  state[1] = v0;
  const rtol = beginSolve(ws, t0, state, tEnd, options, result);
  if (rtol !== rtol) return result;
  const maxStep = options.maxStep;
  const maxSteps = options.maxSteps;
  const k = ws.k;
  k[0] = v0;
  k[1] = force.acceleration(t0, z0);
  ws.evaluations++;
  if (!Number.isFinite(k[1])) return fail(result, ws, `right-hand side is not finite at the initial point t = ${t0}`);
  if (tEnd === t0) {
    result.rhsEvaluations = ws.evaluations;
    return result;
  }
  let gHigh = z0 - hi;
  let gLow = z0 - lo;
  let gTurn = v0;

  const direction = tEnd > t0 ? 1 : -1;
  const fsal = 2 * ws.tableau.stages;
  const control = ws.control;
  control.start(
    options.firstStep > 0 ? options.firstStep : selectInitialStep(ws, axialRhs, force, t0, direction, Math.abs(tEnd - t0), rtol, maxStep),
    ws.tableau.errorOrder,
    options.predictive,
  );
  let attempts = 0;

  for (;;) {
    const t = ws.t;
    const minStep = 10 * Math.max(Math.abs(t) * Number.EPSILON, Number.MIN_VALUE);
    if (control.hAbs > maxStep) control.hAbs = maxStep;
    else if (control.hAbs < minStep) control.hAbs = minStep;

    // Numbers from the start (see `solve`): an `undefined` first value gets the doubles boxed.
    // eslint-disable-next-line no-useless-assignment -- see above
    let tNew = t;
    // eslint-disable-next-line no-useless-assignment -- see above
    let h = 0;
    for (;;) {
      if (control.hAbs < minStep) return fail(result, ws, `step size underflow at t = ${t}`);
      if (attempts >= maxSteps) return fail(result, ws, `step limit (${maxSteps}) reached at t = ${t}`);
      attempts++;
      tNew = t + direction * control.hAbs;
      if (direction * (tNew - tEnd) > 0) tNew = tEnd;
      h = tNew - t;
      control.hAbs = Math.abs(h);
      ws.stepStart = t;
      ws.stepSize = h;
      ws.stepEnd = tNew;
      axialStep(ws, force);
      axialError(ws, rtol);
      if (control.judge(ws)) break;
      result.rejectedSteps++;
    }

    if (result.steps === 0) result.firstStep = Math.abs(h);
    result.steps++;
    result.nextStep = control.hAbs;
    const previous = ws.yOld;
    ws.yOld = ws.y;
    ws.y = ws.yNew;
    ws.yNew = previous;
    ws.tOld = t;
    ws.t = tNew;
    ws.h = h;
    ws.denseReady = false;

    // The three events, with the crossing rules of events.ts.
    const z = ws.y[0];
    const v = ws.y[1];
    const newHigh = z - hi;
    const newLow = z - lo;
    const crossHigh = gHigh < 0 && newHigh >= 0;
    const crossLow = gLow > 0 && newLow <= 0;
    const crossTurn = (gTurn < 0 && v >= 0) || (gTurn > 0 && v <= 0);
    if (crossHigh || crossLow || crossTurn) {
      firstEvent(ws, force, crossHigh, crossLow, crossTurn, gHigh, newHigh, gLow, newLow, gTurn, v, hi, lo, result);
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    gHigh = newHigh;
    gLow = newLow;
    gTurn = v;
    if (tNew === tEnd) {
      result.t = tNew;
      result.y[0] = z;
      result.y[1] = v;
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    k[0] = k[fsal];
    k[1] = k[fsal + 1];
  }
}

/** Locate the crossings of the last step on its interpolant and stop at the earliest one. */
function firstEvent(
  ws: RungeKuttaWorkspace,
  force: AxialForce,
  crossHigh: boolean,
  crossLow: boolean,
  crossTurn: boolean,
  gHighOld: number,
  gHighNew: number,
  gLowOld: number,
  gLowNew: number,
  gTurnOld: number,
  gTurnNew: number,
  hi: number,
  lo: number,
  result: SolveResult,
): void {
  prepareDenseOutput(ws, axialRhs, force);
  const tOld = ws.tOld;
  const tNew = ws.t;
  const absTol = Number.EPSILON * Math.abs(tNew - tOld) * ROOT_ABS_TOL_FRACTION;
  probe.ws = ws;
  let best = -1;
  let bestRoot = tNew;
  let bestDirection = 0;
  // In event order, keeping the first of equal roots (the generic driver's stable sort does the same).
  for (let e = AXIAL_HIGH; e <= AXIAL_TURN; e++) {
    let gOld: number;
    let gNew: number;
    if (e === AXIAL_HIGH) {
      if (!crossHigh) continue;
      probe.component = 0;
      probe.offset = hi;
      gOld = gHighOld;
      gNew = gHighNew;
    } else if (e === AXIAL_LOW) {
      if (!crossLow) continue;
      probe.component = 0;
      probe.offset = lo;
      gOld = gLowOld;
      gNew = gLowNew;
    } else {
      if (!crossTurn) continue;
      probe.component = 1;
      probe.offset = 0;
      gOld = gTurnOld;
      gNew = gTurnNew;
    }
    let root = findRootBrent(probe, tOld, tNew, gOld, gNew, absTol, MAX_ROOT_ITERATIONS, rootReport);
    if (root !== root) root = tNew;
    if (best < 0 || Math.abs(root - tOld) < Math.abs(bestRoot - tOld)) {
      best = e;
      bestRoot = root;
      bestDirection = gOld < 0 ? 1 : -1;
    }
  }
  probe.ws = null;
  if (result.eventCapacity > 0) {
    result.eventIndex[0] = best;
    result.eventTime[0] = bestRoot;
    result.eventDirection[0] = bestDirection;
    evaluateDenseOutput(ws, bestRoot, result.eventState, 0);
  }
  result.eventCount = 1;
  evaluateDenseOutput(ws, bestRoot, result.y);
  result.t = bestRoot;
  result.terminalEvent = best;
  result.terminalEventTime = bestRoot;
  result.status = 'event';
  result.message = MESSAGE_TERMINAL_EVENT;
}
