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
 * on z, so the stage positions are never needed (`uniformInSpace`). For DOP853 in that case the
 * step forms only the velocity sums, with constant coefficients, and the error norm is written
 * out; with the events built in as well, benchmark B2 runs about 1.5× faster than through `solve`
 * (bundled, measured side by side in two stages: 1.3× and 1.15×). Every other case takes the
 * generic step on the first-order form. The arithmetic is the generic driver's, operation for
 * operation, so the two give the same numbers (tests/physics/integrator/axialMotion.test.ts
 * checks that on several force laws).
 *
 * The result goes into an ordinary SolveResult; after an event the workspace holds the step's
 * interpolant (evaluateDenseOutput works on it), as after `solve`.
 */
import { evaluateDenseOutput, prepareDenseOutput } from './denseOutput';
import { crossingOf, ensureEventCapacity, noteCrossing, stopAtEarliest, type EventProbe } from './events';
import {
  advance,
  beginSolve,
  fail,
  failInput,
  selectInitialStep,
  type RhsFunction,
  type RungeKuttaWorkspace,
  type SolveOptions,
  type SolveResult,
  type StepTrial,
  measureError,
  takeStep,
} from './rungeKutta';
import { DOP853 } from './tableaus';

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

/** The three events along the interpolant of the last step (for stopAtEarliest). */
class AxialProbe implements EventProbe {
  ws: RungeKuttaWorkspace | null = null;
  lo = 0;
  hi = 0;
  private component = 0;
  private offset = 0;
  select(event: number): void {
    this.component = event === AXIAL_TURN ? 1 : 0;
    this.offset = event === AXIAL_HIGH ? this.hi : event === AXIAL_LOW ? this.lo : 0;
  }
  evaluate(t: number): number {
    const ws = this.ws as RungeKuttaWorkspace;
    return evaluateDenseOutput(ws, t, ws.yDense)[this.component] - this.offset;
  }
}

const probe = new AxialProbe();
/** (z0, v0) as an array for beginSolve. */
const state = new Float64Array(2);

// DOP853 coefficients (tableaus.ts) as constants, for the written-out uniform-field step: only
// the nonzero entries, in the column order of the generic driver's sparse rows.
const D = DOP853.a;
const DT = DOP853.totalStages;
const A1_0 = D[1 * DT + 0];
const A2_0 = D[2 * DT + 0];
const A2_1 = D[2 * DT + 1];
const A3_0 = D[3 * DT + 0];
const A3_2 = D[3 * DT + 2];
const A4_0 = D[4 * DT + 0];
const A4_2 = D[4 * DT + 2];
const A4_3 = D[4 * DT + 3];
const A5_0 = D[5 * DT + 0];
const A5_3 = D[5 * DT + 3];
const A5_4 = D[5 * DT + 4];
const A6_0 = D[6 * DT + 0];
const A6_3 = D[6 * DT + 3];
const A6_4 = D[6 * DT + 4];
const A6_5 = D[6 * DT + 5];
const A7_0 = D[7 * DT + 0];
const A7_3 = D[7 * DT + 3];
const A7_4 = D[7 * DT + 4];
const A7_5 = D[7 * DT + 5];
const A7_6 = D[7 * DT + 6];
const A8_0 = D[8 * DT + 0];
const A8_3 = D[8 * DT + 3];
const A8_4 = D[8 * DT + 4];
const A8_5 = D[8 * DT + 5];
const A8_6 = D[8 * DT + 6];
const A8_7 = D[8 * DT + 7];
const A9_0 = D[9 * DT + 0];
const A9_3 = D[9 * DT + 3];
const A9_4 = D[9 * DT + 4];
const A9_5 = D[9 * DT + 5];
const A9_6 = D[9 * DT + 6];
const A9_7 = D[9 * DT + 7];
const A9_8 = D[9 * DT + 8];
const A10_0 = D[10 * DT + 0];
const A10_3 = D[10 * DT + 3];
const A10_4 = D[10 * DT + 4];
const A10_5 = D[10 * DT + 5];
const A10_6 = D[10 * DT + 6];
const A10_7 = D[10 * DT + 7];
const A10_8 = D[10 * DT + 8];
const A10_9 = D[10 * DT + 9];
const A11_0 = D[11 * DT + 0];
const A11_3 = D[11 * DT + 3];
const A11_4 = D[11 * DT + 4];
const A11_5 = D[11 * DT + 5];
const A11_6 = D[11 * DT + 6];
const A11_7 = D[11 * DT + 7];
const A11_8 = D[11 * DT + 8];
const A11_9 = D[11 * DT + 9];
const A11_10 = D[11 * DT + 10];
const B0 = DOP853.b[0];
const B5 = DOP853.b[5];
const B6 = DOP853.b[6];
const B7 = DOP853.b[7];
const B8 = DOP853.b[8];
const B9 = DOP853.b[9];
const B10 = DOP853.b[10];
const B11 = DOP853.b[11];
const C1 = DOP853.c[1];
const C2 = DOP853.c[2];
const C3 = DOP853.c[3];
const C4 = DOP853.c[4];
const C5 = DOP853.c[5];
const C6 = DOP853.c[6];
const C7 = DOP853.c[7];
const C8 = DOP853.c[8];
const C9 = DOP853.c[9];
const C10 = DOP853.c[10];
const C11 = DOP853.c[11];
const E0 = DOP853.e[0];
const E5 = DOP853.e[5];
const E6 = DOP853.e[6];
const E7 = DOP853.e[7];
const E8 = DOP853.e[8];
const E9 = DOP853.e[9];
const E10 = DOP853.e[10];
const E11 = DOP853.e[11];
const F0 = DOP853.e3[0];
const F5 = DOP853.e3[5];
const F6 = DOP853.e3[6];
const F7 = DOP853.e3[7];
const F8 = DOP853.e3[8];
const F9 = DOP853.e3[9];
const F10 = DOP853.e3[10];
const F11 = DOP853.e3[11];

