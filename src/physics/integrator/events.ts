/**
 * Events: scalar functions g(t, y) whose zeros the driver locates. After each accepted step the
 * driver evaluates every g at the step end; an event fires when g changes sign in the step in an
 * allowed direction. Its root is then located on the step's dense interpolant with Brent's method
 * (no re-stepping), to near machine precision in t. Roots found in one step are handled in time
 * order; every one is recorded up to and including the first terminal one, where the solve stops
 * with the interpolated state.
 *
 * Crossing rule: upward when g_old < 0 ≤ g_new, downward when g_old > 0 ≥ g_new. A start exactly
 * on the surface (g = 0) is not a crossing, and a root found at a step end is not found again in
 * the next step. A zero touched and left within one step without a sign change is not seen; bound
 * the step with `maxStep` if that matters.
 */
import { createRootReport, findRootBrent, type ScalarFunction } from './brent';
import { evaluateDenseOutput, prepareDenseOutput } from './denseOutput';
import type { RhsFunction, RungeKuttaWorkspace, SolveResult } from './rungeKutta';

/** −1: only downward crossings (g goes from + to −); +1: only upward (− to +); 0: both. */
export type EventDirection = -1 | 0 | 1;

/** g(t, y, context); `y` is a workspace buffer: read it, do not keep it. */
export type EventFunction<C> = (t: number, y: Float64Array, context: C) => number;

export interface OdeEvent<C> {
  readonly g: EventFunction<C>;
  readonly direction: EventDirection;
  /** Stop the solve at this event. */
  readonly terminal: boolean;
}

/** Build an event with a fixed shape (create it once, not per solve). */
export function defineEvent<C>(g: EventFunction<C>, direction: EventDirection = 0, terminal = false): OdeEvent<C> {
  return { g, direction, terminal };
}

/** Cap on Brent iterations; with a bracket from one smooth step it converges in well under 20. */
const MAX_ROOT_ITERATIONS = 100;
const ROOT_ABS_TOL_FRACTION = 1 / 1024;

/** g along the interpolant of the workspace's last step; one reusable instance, no closures. */
class EventOnInterpolant implements ScalarFunction {
  ws: RungeKuttaWorkspace | null = null;
  g: EventFunction<unknown> | null = null;
  context: unknown = null;
  evaluate(t: number): number {
    const ws = this.ws as RungeKuttaWorkspace;
    return (this.g as EventFunction<unknown>)(t, evaluateDenseOutput(ws, t, ws.yDense), this.context);
  }
}

const probe = new EventOnInterpolant();
const rootReport = createRootReport();

/**
 * The crossing rule: +1 for an upward crossing (before < 0 ≤ after), −1 for a downward one
 * (before > 0 ≥ after), each only if `direction` allows it; else 0.
 */
export function crossingOf(before: number, after: number, direction: EventDirection): number {
  if (before < 0 && after >= 0) return direction >= 0 ? 1 : 0;
  if (before > 0 && after <= 0) return direction <= 0 ? -1 : 0;
  return 0;
}

/** For stopAtEarliest: event e's values over the last step and its crossing (crossingOf). */
export function noteCrossing(ws: RungeKuttaWorkspace, e: number, before: number, after: number, crossed: number): void {
  ws.gOld[e] = before;
  ws.gNew[e] = after;
  ws.eventCrossing[e] = crossed;
}

/** Make room for `count` events in the workspace's scratch arrays (allocates only when growing). */
export function ensureEventCapacity(ws: RungeKuttaWorkspace, count: number): void {
  if (ws.gOld.length >= count) return;
  ws.gOld = new Float64Array(count);
  ws.gNew = new Float64Array(count);
  ws.eventRoot = new Float64Array(count);
  ws.eventOrder = new Int32Array(count);
  ws.eventCrossing = new Int8Array(count);
}

/** Evaluate every event at the start point (ws.t, ws.y). */
export function startEvents<C>(ws: RungeKuttaWorkspace, events: readonly OdeEvent<C>[], context: C): void {
  ensureEventCapacity(ws, events.length);
  for (let e = 0; e < events.length; e++) ws.gOld[e] = events[e].g(ws.t, ws.y, context);
}

/**
 * Check the last accepted step [ws.tOld, ws.t] for events, record them in `result` in time order,
 * and return true when a terminal one stopped the solve (result.t, result.y, status set).
 */
