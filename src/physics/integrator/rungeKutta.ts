/**
 * Embedded explicit Runge–Kutta integration with error control, dense output and events.
 * Import from the folder's index: `import { solve, DOP853, … } from '../physics/integrator'`.
 *
 * Usage (everything is created once and reused; a solve allocates nothing):
 *
 *   // 1. Right-hand side: writes y' into `dydt`, returns nothing. Per-solve data goes in a
 *   //    context object that you mutate between solves (no closure per solve).
 *   interface Field { a0: number; tau: number }
 *   const rhs: RhsFunction<Field> = (t, y, dydt, ctx) => {
 *     dydt[0] = y[1];
 *     dydt[1] = -ctx.a0 * Math.expm1(-t / ctx.tau);
 *   };
 *   // 2. Events g(t, y, ctx): direction −1 / 0 / +1, terminal or recorded only (events.ts).
 *   const exitPlane = defineEvent<Field>((_t, y) => y[0] - 0.003, +1, true);
 *   // 3. One problem object (rhs, context, events), one workspace per (method, dimension),
 *   //    one options object and one result object.
 *   const field: Field = { a0: 1e10, tau: 1e-8 };
 *   const problem = defineProblem(rhs, field, [exitPlane]);
 *   const ws = createWorkspace(DOP853, 2);
 *   const options = createSolveOptions({ rtol: 1e-9, atol: Float64Array.of(1e-18, 1e-9) });
 *   const result = createResult(2);            // optional 2nd argument: event record capacity
 *   // 4. Solve as often as needed; the result is overwritten in place.
 *   field.a0 = 2e10;
 *   solve(ws, problem, t0, y0, tEnd, options, result);
 *   if (result.status === 'event') { result.t; result.y; result.terminalEvent; }
 *   else if (result.status === 'failed') { result.message; }
 *
 * Status: 'done' (reached tEnd), 'event' (stopped at a terminal event; t and y are the
 * interpolated event state, on either side of the surface by rounding only), 'failed'
 * (step-size underflow, step limit, non-finite values, invalid input; t and y hold the last
 * accepted state). Numerical trouble never throws. Every event found (terminal ones included) is
 * recorded in the result's bounded event arrays in time order; `eventCount` counts all of them,
 * even those beyond the capacity.
 *
 * Tolerances: use a per-component atol in SI units (positions ~1e-3 m and speeds ~1e4 m/s need
 * very different absolute floors). DOP853 is the method of choice for tight tolerances.
 *
 * First step: Hairer's algorithm costs one evaluation and its fallbacks assume a time scale near
 * 1, so on nanosecond problems it often starts too big and pays rejected steps. For many similar
 * solves (an ion ensemble) pass `firstStep` = `result.firstStep` of a pilot solve; to continue
 * in a new region use `result.nextStep`.
 *
 * After a solve the workspace still holds the last accepted step [ws.tOld, ws.t]; call
 * `prepareDenseOutput(ws, rhs, ctx)` then `evaluateDenseOutput(ws, t, out)` to interpolate in it.
 *
 * Step control follows SciPy's solve_ivp RK driver: error scale atol + max(|y|, |y_new|)·rtol,
 * RMS norm, factor SAFETY·err^(−1/(q+1)) clamped to [MIN_FACTOR, MAX_FACTOR], no growth right
 * after a rejection; first step by Hairer's algorithm (Hairer, Nørsett & Wanner, Solving ODEs I,
 * Sec. II.4) unless `firstStep` is given; optionally Gustafsson's predictive control
 * (`predictive`). Integration backwards in time works (tEnd < t0). The step loop (`advance`), the
 * controller (`StepControl`) and the input checks (`beginSolve`) are shared with the specialised
 * drivers axialMotion.ts and spaceMotion.ts, which only supply their own step.
 */
import { locateEvents, startEvents, type OdeEvent } from './events';
import type { RungeKuttaTableau } from './tableaus';