/**
 * The DOP853 step in a uniform field (the acceleration depends on t only), written out:
 * only the velocity sums are formed (the stage positions would go unused). Same operations in the
 * same order as the loops, so the same numbers.
 */
function uniformStepDop853(ws: RungeKuttaWorkspace, force: AxialForce): void {
  const t = ws.stepStart;
  const h = ws.stepSize;
  const k = ws.k;
  const z = ws.y[0];
  const v = ws.y[1];
  k[2] = v + h * (A1_0 * k[1]);
  k[3] = force.acceleration(t + C1 * h, z);
  k[4] = v + h * (A2_0 * k[1] + A2_1 * k[3]);
  k[5] = force.acceleration(t + C2 * h, z);
  k[6] = v + h * (A3_0 * k[1] + A3_2 * k[5]);
  k[7] = force.acceleration(t + C3 * h, z);
  k[8] = v + h * (A4_0 * k[1] + A4_2 * k[5] + A4_3 * k[7]);
  k[9] = force.acceleration(t + C4 * h, z);
  k[10] = v + h * (A5_0 * k[1] + A5_3 * k[7] + A5_4 * k[9]);
  k[11] = force.acceleration(t + C5 * h, z);
  k[12] = v + h * (A6_0 * k[1] + A6_3 * k[7] + A6_4 * k[9] + A6_5 * k[11]);
  k[13] = force.acceleration(t + C6 * h, z);
  k[14] = v + h * (A7_0 * k[1] + A7_3 * k[7] + A7_4 * k[9] + A7_5 * k[11] + A7_6 * k[13]);
  k[15] = force.acceleration(t + C7 * h, z);
  k[16] = v + h * (A8_0 * k[1] + A8_3 * k[7] + A8_4 * k[9] + A8_5 * k[11] + A8_6 * k[13] + A8_7 * k[15]);
  k[17] = force.acceleration(t + C8 * h, z);
  k[18] = v + h * (A9_0 * k[1] + A9_3 * k[7] + A9_4 * k[9] + A9_5 * k[11] + A9_6 * k[13] + A9_7 * k[15] + A9_8 * k[17]);
  k[19] = force.acceleration(t + C9 * h, z);
  k[20] = v + h * (A10_0 * k[1] + A10_3 * k[7] + A10_4 * k[9] + A10_5 * k[11] + A10_6 * k[13] + A10_7 * k[15] + A10_8 * k[17] + A10_9 * k[19]);
  k[21] = force.acceleration(t + C10 * h, z);
  k[22] = v + h * (A11_0 * k[1] + A11_3 * k[7] + A11_4 * k[9] + A11_5 * k[11] + A11_6 * k[13] + A11_7 * k[15] + A11_8 * k[17] + A11_9 * k[19] + A11_10 * k[21]);
  k[23] = force.acceleration(t + C11 * h, z);
  const zNew = z + h * (B0 * k[0] + B5 * k[10] + B6 * k[12] + B7 * k[14] + B8 * k[16] + B9 * k[18] + B10 * k[20] + B11 * k[22]);
  const vNew = v + h * (B0 * k[1] + B5 * k[11] + B6 * k[13] + B7 * k[15] + B8 * k[17] + B9 * k[19] + B10 * k[21] + B11 * k[23]);
  ws.yNew[0] = zNew;
  ws.yNew[1] = vNew;
  k[24] = vNew;
  k[25] = force.acceleration(ws.stepEnd, zNew);
  ws.evaluations += 12;
}