export function locateEvents<C>(
  ws: RungeKuttaWorkspace,
  rhs: RhsFunction<C>,
  events: readonly OdeEvent<C>[],
  context: C,
  result: SolveResult,
): boolean {
  const count = events.length;
  const gOld = ws.gOld;
  const gNew = ws.gNew;
  const order = ws.eventOrder;
  const crossing = ws.eventCrossing;
  let active = 0;
  for (let e = 0; e < count; e++) {
    const ev = events[e];
    const before = gOld[e];
    const after = ev.g(ws.t, ws.y, context);
    gNew[e] = after;
    const crossed = crossingOf(before, after, ev.direction);
    if (crossed !== 0) {
      order[active++] = e;
      crossing[e] = crossed;
    }
  }
  if (active === 0) {
    for (let e = 0; e < count; e++) gOld[e] = gNew[e];
    return false;
  }

  prepareDenseOutput(ws, rhs, context);
  const tOld = ws.tOld;
  const tNew = ws.t;
  // Brent adds 2·eps·|t| itself; this small absolute part only keeps the tolerance positive
  // for a root at t = 0, so roots come out to within a few ulp of t.
  const absTol = Number.EPSILON * Math.abs(tNew - tOld) * ROOT_ABS_TOL_FRACTION;
  probe.ws = ws;
  probe.context = context;
  const roots = ws.eventRoot;
  for (let j = 0; j < active; j++) {
    const e = order[j];
    probe.g = events[e].g as EventFunction<unknown>;
    const root = findRootBrent(probe, tOld, tNew, gOld[e], gNew[e], absTol, MAX_ROOT_ITERATIONS, rootReport);
    // The values bracket by construction; the fallback only guards against a g that returns NaN.
    roots[e] = root === root ? root : tNew;
  }
  probe.g = null;
  probe.context = null;

  // Insertion sort by distance from the step start (works for both integration directions).
  for (let j = 1; j < active; j++) {
    const e = order[j];
    const key = Math.abs(roots[e] - tOld);
    let i = j - 1;
    while (i >= 0 && Math.abs(roots[order[i]] - tOld) > key) {
      order[i + 1] = order[i];
      i--;
    }
    order[i + 1] = e;
  }

  const n = ws.dimension;
  for (let j = 0; j < active; j++) {
    const e = order[j];
    const root = roots[e];
    const slot = result.eventCount;
    if (slot < result.eventCapacity) {
      result.eventIndex[slot] = e;
      result.eventTime[slot] = root;
      result.eventDirection[slot] = crossing[e];
      evaluateDenseOutput(ws, root, result.eventState, slot * n);
    }
    result.eventCount++;
    if (events[e].terminal) {
      evaluateDenseOutput(ws, root, result.y);
      result.t = root;
      result.terminalEvent = e;
      result.terminalEventTime = root;
      result.status = 'event';
      result.message = MESSAGE_TERMINAL_EVENT;
      return true;
    }
  }
  for (let e = 0; e < count; e++) gOld[e] = gNew[e];
  return false;
}

export const MESSAGE_TERMINAL_EVENT = 'stopped at a terminal event';

/** An event function on the last step's interpolant, chosen by its index (for stopAtEarliest). */
export interface EventProbe extends ScalarFunction {
  select(event: number): void;
}

/**
 * For the drivers with built-in events (axialMotion.ts, spaceMotion.ts), all terminal: the last
 * accepted step crossed the events e < count with ws.eventCrossing[e] ≠ 0, their values going from
 * ws.gOld[e] to ws.gNew[e] (noteCrossing). Locate each on the step's interpolant (prepared by the caller) and
 * stop the solve at the earliest, recording it as `locateEvents` does; of equal roots the lower
 * index wins, as in its stable sort.
 */
export function stopAtEarliest(ws: RungeKuttaWorkspace, probe: EventProbe, count: number, result: SolveResult): void {
  const tOld = ws.tOld;
  const tNew = ws.t;
  const absTol = Number.EPSILON * Math.abs(tNew - tOld) * ROOT_ABS_TOL_FRACTION;
  let best = -1;
  let bestRoot = tNew;
  for (let e = 0; e < count; e++) {
    if (ws.eventCrossing[e] === 0) continue;
    probe.select(e);
    let root = findRootBrent(probe, tOld, tNew, ws.gOld[e], ws.gNew[e], absTol, MAX_ROOT_ITERATIONS, rootReport);
    if (root !== root) root = tNew;
    if (best < 0 || Math.abs(root - tOld) < Math.abs(bestRoot - tOld)) {
      best = e;
      bestRoot = root;
    }
  }
  if (result.eventCapacity > 0) {
    result.eventIndex[0] = best;
    result.eventTime[0] = bestRoot;
    result.eventDirection[0] = ws.eventCrossing[best];
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