/** Writes dy/dt at (t, y) into `dydt`. Must not keep references to `y` or `dydt`. */
export type RhsFunction<C> = (t: number, y: Float64Array, dydt: Float64Array, context: C) => void;

export interface OdeProblem<C> {
  readonly rhs: RhsFunction<C>;
  /** Mutable per-solve data handed to `rhs` and to the event functions. */
  readonly context: C;
  readonly events: readonly OdeEvent<C>[];
}

export function defineProblem<C>(rhs: RhsFunction<C>, context: C, events: readonly OdeEvent<C>[] = []): OdeProblem<C> {
  return { rhs, context, events };
}

/** Step-size control constants (as in SciPy's solve_ivp and Hairer's codes). */
export const SAFETY = 0.9;
export const MIN_FACTOR = 0.2;
export const MAX_FACTOR = 10;
/** Tighter relative tolerances than this are raised to it: below it round-off dominates. */
export const MIN_RTOL = 100 * Number.EPSILON;

/**
 * Step-size control of one solve, shared by `solve` and its specialisations (axialMotion.ts,
 * spaceMotion.ts) so that all of them take the same steps: the plain controller, and optionally
 * Gustafsson's predictive one (SolveOptions.predictive). Lives in the workspace.
 */
export class StepControl {
  /** Size of the step to try next (positive). */
  hAbs = 0;
  /** Steps tried in this solve (accepted and rejected), for the step limit. */
  attempts = 0;
  private exponent = 0;
  private predictive = false;
  /** The step being tried has already been rejected once: no growth right after a rejection. */
  private rejected = false;
  /** Size and error of the previous accepted step, for the predictive control (0: none yet). */
  private previousStep = 0;
  private previousError = 0;

  start(firstStep: number, errorOrder: number, predictive: boolean): void {
    this.hAbs = firstStep;
    this.attempts = 0;
    this.exponent = -1 / (errorOrder + 1);
    this.predictive = predictive;
    this.rejected = false;
    this.previousStep = 0;
    this.previousError = 0;
  }

  /**
   * Judge the step of size hAbs just tried, whose error norm is in ws.stepError (read there, so
   * that no double is passed): true when accepted, hAbs then being the size proposed for the next
   * step; false when rejected, hAbs then being the size to retry with.
   */
  judge(ws: RungeKuttaWorkspace): boolean {
    const err = ws.stepError;
    const exponent = this.exponent;
    if (err < 1) {
      let factor = err === 0 ? MAX_FACTOR : SAFETY * Math.pow(err, exponent);
      if (this.predictive) {
        const floorErr = err > 1e-4 ? err : 1e-4;
        if (this.previousStep > 0) {
          const trend = (this.hAbs / this.previousStep) * SAFETY * Math.pow((floorErr * floorErr) / this.previousError, exponent);
          if (trend < factor) factor = trend < MIN_FACTOR ? MIN_FACTOR : trend;
        }
        this.previousStep = this.hAbs;
        this.previousError = floorErr;
      }
      if (factor > MAX_FACTOR) factor = MAX_FACTOR;
      if (this.rejected && factor > 1) factor = 1;
      this.hAbs *= factor;
      this.rejected = false;
      return true;
    }
    // Also reached for a NaN error (non-finite stages): shrink as much as allowed.
    let factor = SAFETY * Math.pow(err, exponent);
    if (!(factor > MIN_FACTOR)) factor = MIN_FACTOR;
    this.hAbs *= factor;
    this.rejected = true;
    return false;
  }
}

/**
 * All scratch storage for one method and one problem dimension. Create once, reuse for any
 * number of solves. Fields are public for the sibling modules (dense output, events) and for
 * fixed-step use in tests; callers normally only read tOld, t, yOld, y after a solve.
 */
