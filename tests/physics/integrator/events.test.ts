import { describe, expect, it } from 'vitest';
import {
  DOP853,
  DOPRI5,
  createResult,
  createSolveOptions,
  createWorkspace,
  defineEvent,
  defineProblem,
  solve,
  type EventDirection,
  type RhsFunction,
  type RungeKuttaTableau,
} from '../../../src/physics/integrator/index';

const TABLEAUS = [DOPRI5, DOP853] as const;

// Harmonic oscillator x'' = −x from x = 1, v = 0: exact x = cos t, v = −sin t (textbook).
const oscillatorRhs: RhsFunction<null> = (_t, y, dydt) => {
  dydt[0] = y[1];
  dydt[1] = -y[0];
};
const levelCrossing = (_t: number, y: Float64Array): number => y[0] - 0.5;
// cos t = 0.5 at t = π/3 (downward), 5π/3 (upward), 7π/3 (downward), 11π/3 (upward).
const DOWN_ROOTS = [Math.PI / 3, (7 * Math.PI) / 3];
const UP_ROOTS = [(5 * Math.PI) / 3, (11 * Math.PI) / 3];

const OPTIONS = createSolveOptions({ rtol: 1e-10, atol: 1e-12 });

function recorded(result: ReturnType<typeof createResult>) {
  const count = Math.min(result.eventCount, result.eventCapacity);
  return Array.from({ length: count }, (_, r) => ({
    index: result.eventIndex[r],
    t: result.eventTime[r],
    direction: result.eventDirection[r],
    x: result.eventState[2 * r],
    v: result.eventState[2 * r + 1],
  }));
}

describe.each(TABLEAUS)('$name events', (tab: RungeKuttaTableau) => {
  const ws = createWorkspace(tab, 2);
  const result = createResult(2, 16);

  it.each([
    [0 as EventDirection, [...DOWN_ROOTS, ...UP_ROOTS].sort((a, b) => a - b)],
    [1 as EventDirection, UP_ROOTS],
    [-1 as EventDirection, DOWN_ROOTS],
  ])('direction %i records exactly the crossings of that direction, at the exact times', (direction, roots) => {
    const problem = defineProblem(oscillatorRhs, null, [defineEvent(levelCrossing, direction, false)]);
    solve(ws, problem, 0, [1, 0], 4 * Math.PI, OPTIONS, result);
    expect(result.status).toBe('done');
    expect(result.t).toBe(4 * Math.PI);
    const events = recorded(result);
    expect(events.map((e) => e.index)).toEqual(roots.map(() => 0));
    events.forEach((e, r) => {
      // Time error within the integration tolerance (global error ~1e-10 here).
      expect(Math.abs(e.t - roots[r]), `root ${r}`).toBeLessThan(1e-9);
      // Residual: g at the reported state vanishes to rounding (the root is polished on the
      // interpolant to machine precision in t).
      expect(Math.abs(levelCrossing(e.t, Float64Array.of(e.x, e.v)))).toBeLessThan(1e-14);
      // The reported state is the solution there: v = −sin t.
      expect(Math.abs(e.v + Math.sin(e.t))).toBeLessThan(1e-9);
      const expectedDirection = DOWN_ROOTS.some((d) => Math.abs(d - roots[r]) < 1e-6) ? -1 : 1;
      expect(e.direction).toBe(expectedDirection);
    });
  });

  it('a terminal event stops the solve at the first qualifying crossing with the interpolated state', () => {
    const problem = defineProblem(oscillatorRhs, null, [defineEvent(levelCrossing, 1, true)]);
    solve(ws, problem, 0, [1, 0], 4 * Math.PI, OPTIONS, result);
    expect(result.status).toBe('event');
    expect(result.message).toMatch(/terminal event/);
    expect(result.terminalEvent).toBe(0);
    expect(result.terminalEventTime).toBe(result.t);
    expect(Math.abs(result.t - UP_ROOTS[0])).toBeLessThan(1e-9);
    expect(Math.abs(result.y[0] - 0.5)).toBeLessThan(1e-14);
    expect(Math.abs(result.y[1] + Math.sin(result.t))).toBeLessThan(1e-9);
    // The terminal event is recorded too, and the downward crossing before it is not (direction +1).
    expect(recorded(result).map((e) => e.t)).toEqual([result.t]);
  });

  it('non-terminal events before a terminal one are recorded; the solve goes on until it', () => {
    const problem = defineProblem(oscillatorRhs, null, [
      defineEvent(levelCrossing, -1, false),
      defineEvent<null>((_t, y) => y[1], 1, true), // v crosses 0 upwards at t = π
    ]);
    solve(ws, problem, 0, [1, 0], 4 * Math.PI, OPTIONS, result);
    expect(result.status).toBe('event');
    expect(result.terminalEvent).toBe(1);
    expect(Math.abs(result.t - Math.PI)).toBeLessThan(1e-9);
    const events = recorded(result);
    expect(events.map((e) => e.index)).toEqual([0, 1]);
    expect(Math.abs(events[0].t - Math.PI / 3)).toBeLessThan(1e-9);
  });

  it('a start exactly on the surface is not a crossing', () => {
    const problem = defineProblem(oscillatorRhs, null, [defineEvent<null>((_t, y) => y[1], 0, true)]);
    solve(ws, problem, 0, [1, 0], 2, OPTIONS, result); // v(0) = 0
    expect(result.status).toBe('done');
    expect(result.eventCount).toBe(0);
  });

  it('counts events beyond the storage capacity and keeps the first ones', () => {
    const small = createResult(2, 2);
    const problem = defineProblem(oscillatorRhs, null, [defineEvent(levelCrossing, 0, false)]);
    solve(ws, problem, 0, [1, 0], 4 * Math.PI, OPTIONS, small);
    expect(small.status).toBe('done');
    expect(small.eventCount).toBe(4);
    expect(Math.abs(small.eventTime[0] - DOWN_ROOTS[0])).toBeLessThan(1e-9);
    expect(Math.abs(small.eventTime[1] - UP_ROOTS[0])).toBeLessThan(1e-9);
  });

  it('uses the context object in the event functions', () => {
    interface Level {
      level: number;
    }
    const rhs: RhsFunction<Level> = (_t, y, dydt) => {
      dydt[0] = y[1];
      dydt[1] = -y[0];
    };
    const context: Level = { level: 0 };
    const problem = defineProblem(rhs, context, [defineEvent<Level>((_t, y, c) => y[0] - c.level, -1, true)]);
    const r = createResult(2);
    for (const level of [0.9, 0.2, -0.6]) {
      context.level = level;
      solve(ws, problem, 0, [1, 0], 4, OPTIONS, r);
      expect(r.status).toBe('event');
      expect(Math.abs(r.t - Math.acos(level))).toBeLessThan(1e-9);
    }
  });
});

