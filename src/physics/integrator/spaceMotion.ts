/**
 * Motion in space, r'' = a(t, r), with DOPRI5 between two planes across the z axis and a strike
 * guard: the hot path of the solved-field tracer (src/physics/regions/solvedTracer.ts). This is `solve`
 * (rungeKutta.ts) with the DOPRI5 tableau and the state (x, y, z, vx, vy, vz) written out, and its
 * three terminal events built in:
 *
 *   SPACE_ENTRY (0)  z falls through `entryZ`       (direction −1)
 *   SPACE_FAR   (1)  z rises through `farZ`         (direction +1)
 *   SPACE_GUARD (2)  force.guard(t, r) falls through 0 (direction −1): a strike, or leaving a
 *                    region where the caller's cheaper checks hold
 *
 * Why a specialisation: through the generic driver the integrator's own work cost 100–160 ns per
 * force evaluation even with a trivial force (6 components, bundled, measured), about as much as
 * sampling a solved field; with the coefficients as constants, the components written out and no
 * number boxed on the way to the force it is 65–80 ns. The arithmetic is the generic driver's,
 * operation for operation, so the two give the same numbers (tests/physics/integrator/
 * spaceMotion.test.ts checks that).
 *
 * The force receives the time and position in one array (no number is boxed on the way in) and
 * writes the acceleration into another. After an event the workspace holds the step's interpolant
 * (evaluateDenseOutput works on it), as after `solve`.
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
} from './rungeKutta';
import { DOPRI5 } from './tableaus';

/** The acceleration field of a region, and its strike guard. */
export interface SpaceForce {
  /** Reads at = [t, x, y, z] (s, m); writes the acceleration (m/s²) into out[0..2]. */
  acceleration(at: Float64Array, out: Float64Array): void;
  /** Continuous in (x, y, z); goes negative where the solve must stop (at = [t, x, y, z]). */
  guard(at: Float64Array): number;
  /**
   * Optional: the longest next step (s) from a point where the guard is `guard` (at the start and
   * after every accepted step), within options.maxStep; e.g. how far the ion can fly before it
   * could reach metal. Without it every step is capped at options.maxStep alone.
   */
  stepCapAt?(guard: number): number;
}

export const SPACE_ENTRY = 0;
export const SPACE_FAR = 1;
export const SPACE_GUARD = 2;

// DOPRI5 coefficients (tableaus.ts), as constants; the zero entries (b2, e2) are left out exactly
// as the generic driver's sparse rows leave them out.
const A = DOPRI5.a;
const T = DOPRI5.totalStages;
const A10 = A[T];
const A20 = A[2 * T];
const A21 = A[2 * T + 1];
const A30 = A[3 * T];
const A31 = A[3 * T + 1];
const A32 = A[3 * T + 2];
const A40 = A[4 * T];
const A41 = A[4 * T + 1];
const A42 = A[4 * T + 2];
const A43 = A[4 * T + 3];
const A50 = A[5 * T];
const A51 = A[5 * T + 1];
const A52 = A[5 * T + 2];
const A53 = A[5 * T + 3];
const A54 = A[5 * T + 4];
const B0 = DOPRI5.b[0];
const B2 = DOPRI5.b[2];
const B3 = DOPRI5.b[3];
const B4 = DOPRI5.b[4];
const B5 = DOPRI5.b[5];
const C1 = DOPRI5.c[1];
const C2 = DOPRI5.c[2];
const C3 = DOPRI5.c[3];
const C4 = DOPRI5.c[4];
const E0 = DOPRI5.e[0];
const E2 = DOPRI5.e[2];
const E3 = DOPRI5.e[3];
const E4 = DOPRI5.e[4];
const E5 = DOPRI5.e[5];
const E6 = DOPRI5.e[6];
if (A[T + 1] !== 0 || DOPRI5.b[1] !== 0 || DOPRI5.e[1] !== 0 || DOPRI5.c[5] !== 1) {
  throw new Error('spaceMotion.ts assumes the DOPRI5 tableau of tableaus.ts');
}

/** Scratch: [t, x, y, z] handed to the force, and the acceleration it writes. */
const at = new Float64Array(4);
const acc = new Float64Array(3);