export class RungeKuttaWorkspace {
  readonly tableau: RungeKuttaTableau;
  readonly dimension: number;
  /** Stage derivatives, stage j at j·dimension (flat, for the linear combinations). */
  readonly k: Float64Array;
  /** Views of the rows of `k`, handed to the right-hand side as its output array. */
  readonly kRows: Float64Array[];
  /** State at the start of the last accepted step (t_old). */
  yOld: Float64Array;
  /** Current state (at t); the input of the next step. */
  y: Float64Array;
  /** Candidate state of the step being tried. */
  yNew: Float64Array;
  readonly yStage: Float64Array;
  /** Absolute tolerance per component, filled from the options at the start of each solve. */
  readonly atol: Float64Array;
  /** Interpolant coefficients F0 … F(2 + denseRows), each a row of `dimension` values. */
  readonly dense: Float64Array;
  /** Scratch state for evaluating event functions on the interpolant. */
  readonly yDense: Float64Array;
  tOld = 0;
  t = 0;
  /** Signed size of the last accepted step. */
  h = 0;
  denseReady = false;
  /** Right-hand-side evaluations of the current solve. */
  evaluations = 0;
  /** Step-size control of the current solve. */
  readonly control = new StepControl();
  /** The generic method's step, set up by `solve`. */
  readonly genericTrial = new GenericTrial();
  // The step being tried and its error norm. Passed through the workspace rather than as
  // arguments so that no double is boxed on the way into or out of the hot functions.
  stepStart = 0;
  stepSize = 0;
  stepEnd = 0;
  stepError = 0;
  // Event scratch, grown on demand to the largest event count seen.
  gOld: Float64Array = new Float64Array(4);
  gNew: Float64Array = new Float64Array(4);
  eventRoot: Float64Array = new Float64Array(4);
  eventOrder: Int32Array = new Int32Array(4);
  eventCrossing: Int8Array = new Int8Array(4);

  // Offsets into `k` (stage index × dimension) of the tableau's nonzero coefficients, so the
  // hot loops index k directly: k[offset + component].
  readonly aOffset: Int32Array;
  readonly bOffset: Int32Array;
  readonly eOffset: Int32Array;
  readonly e3Offset: Int32Array;
  readonly dOffset: Int32Array;

  constructor(tableau: RungeKuttaTableau, dimension: number) {
    if (!Number.isInteger(dimension) || dimension < 1) {
      throw new RangeError(`workspace dimension must be a positive integer, got ${dimension}`);
    }
    this.tableau = tableau;
    this.dimension = dimension;
    const n = dimension;
    this.k = new Float64Array(tableau.totalStages * n);
    this.kRows = [];
    for (let j = 0; j < tableau.totalStages; j++) this.kRows.push(this.k.subarray(j * n, (j + 1) * n));
    this.yOld = new Float64Array(n);
    this.y = new Float64Array(n);
    this.yNew = new Float64Array(n);
    this.yStage = new Float64Array(n);
    this.atol = new Float64Array(n);
    this.dense = new Float64Array((3 + tableau.denseRows) * n);
    this.yDense = new Float64Array(n);
    this.aOffset = tableau.aSparse.col.map((c) => c * n);
    this.bOffset = tableau.bSparse.col.map((c) => c * n);
    this.eOffset = tableau.eSparse.col.map((c) => c * n);
    this.e3Offset = tableau.e3Sparse.col.map((c) => c * n);
    this.dOffset = tableau.dSparse.col.map((c) => c * n);
  }
}

export function createWorkspace(tableau: RungeKuttaTableau, dimension: number): RungeKuttaWorkspace {
  return new RungeKuttaWorkspace(tableau, dimension);
}