/** The DOP853 error norm (measureError), written out: same operations in the same order. */
function errorDop853(ws: RungeKuttaWorkspace, rtol: number): void {
  const k = ws.k;
  const y = ws.y;
  const yNew = ws.yNew;
  const atol = ws.atol;
  const scaleZ = atol[0] + Math.max(Math.abs(y[0]), Math.abs(yNew[0])) * rtol;
  const scaleV = atol[1] + Math.max(Math.abs(y[1]), Math.abs(yNew[1])) * rtol;
  const rZ = (E0 * k[0] + E5 * k[10] + E6 * k[12] + E7 * k[14] + E8 * k[16] + E9 * k[18] + E10 * k[20] + E11 * k[22]) / scaleZ;
  const qZ = (F0 * k[0] + F5 * k[10] + F6 * k[12] + F7 * k[14] + F8 * k[16] + F9 * k[18] + F10 * k[20] + F11 * k[22]) / scaleZ;
  const rV = (E0 * k[1] + E5 * k[11] + E6 * k[13] + E7 * k[15] + E8 * k[17] + E9 * k[19] + E10 * k[21] + E11 * k[23]) / scaleV;
  const qV = (F0 * k[1] + F5 * k[11] + F6 * k[13] + F7 * k[15] + F8 * k[17] + F9 * k[19] + F10 * k[21] + F11 * k[23]) / scaleV;
  const sum = 0 + rZ * rZ + rV * rV;
  const sum3 = 0 + qZ * qZ + qV * qV;
  let denominator = sum + 0.01 * sum3;
  if (!(denominator > 0)) denominator = 1;
  ws.stepError = (Math.abs(ws.stepSize) * sum) / Math.sqrt(denominator * 2);
}

/** This method's step for the shared driver loop (`advance`); set up per solve. */
class AxialTrial implements StepTrial {
  force: AxialForce | null = null;
  rtol = 0;
  tryStep(ws: RungeKuttaWorkspace): void {
    const force = this.force as AxialForce;
    if (force.uniformInSpace && ws.tableau === DOP853) {
      uniformStepDop853(ws, force);
      errorDop853(ws, this.rtol);
    } else {
      // Any other case is the generic step on the first-order form: the same arithmetic.
      takeStep(ws, axialRhs, force);
      measureError(ws, this.rtol);
    }
  }
}
const trial = new AxialTrial();

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
    return failInput(result, `axial motion needs dimension 2: workspace ${ws.dimension}, result ${result.y.length}`);
  }
  state[0] = z0;
  state[1] = v0;
  const rtol = beginSolve(ws, t0, state, tEnd, options, result);
  if (rtol !== rtol) return result;
  ensureEventCapacity(ws, 3);
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
  ws.control.start(
    options.firstStep > 0 ? options.firstStep : selectInitialStep(ws, axialRhs, force, t0, direction, Math.abs(tEnd - t0), rtol, maxStep),
    ws.tableau.errorOrder,
    options.predictive,
  );
  trial.force = force;
  trial.rtol = rtol;

  for (;;) {
    const failure = advance(ws, trial, tEnd, maxStep, maxSteps, result);
    if (failure !== null) return fail(result, ws, failure);

    // The three events, with the crossing rule of events.ts.
    const z = ws.y[0];
    const v = ws.y[1];
    const newHigh = z - hi;
    const newLow = z - lo;
    const crossHigh = crossingOf(gHigh, newHigh, 1);
    const crossLow = crossingOf(gLow, newLow, -1);
    const crossTurn = crossingOf(gTurn, v, 0);
    if (crossHigh !== 0 || crossLow !== 0 || crossTurn !== 0) {
      noteCrossing(ws, AXIAL_HIGH, gHigh, newHigh, crossHigh);
      noteCrossing(ws, AXIAL_LOW, gLow, newLow, crossLow);
      noteCrossing(ws, AXIAL_TURN, gTurn, v, crossTurn);
      prepareDenseOutput(ws, axialRhs, force);
      probe.ws = ws;
      probe.lo = lo;
      probe.hi = hi;
      stopAtEarliest(ws, probe, 3, result);
      probe.ws = null;
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    gHigh = newHigh;
    gLow = newLow;
    gTurn = v;
    if (ws.t === tEnd) {
      result.t = tEnd;
      result.y[0] = z;
      result.y[1] = v;
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    k[0] = k[fsal];
    k[1] = k[fsal + 1];
  }
}