/** First-order form, for the generic helpers (initial step, dense output). */
const spaceRhs: RhsFunction<SpaceForce> = (t, y, dydt, force) => {
  dydt[0] = y[3];
  dydt[1] = y[4];
  dydt[2] = y[5];
  at[0] = t;
  at[1] = y[0];
  at[2] = y[1];
  at[3] = y[2];
  force.acceleration(at, acc);
  dydt[3] = acc[0];
  dydt[4] = acc[1];
  dydt[5] = acc[2];
};

/**
 * The force at the stage position already in `at` = [t, x, y, z], into the acceleration slots of
 * stage row `o` of k. Only integers cross the call (a double argument would be boxed when the call
 * is not inlined).
 */
function applyForce(k: Float64Array, o: number, force: SpaceForce): void {
  force.acceleration(at, acc);
  k[o + 3] = acc[0];
  k[o + 4] = acc[1];
  k[o + 5] = acc[2];
}

/** Stage row 0 from the state y at time t (the start of a solve). */
function firstStage(k: Float64Array, force: SpaceForce, t: number, y: Float64Array): void {
  at[0] = t;
  at[1] = y[0];
  at[2] = y[1];
  at[3] = y[2];
  k[0] = y[3];
  k[1] = y[4];
  k[2] = y[5];
  applyForce(k, 0, force);
}

/** One DOPRI5 step from (ws.stepStart, ws.y) of size ws.stepSize; stage 0 of ws.k holds f there. */
function spaceStep(ws: RungeKuttaWorkspace, force: SpaceForce): void {
  const t = ws.stepStart;
  const h = ws.stepSize;
  const k = ws.k;
  const y = ws.y;
  const y0 = y[0];
  const y1 = y[1];
  const y2 = y[2];
  const y3 = y[3];
  const y4 = y[4];
  const y5 = y[5];
  // Each stage: position into `at`, velocity into the stage row (the position derivative), then the force.
  at[0] = t + C1 * h;
  at[1] = y0 + h * (A10 * k[0]);
  at[2] = y1 + h * (A10 * k[1]);
  at[3] = y2 + h * (A10 * k[2]);
  k[6] = y3 + h * (A10 * k[3]);
  k[7] = y4 + h * (A10 * k[4]);
  k[8] = y5 + h * (A10 * k[5]);
  applyForce(k, 6, force);
  at[0] = t + C2 * h;
  at[1] = y0 + h * (A20 * k[0] + A21 * k[6]);
  at[2] = y1 + h * (A20 * k[1] + A21 * k[7]);
  at[3] = y2 + h * (A20 * k[2] + A21 * k[8]);
  k[12] = y3 + h * (A20 * k[3] + A21 * k[9]);
  k[13] = y4 + h * (A20 * k[4] + A21 * k[10]);
  k[14] = y5 + h * (A20 * k[5] + A21 * k[11]);
  applyForce(k, 12, force);
  at[0] = t + C3 * h;
  at[1] = y0 + h * (A30 * k[0] + A31 * k[6] + A32 * k[12]);
  at[2] = y1 + h * (A30 * k[1] + A31 * k[7] + A32 * k[13]);
  at[3] = y2 + h * (A30 * k[2] + A31 * k[8] + A32 * k[14]);
  k[18] = y3 + h * (A30 * k[3] + A31 * k[9] + A32 * k[15]);
  k[19] = y4 + h * (A30 * k[4] + A31 * k[10] + A32 * k[16]);
  k[20] = y5 + h * (A30 * k[5] + A31 * k[11] + A32 * k[17]);
  applyForce(k, 18, force);
  at[0] = t + C4 * h;
  at[1] = y0 + h * (A40 * k[0] + A41 * k[6] + A42 * k[12] + A43 * k[18]);
  at[2] = y1 + h * (A40 * k[1] + A41 * k[7] + A42 * k[13] + A43 * k[19]);
  at[3] = y2 + h * (A40 * k[2] + A41 * k[8] + A42 * k[14] + A43 * k[20]);
  k[24] = y3 + h * (A40 * k[3] + A41 * k[9] + A42 * k[15] + A43 * k[21]);
  k[25] = y4 + h * (A40 * k[4] + A41 * k[10] + A42 * k[16] + A43 * k[22]);
  k[26] = y5 + h * (A40 * k[5] + A41 * k[11] + A42 * k[17] + A43 * k[23]);
  applyForce(k, 24, force);
  at[0] = t + h; // c5 = 1
  at[1] = y0 + h * (A50 * k[0] + A51 * k[6] + A52 * k[12] + A53 * k[18] + A54 * k[24]);
  at[2] = y1 + h * (A50 * k[1] + A51 * k[7] + A52 * k[13] + A53 * k[19] + A54 * k[25]);
  at[3] = y2 + h * (A50 * k[2] + A51 * k[8] + A52 * k[14] + A53 * k[20] + A54 * k[26]);
  k[30] = y3 + h * (A50 * k[3] + A51 * k[9] + A52 * k[15] + A53 * k[21] + A54 * k[27]);
  k[31] = y4 + h * (A50 * k[4] + A51 * k[10] + A52 * k[16] + A53 * k[22] + A54 * k[28]);
  k[32] = y5 + h * (A50 * k[5] + A51 * k[11] + A52 * k[17] + A53 * k[23] + A54 * k[29]);
  applyForce(k, 30, force);
  // The new state, and its derivative as the FSAL stage 6.
  const yNew = ws.yNew;
  for (let i = 0; i < 6; i++) yNew[i] = y[i] + h * (B0 * k[i] + B2 * k[12 + i] + B3 * k[18 + i] + B4 * k[24 + i] + B5 * k[30 + i]);
  at[0] = ws.stepEnd;
  at[1] = yNew[0];
  at[2] = yNew[1];
  at[3] = yNew[2];
  k[36] = yNew[3];
  k[37] = yNew[4];
  k[38] = yNew[5];
  applyForce(k, 36, force);
  ws.evaluations += 6;
}