describe.each(TABLEAUS)('$name: several events in one step', (tab: RungeKuttaTableau) => {
  // y' = 1 is integrated exactly (error estimate 0), so a single step covers [0, 10] and the
  // interpolant is exact: the roots of y − 3 and y − 7 are 3 and 7 up to the rounding of the
  // interpolant's arithmetic on a step of length 10 (a few ulp of 10).
  const ROUNDING = 4 * Number.EPSILON * 10;
  const ramp = (_t: number, _y: Float64Array, dydt: Float64Array): void => {
    dydt[0] = 1;
  };
  const at7 = (_t: number, y: Float64Array): number => y[0] - 7;
  const at3 = (_t: number, y: Float64Array): number => y[0] - 3;
  const oneStep = createSolveOptions({ rtol: 1e-8, atol: 1e-8, firstStep: 10 });
  const ws = createWorkspace(tab, 1);
  const result = createResult(1);

  it('are handled in time order, whatever their order in the list', () => {
    const problem = defineProblem<null>(ramp, null, [defineEvent(at7, 0, false), defineEvent(at3, 0, false)]);
    solve(ws, problem, 0, [0], 10, oneStep, result);
    expect(result.steps).toBe(1);
    expect(result.status).toBe('done');
    expect(result.eventCount).toBe(2);
    expect(Array.from(result.eventIndex.subarray(0, 2))).toEqual([1, 0]);
    expect(Math.abs(result.eventTime[0] - 3)).toBeLessThan(ROUNDING);
    expect(Math.abs(result.eventTime[1] - 7)).toBeLessThan(ROUNDING);
  });

  it('stop at the earlier terminal one and do not record later ones', () => {
    const problem = defineProblem<null>(ramp, null, [defineEvent(at7, 0, false), defineEvent(at3, 0, true)]);
    solve(ws, problem, 0, [0], 10, oneStep, result);
    expect(result.status).toBe('event');
    expect(result.terminalEvent).toBe(1);
    expect(result.eventCount).toBe(1);
    expect(Math.abs(result.t - 3)).toBeLessThan(ROUNDING);
    expect(Math.abs(result.y[0] - 3)).toBeLessThan(ROUNDING);
  });

  it('record an earlier non-terminal one before stopping at a later terminal one', () => {
    const problem = defineProblem<null>(ramp, null, [defineEvent(at7, 0, true), defineEvent(at3, 0, false)]);
    solve(ws, problem, 0, [0], 10, oneStep, result);
    expect(result.status).toBe('event');
    expect(result.terminalEvent).toBe(0);
    expect(Array.from(result.eventIndex.subarray(0, 2))).toEqual([1, 0]);
    expect(Math.abs(result.t - 7)).toBeLessThan(ROUNDING);
  });

  it('are ordered along the direction of integration when going backwards', () => {
    const problem = defineProblem<null>(ramp, null, [defineEvent(at3, 0, false), defineEvent(at7, 0, false)]);
    solve(ws, problem, 10, [10], 0, createSolveOptions({ rtol: 1e-8, atol: 1e-8, firstStep: 10 }), result);
    expect(result.status).toBe('done');
    expect(Array.from(result.eventIndex.subarray(0, 2))).toEqual([1, 0]);
    expect(Array.from(result.eventDirection.subarray(0, 2))).toEqual([-1, -1]);
    expect(Math.abs(result.eventTime[0] - 7)).toBeLessThan(1e-14);
    expect(Math.abs(result.eventTime[1] - 3)).toBeLessThan(1e-14);
  });
});