export interface SolveOptions {
  /** Relative tolerance (raised to MIN_RTOL if smaller). */
  rtol: number;
  /** Absolute tolerance, one value for all components or one per component; must be > 0. */
  atol: number | Float64Array;
  /** Cap on attempted steps (accepted + rejected) per solve. */
  maxSteps: number;
  /** First step size; 0 selects it automatically (Hairer's algorithm, one extra evaluation). */
  firstStep: number;
  /** Upper bound on the step size. */
  maxStep: number;
  /**
   * Gustafsson's predictive step control: after an accepted step the next step is also limited by
   * h·(h/h_prev)·SAFETY·err^(−1/(q+1))·(err_prev/err)^(1/(q+1)), which follows a steadily
   * shrinking step sequence instead of overshooting it and paying a rejection each time (as an
   * ion leaving a mirror does: it speeds up, so every step must be shorter than the last).
   * Gustafsson, ACM TOMS 20 (1994) 496–517; Hairer & Wanner, Solving ODEs II, Sec. IV.8 (from
   * memory). Off by default.
   */
  predictive: boolean;
}

export function createSolveOptions(overrides: Partial<SolveOptions> = {}): SolveOptions {
  return {
    rtol: overrides.rtol ?? 1e-8,
    atol: overrides.atol ?? 1e-12,
    maxSteps: overrides.maxSteps ?? 100_000,
    firstStep: overrides.firstStep ?? 0,
    maxStep: overrides.maxStep ?? Number.POSITIVE_INFINITY,
    predictive: overrides.predictive ?? false,
  };
}

export type SolveStatus = 'done' | 'event' | 'failed';

export const MESSAGE_DONE = 'reached the end of the interval';

/** Outcome of a solve, overwritten in place by each solve. */
export class SolveResult {
  status: SolveStatus = 'done';
  message = '';
  /** Final time: tEnd, the terminal event time, or the last accepted time on failure. */
  t = 0;
  readonly y: Float64Array;
  /** Accepted steps. */
  steps = 0;
  /** Size of the first accepted step; reuse it as `firstStep` to warm-start similar solves. */
  firstStep = 0;
  /** Step size the controller proposed after the last accepted step (to continue from here). */
  nextStep = 0;
  rejectedSteps = 0;
  rhsEvaluations = 0;
  /** Index (in problem.events) of the terminal event that stopped the solve, or −1. */
  terminalEvent = -1;
  /** Time of that event; +Infinity when no terminal event occurred. */
  terminalEventTime = Number.POSITIVE_INFINITY;
  /** Events found in this solve, including any beyond the storage capacity. */
  eventCount = 0;
  readonly eventCapacity: number;
  /** Event records 0 … min(eventCount, eventCapacity) − 1, in time order. */
  readonly eventIndex: Int32Array;
  readonly eventTime: Float64Array;
  /** +1 for an upward crossing of g, −1 for a downward one. */
  readonly eventDirection: Int8Array;
  /** Interpolated state at each recorded event, record r at r·dimension. */
  readonly eventState: Float64Array;

  constructor(dimension: number, eventCapacity = 64) {
    this.y = new Float64Array(dimension);
    this.eventCapacity = eventCapacity;
    this.eventIndex = new Int32Array(eventCapacity);
    this.eventTime = new Float64Array(eventCapacity);
    this.eventDirection = new Int8Array(eventCapacity);
    this.eventState = new Float64Array(eventCapacity * dimension);
  }
}

export function createResult(dimension: number, eventCapacity = 64): SolveResult {
  return new SolveResult(dimension, eventCapacity);
}

/**
 * One step of the workspace's method from (t, ws.y) to tNew = t + h (h = tNew − t), with stage 0
 * (ws.kRows[0]) already holding f(t, ws.y). Writes ws.yNew and the FSAL stage f(tNew, yNew).
 */
export function rungeKuttaStep<C>(
  ws: RungeKuttaWorkspace,
  rhs: RhsFunction<C>,
  context: C,
  t: number,
  h: number,
  tNew: number,
): void {
  ws.stepStart = t;
  ws.stepSize = h;
  ws.stepEnd = tNew;
  takeStep(ws, rhs, context);
}