/** Scaled RMS norm of the step's error estimate (as `errorNorm` for DOPRI5), into ws.stepError. */
function spaceError(ws: RungeKuttaWorkspace, rtol: number): void {
  const k = ws.k;
  const y = ws.y;
  const yNew = ws.yNew;
  const atol = ws.atol;
  let sum = 0;
  for (let i = 0; i < 6; i++) {
    const scale = atol[i] + Math.max(Math.abs(y[i]), Math.abs(yNew[i])) * rtol;
    const e = E0 * k[i] + E2 * k[12 + i] + E3 * k[18 + i] + E4 * k[24 + i] + E5 * k[30 + i] + E6 * k[36 + i];
    const r = e / scale;
    sum += r * r;
  }
  ws.stepError = Math.abs(ws.stepSize) * Math.sqrt(sum / 6);
}

/** The three events along the interpolant of the last step (for stopAtEarliest). */
class SpaceProbe implements EventProbe {
  ws: RungeKuttaWorkspace | null = null;
  force: SpaceForce | null = null;
  entryZ = 0;
  farZ = 0;
  private event = 0;
  select(event: number): void {
    this.event = event;
  }
  evaluate(t: number): number {
    const ws = this.ws as RungeKuttaWorkspace;
    const s = evaluateDenseOutput(ws, t, ws.yDense);
    if (this.event === SPACE_ENTRY) return s[2] - this.entryZ;
    if (this.event === SPACE_FAR) return s[2] - this.farZ;
    at[0] = t;
    at[1] = s[0];
    at[2] = s[1];
    at[3] = s[2];
    return (this.force as SpaceForce).guard(at);
  }
}

const probe = new SpaceProbe();

/** This method's step for the shared driver loop (`advance`); set up per solve. */
class SpaceTrial implements StepTrial {
  force: SpaceForce | null = null;
  rtol = 0;
  tryStep(ws: RungeKuttaWorkspace): void {
    spaceStep(ws, this.force as SpaceForce);
    spaceError(ws, this.rtol);
  }
}
const trial = new SpaceTrial();

