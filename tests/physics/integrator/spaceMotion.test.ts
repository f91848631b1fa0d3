import { describe, expect, it } from 'vitest';
import {
  DOP853,
  DOPRI5,
  SPACE_ENTRY,
  SPACE_FAR,
  SPACE_GUARD,
  createResult,
  createSolveOptions,
  createWorkspace,
  defineEvent,
  defineProblem,
  evaluateDenseOutput,
  solve,
  solveSpace,
  type SpaceForce,
} from '../../../src/physics/integrator/index';

/**
 * An axially symmetric lens-like force: a harmonic well along z (k_z) with a radial term
 * (k_r, either sign), and a strike guard at radius rWall. Smooth, so the step sequence is regular.
 */
class Well implements SpaceForce {
  constructor(
    readonly kz: number,
    readonly kr: number,
    readonly rWall: number,
  ) {}
  acceleration(at: Float64Array, out: Float64Array): void {
    out[0] = -this.kr * at[1];
    out[1] = -this.kr * at[2];
    out[2] = -this.kz * at[3] + 0.1 * Math.sin(at[0]);
  }
  guard(at: Float64Array): number {
    return this.rWall - Math.hypot(at[1], at[2]);
  }
}

/** The same problem for the generic driver. */
function genericProblem(force: Well, entryZ: number, farZ: number) {
  const at = new Float64Array(4);
  const acc = new Float64Array(3);
  const put = (t: number, s: Float64Array) => {
    at[0] = t;
    at[1] = s[0];
    at[2] = s[1];
    at[3] = s[2];
    return at;
  };
  return defineProblem<Well>(
    (t, s, d, f) => {
      d[0] = s[3];
      d[1] = s[4];
      d[2] = s[5];
      f.acceleration(put(t, s), acc);
      d[3] = acc[0];
      d[4] = acc[1];
      d[5] = acc[2];
    },
    force,
    [
      defineEvent<Well>((_t, s) => s[2] - entryZ, -1, true),
      defineEvent<Well>((_t, s) => s[2] - farZ, 1, true),
      defineEvent<Well>((t, s, f) => f.guard(put(t, s)), -1, true),
    ],
  );
}

interface Case {
  name: string;
  force: Well;
  y0: number[];
  expected: number | 'done';
}

const CASES: Case[] = [
  // Turns in the well and comes back out through the entry plane.
  { name: 'reflected back through the entry plane', force: new Well(4, 0.5, 10), y0: [0.3, -0.2, 0, 0.05, 0.1, 1.5], expected: SPACE_ENTRY },
  { name: 'through the far plane', force: new Well(0.2, 0.5, 10), y0: [0.3, -0.2, 0, 0.05, 0.1, 2], expected: SPACE_FAR },
  // A defocusing radial force drives the ion into the wall.
  { name: 'into the wall (guard)', force: new Well(4, -3, 1), y0: [0.3, -0.2, 0, 0.05, 0.1, 1.5], expected: SPACE_GUARD },
  { name: 'still inside at the end', force: new Well(4, 0.5, 10), y0: [0.3, -0.2, 0, 0.05, 0.1, 1.5], expected: 'done' },
];

describe('solveSpace (the solved-field tracer’s integrator)', () => {
  for (const predictive of [false, true]) {
    for (const c of CASES) {
      it(`${c.name}${predictive ? ' (predictive control)' : ''}: the generic driver's numbers`, () => {
        const options = createSolveOptions({ rtol: 1e-8, atol: 1e-12, predictive });
        const tEnd = c.expected === 'done' ? 0.3 : 50;
        const wsS = createWorkspace(DOPRI5, 6);
        const space = solveSpace(wsS, c.force, 0, Float64Array.from(c.y0), tEnd, 0, 3, options, createResult(6, 4));
        const generic = solve(createWorkspace(DOPRI5, 6), genericProblem(c.force, 0, 3), 0, c.y0, tEnd, options, createResult(6, 4));
        expect(space.status).toBe(c.expected === 'done' ? 'done' : 'event');
        if (c.expected !== 'done') expect(space.terminalEvent).toBe(c.expected);
        expect(space.terminalEvent).toBe(generic.terminalEvent);
        expect(space.steps).toBe(generic.steps);
        expect(space.rejectedSteps).toBe(generic.rejectedSteps);
        expect(space.rhsEvaluations).toBe(generic.rhsEvaluations);
        expect(Math.abs(space.t - generic.t)).toBeLessThanOrEqual(8 * Number.EPSILON * Math.abs(generic.t));
        for (let i = 0; i < 6; i++) expect(space.y[i]).toBeCloseTo(generic.y[i], 12);
        if (space.status === 'event') {
          const at = evaluateDenseOutput(wsS, space.t, new Float64Array(6));
          expect(at[2]).toBeCloseTo(space.y[2], 14);
        }
      });
    }
  }

  it('crosses the planes and the wall where they are (event residuals)', () => {
    const options = createSolveOptions({ rtol: 1e-10, atol: 1e-13 });
    const reflected = solveSpace(createWorkspace(DOPRI5, 6), CASES[0].force, 0, Float64Array.from(CASES[0].y0), 50, 0, 3, options, createResult(6));
    expect(Math.abs(reflected.y[2])).toBeLessThan(1e-12);
    expect(reflected.y[5]).toBeLessThan(0);
    const struck = solveSpace(createWorkspace(DOPRI5, 6), CASES[2].force, 0, Float64Array.from(CASES[2].y0), 50, 0, 3, options, createResult(6));
    expect(Math.abs(Math.hypot(struck.y[0], struck.y[1]) - 1)).toBeLessThan(1e-12);
  });

  it('refuses a workspace that is not DOPRI5 of dimension 6, with a message, without throwing', () => {
    const r = solveSpace(createWorkspace(DOP853, 6), CASES[0].force, 0, Float64Array.from(CASES[0].y0), 1, 0, 3, createSolveOptions(), createResult(6));
    expect(r.status).toBe('failed');
    expect(r.message).toMatch(/DOPRI5 workspace of dimension 6/);
  });

  it('fails cleanly on a force that is not finite', () => {
    const bad: SpaceForce = { acceleration: (_at, out) => out.fill(Number.NaN), guard: () => 1 };
    const r = solveSpace(createWorkspace(DOPRI5, 6), bad, 0, Float64Array.from(CASES[0].y0), 1, 0, 3, createSolveOptions(), createResult(6));
    expect(r.status).toBe('failed');
    expect(r.message).toMatch(/not finite/);
  });
});