/** `rungeKuttaStep` for the step (stepStart, stepSize, stepEnd) stored in the workspace. */
export function takeStep<C>(ws: RungeKuttaWorkspace, rhs: RhsFunction<C>, context: C): void {
  const t = ws.stepStart;
  const h = ws.stepSize;
  const tNew = ws.stepEnd;
  const tab = ws.tableau;
  const n = ws.dimension;
  const s = tab.stages;
  const aStart = tab.aSparse.start;
  const aOffset = ws.aOffset;
  const aVal = tab.aSparse.value;
  const bEnd = tab.bSparse.start[1];
  const bOffset = ws.bOffset;
  const bVal = tab.bSparse.value;
  const c = tab.c;
  const k = ws.k;
  const kRows = ws.kRows;
  const y = ws.y;
  const ys = ws.yStage;
  for (let j = 1; j < s; j++) {
    const pStart = aStart[j];
    const pEnd = aStart[j + 1];
    // Two components per pass: each coefficient and offset is loaded once for both.
    let i = 0;
    for (; i + 1 < n; i += 2) {
      let acc0 = 0;
      let acc1 = 0;
      for (let p = pStart; p < pEnd; p++) {
        const coef = aVal[p];
        const o = aOffset[p] + i;
        acc0 += coef * k[o];
        acc1 += coef * k[o + 1];
      }
      ys[i] = y[i] + h * acc0;
      ys[i + 1] = y[i + 1] + h * acc1;
    }
    if (i < n) {
      let acc = 0;
      for (let p = pStart; p < pEnd; p++) acc += aVal[p] * k[aOffset[p] + i];
      ys[i] = y[i] + h * acc;
    }
    rhs(t + c[j] * h, ys, kRows[j], context);
  }
  const yNew = ws.yNew;
  let i = 0;
  for (; i + 1 < n; i += 2) {
    let acc0 = 0;
    let acc1 = 0;
    for (let p = 0; p < bEnd; p++) {
      const coef = bVal[p];
      const o = bOffset[p] + i;
      acc0 += coef * k[o];
      acc1 += coef * k[o + 1];
    }
    yNew[i] = y[i] + h * acc0;
    yNew[i + 1] = y[i + 1] + h * acc1;
  }
  if (i < n) {
    let acc = 0;
    for (let p = 0; p < bEnd; p++) acc += bVal[p] * k[bOffset[p] + i];
    yNew[i] = y[i] + h * acc;
  }
  rhs(tNew, yNew, kRows[s], context);
  ws.evaluations += s;
}

/**
 * Scaled RMS norm of the embedded error estimate of the step just computed by `rungeKuttaStep`
 * (< 1 means acceptable). Scale: atol + max(|y|, |y_new|)·rtol.
 */
export function errorNorm(ws: RungeKuttaWorkspace, h: number, rtol: number): number {
  ws.stepSize = h;
  measureError(ws, rtol);
  return ws.stepError;
}

/** `errorNorm` for the step stored in the workspace; writes ws.stepError. */
export function measureError(ws: RungeKuttaWorkspace, rtol: number): void {
  const h = ws.stepSize;
  const tab = ws.tableau;
  const n = ws.dimension;
  const eEnd = tab.eSparse.start[1];
  const eOffset = ws.eOffset;
  const eVal = tab.eSparse.value;
  const e3End = tab.e3Sparse.col.length;
  const e3Offset = ws.e3Offset;
  const e3Val = tab.e3Sparse.value;
  const twoEstimates = e3End > 0;
  const k = ws.k;
  const y = ws.y;
  const yNew = ws.yNew;
  const atol = ws.atol;
  let sum = 0;
  let sum3 = 0;
  for (let i = 0; i < n; i++) {
    const scale = atol[i] + Math.max(Math.abs(y[i]), Math.abs(yNew[i])) * rtol;
    let acc = 0;
    for (let p = 0; p < eEnd; p++) acc += eVal[p] * k[eOffset[p] + i];
    const r = acc / scale;
    sum += r * r;
    if (twoEstimates) {
      let acc3 = 0;
      for (let p = 0; p < e3End; p++) acc3 += e3Val[p] * k[e3Offset[p] + i];
      const r3 = acc3 / scale;
      sum3 += r3 * r3;
    }
  }
  if (!twoEstimates) {
    ws.stepError = Math.abs(h) * Math.sqrt(sum / n);
    return;
  }
  // Hairer's DOP853 combination of its 5th- and 3rd-order estimates.
  let denominator = sum + 0.01 * sum3;
  if (!(denominator > 0)) denominator = 1;
  ws.stepError = (Math.abs(h) * sum) / Math.sqrt(denominator * n);
}