function guardAt(force: SpaceForce, t: number, s: Float64Array): number {
  at[0] = t;
  at[1] = s[0];
  at[2] = s[1];
  at[3] = s[2];
  return force.guard(at);
}

/**
 * Integrate from (t0, y0 = [x, y, z, vx, vy, vz]) towards tEnd, stopping at the first of the three
 * events. `ws` must be a DOPRI5 workspace of dimension 6. Never throws for numerical trouble: the
 * status says 'done', 'event' (result.terminalEvent is SPACE_ENTRY/FAR/GUARD) or 'failed' (with a
 * message), as for `solve`.
 */
export function solveSpace(
  ws: RungeKuttaWorkspace,
  force: SpaceForce,
  t0: number,
  y0: Float64Array,
  tEnd: number,
  entryZ: number,
  farZ: number,
  options: SolveOptions,
  result: SolveResult,
): SolveResult {
  if (ws.tableau !== DOPRI5 || ws.dimension !== 6 || result.y.length !== 6 || y0.length < 6) {
    return failInput(result, `motion in space needs a DOPRI5 workspace of dimension 6 (got ${ws.tableau.name}, ${ws.dimension}; result ${result.y.length}, y0 ${y0.length})`);
  }
  const rtol = beginSolve(ws, t0, y0, tEnd, options, result);
  if (rtol !== rtol) return result;
  ensureEventCapacity(ws, 3);
  const maxStep = options.maxStep;
  const maxSteps = options.maxSteps;
  const y = ws.y;
  const k = ws.k;
  firstStage(k, force, t0, y);
  ws.evaluations++;
  for (let i = 3; i < 6; i++) if (!Number.isFinite(k[i])) return fail(result, ws, `right-hand side is not finite at the initial point t = ${t0}`);
  if (tEnd === t0) {
    result.rhsEvaluations = ws.evaluations;
    return result;
  }
  let gEntry = y[2] - entryZ;
  let gFar = y[2] - farZ;
  let gGuard = guardAt(force, t0, y);
  const capped = force.stepCapAt !== undefined;
  let stepCap = capped ? Math.min(maxStep, (force as Required<SpaceForce>).stepCapAt(gGuard)) : maxStep;

  const direction = tEnd > t0 ? 1 : -1;
  ws.control.start(
    options.firstStep > 0 ? options.firstStep : selectInitialStep(ws, spaceRhs, force, t0, direction, Math.abs(tEnd - t0), rtol, maxStep),
    DOPRI5.errorOrder,
    options.predictive,
  );
  trial.force = force;
  trial.rtol = rtol;

  for (;;) {
    const failure = advance(ws, trial, tEnd, stepCap, maxSteps, result);
    if (failure !== null) return fail(result, ws, failure);

    // The three events, with the crossing rule of events.ts.
    const s = ws.y;
    const newEntry = s[2] - entryZ;
    const newFar = s[2] - farZ;
    const newGuard = guardAt(force, ws.t, s);
    const crossEntry = crossingOf(gEntry, newEntry, -1);
    const crossFar = crossingOf(gFar, newFar, 1);
    const crossGuard = crossingOf(gGuard, newGuard, -1);
    if (crossEntry !== 0 || crossFar !== 0 || crossGuard !== 0) {
      noteCrossing(ws, SPACE_ENTRY, gEntry, newEntry, crossEntry);
      noteCrossing(ws, SPACE_FAR, gFar, newFar, crossFar);
      noteCrossing(ws, SPACE_GUARD, gGuard, newGuard, crossGuard);
      prepareDenseOutput(ws, spaceRhs, force);
      probe.ws = ws;
      probe.force = force;
      probe.entryZ = entryZ;
      probe.farZ = farZ;
      stopAtEarliest(ws, probe, 3, result);
      probe.ws = null;
      probe.force = null;
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    gEntry = newEntry;
    gFar = newFar;
    gGuard = newGuard;
    if (capped) stepCap = Math.min(maxStep, (force as Required<SpaceForce>).stepCapAt(newGuard));
    if (ws.t === tEnd) {
      result.t = tEnd;
      result.y.set(s);
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    for (let i = 0; i < 6; i++) k[i] = k[36 + i];
  }
}