/**
 * Hairer's starting step (Solving ODEs I, Sec. II.4): h0 from ‖y0‖/‖f0‖, one explicit Euler step
 * to estimate ‖y''‖, then h1 with h1^(q+1)·max(‖f0‖, ‖y''‖) = 0.01; returns min(100·h0, h1).
 * Uses ws.y (= y0) and ws.kRows[0] (= f0); one right-hand-side evaluation. Its fallback
 * constants (1e-6) are absolute, as in the original: give `firstStep` when the problem's time
 * scale is far from 1 and f or y is nearly zero at the start.
 */
export function selectInitialStep<C>(
  ws: RungeKuttaWorkspace,
  rhs: RhsFunction<C>,
  context: C,
  t0: number,
  direction: number,
  intervalLength: number,
  rtol: number,
  maxStep: number,
): number {
  const n = ws.dimension;
  const y0 = ws.y;
  const f0 = ws.kRows[0];
  const y1 = ws.yStage;
  const f1 = ws.kRows[1];
  const atol = ws.atol;
  let d0 = 0;
  let d1 = 0;
  for (let i = 0; i < n; i++) {
    const scale = atol[i] + Math.abs(y0[i]) * rtol;
    d0 += (y0[i] / scale) ** 2;
    d1 += (f0[i] / scale) ** 2;
  }
  d0 = Math.sqrt(d0 / n);
  d1 = Math.sqrt(d1 / n);
  let h0 = d0 < 1e-5 || d1 < 1e-5 ? 1e-6 : (0.01 * d0) / d1;
  h0 = Math.min(h0, intervalLength, maxStep);
  for (let i = 0; i < n; i++) y1[i] = y0[i] + direction * h0 * f0[i];
  rhs(t0 + direction * h0, y1, f1, context);
  ws.evaluations++;
  let d2 = 0;
  for (let i = 0; i < n; i++) {
    const scale = atol[i] + Math.abs(y0[i]) * rtol;
    d2 += ((f1[i] - f0[i]) / scale) ** 2;
  }
  d2 = Math.sqrt(d2 / n) / h0;
  const h1 =
    d1 <= 1e-15 && d2 <= 1e-15
      ? Math.max(1e-6, h0 * 1e-3)
      : Math.pow(0.01 / Math.max(d1, d2), 1 / (ws.tableau.errorOrder + 1));
  const h = Math.min(100 * h0, h1, intervalLength, maxStep);
  return h > 0 ? h : h0; // h1 is NaN when f is not finite one Euler step ahead
}

/** A solve that failed after it started: the result keeps the last accepted state. */
export function fail(result: SolveResult, ws: RungeKuttaWorkspace, message: string): SolveResult {
  result.status = 'failed';
  result.message = message;
  result.t = ws.t;
  result.y.set(ws.y);
  result.rhsEvaluations = ws.evaluations;
  return result;
}

/** A solve refused for its input. */
export function failInput(result: SolveResult, message: string): SolveResult {
  result.status = 'failed';
  result.message = message;
  return result;
}

function allFinite(v: Float64Array, n: number): boolean {
  for (let i = 0; i < n; i++) if (!Number.isFinite(v[i])) return false;
  return true;
}

/** One try of a method over the step stored in the workspace: fills ws.yNew, the stages and ws.stepError. */
export interface StepTrial {
  tryStep(ws: RungeKuttaWorkspace): void;
}

/** The generic method's trial (`takeStep` and `measureError`), kept in its workspace. */
class GenericTrial implements StepTrial {
  rhs: RhsFunction<unknown> = () => {};
  context: unknown = null;
  rtol = 0;
  tryStep(ws: RungeKuttaWorkspace): void {
    takeStep(ws, this.rhs, this.context);
    measureError(ws, this.rtol);
  }
}

/**
 * Take the next accepted step from ws.t towards tEnd, trying `trial` with the sizes ws.control
 * proposes (shared by `solve` and its specialisations, so that all take the same steps). Then the
 * workspace holds the accepted step (tOld, yOld → t, y; its stages in k) and `result` counts it.
 * Returns null, or the message of a failure (step-size underflow, step limit), the workspace then
 * still holding the last accepted state.
 */
export function advance(ws: RungeKuttaWorkspace, trial: StepTrial, tEnd: number, maxStep: number, maxSteps: number, result: SolveResult): string | null {
  const control = ws.control;
  const t = ws.t;
  const direction = tEnd > t ? 1 : -1;
  // Ten units in the last place of t: smaller steps would not move t reliably.
  const minStep = 10 * Math.max(Math.abs(t) * Number.EPSILON, Number.MIN_VALUE);
  if (control.hAbs > maxStep) control.hAbs = maxStep;
  else if (control.hAbs < minStep) control.hAbs = minStep;
  // Initialised so that they are numbers from the start: an `undefined` first value made the
  // optimiser box the doubles assigned to them (measured: a third fewer minor GCs without it).
  // eslint-disable-next-line no-useless-assignment -- see above
  let tNew = t;
  // eslint-disable-next-line no-useless-assignment -- see above
  let h = 0;
  for (;;) {
    if (control.hAbs < minStep) return `step size underflow at t = ${t}`;
    if (control.attempts >= maxSteps) return `step limit (${maxSteps}) reached at t = ${t}`;
    control.attempts++;
    tNew = t + direction * control.hAbs;
    if (direction * (tNew - tEnd) > 0) tNew = tEnd;
    h = tNew - t;
    control.hAbs = Math.abs(h);
    ws.stepStart = t;
    ws.stepSize = h;
    ws.stepEnd = tNew;
    trial.tryStep(ws);
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
  return null;
}

/**
 * Start of a solve, shared by `solve` and its specialisations: resets `result`, checks the
 * interval, the initial state and the options, fills ws.atol and puts (t0, y0) into the
 * workspace. Returns the relative tolerance to use, or NaN after writing the failure (status
 * 'failed' and a message naming the bad input) into `result`.
 */
export function beginSolve(
  ws: RungeKuttaWorkspace,
  t0: number,
  y0: ArrayLike<number>,
  tEnd: number,
  options: SolveOptions,
  result: SolveResult,
): number {
  const n = ws.dimension;
  result.status = 'done';
  result.message = MESSAGE_DONE;
  result.steps = 0;
  result.firstStep = 0;
  result.nextStep = 0;
  result.rejectedSteps = 0;
  result.rhsEvaluations = 0;
  result.terminalEvent = -1;
  result.terminalEventTime = Number.POSITIVE_INFINITY;
  result.eventCount = 0;
  result.t = t0;
  ws.evaluations = 0;

  // Input checks (messages are built only on these failure paths).
  if (result.y.length !== n || y0.length < n) {
    failInput(result, `dimension mismatch: workspace ${n}, result ${result.y.length}, y0 ${y0.length}`);
    return Number.NaN;
  }
  for (let i = 0; i < n; i++) result.y[i] = y0[i];
  const invalid = invalidInput(ws, t0, tEnd, options);
  if (invalid !== null) {
    failInput(result, invalid);
    return Number.NaN;
  }
  const y = ws.y;
  for (let i = 0; i < n; i++) y[i] = y0[i];
  if (!allFinite(y, n)) {
    failInput(result, 'initial state is not finite');
    return Number.NaN;
  }
  ws.t = t0;
  ws.tOld = t0;
  ws.h = 0;
  ws.denseReady = false;
  return options.rtol < MIN_RTOL ? MIN_RTOL : options.rtol;
}

/** What is wrong with the interval or the options (and ws.atol filled), or null. */
function invalidInput(ws: RungeKuttaWorkspace, t0: number, tEnd: number, options: SolveOptions): string | null {
  const n = ws.dimension;
  if (!Number.isFinite(t0) || Number.isNaN(tEnd)) return `invalid time interval [${t0}, ${tEnd}]`;
  const atolOption = options.atol;
  if (typeof atolOption === 'number') ws.atol.fill(atolOption);
  else if (atolOption.length === n) ws.atol.set(atolOption);
  else return `atol has ${atolOption.length} components, expected ${n}`;
  for (let i = 0; i < n; i++) {
    if (!(ws.atol[i] > 0 && ws.atol[i] < Number.POSITIVE_INFINITY)) return `atol[${i}] must be positive and finite, got ${ws.atol[i]}`;
  }
  if (!(options.rtol >= 0 && options.rtol < 1)) return `rtol must be in [0, 1), got ${options.rtol}`;
  if (!(options.maxStep > 0)) return `maxStep must be positive, got ${options.maxStep}`;
  return null;
}

/**
 * Integrate y' = rhs(t, y) from (t0, y0) towards tEnd, stopping early at the first terminal
 * event. Fills and returns `result`. Never throws for numerical trouble.
 */
export function solve<C>(
  ws: RungeKuttaWorkspace,
  problem: OdeProblem<C>,
  t0: number,
  y0: ArrayLike<number>,
  tEnd: number,
  options: SolveOptions,
  result: SolveResult,
): SolveResult {
  const n = ws.dimension;
  const rhs = problem.rhs;
  const context = problem.context;
  const events = problem.events;
  const eventCount = events.length;
  const rtol = beginSolve(ws, t0, y0, tEnd, options, result);
  if (rtol !== rtol) return result;
  const maxStep = options.maxStep;
  const maxSteps = options.maxSteps;
  const y = ws.y;
  rhs(t0, y, ws.kRows[0], context);
  ws.evaluations++;
  if (!allFinite(ws.kRows[0], n)) return fail(result, ws, `right-hand side is not finite at the initial point t = ${t0}`);
  if (tEnd === t0) {
    result.rhsEvaluations = ws.evaluations;
    return result;
  }
  if (eventCount > 0) startEvents(ws, events, context);

  const direction = tEnd > t0 ? 1 : -1;
  const fsalOffset = ws.tableau.stages * n;
  const k = ws.k;
  ws.control.start(
    options.firstStep > 0 ? options.firstStep : selectInitialStep(ws, rhs, context, t0, direction, Math.abs(tEnd - t0), rtol, maxStep),
    ws.tableau.errorOrder,
    options.predictive,
  );
  const trial = ws.genericTrial;
  trial.rhs = rhs as RhsFunction<unknown>;
  trial.context = context;
  trial.rtol = rtol;

  for (;;) {
    const failure = advance(ws, trial, tEnd, maxStep, maxSteps, result);
    if (failure !== null) return fail(result, ws, failure);
    if (eventCount > 0 && locateEvents(ws, rhs, events, context, result)) {
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    if (ws.t === tEnd) {
      result.t = tEnd;
      result.y.set(ws.y);
      result.rhsEvaluations = ws.evaluations;
      return result;
    }
    // FSAL: the last stage of this step is the first stage of the next one.
    for (let i = 0; i < n; i++) k[i] = k[fsalOffset + i];
  }
}
