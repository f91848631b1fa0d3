import { describe, expect, it } from 'vitest';
import {
  AXIAL_HIGH,
  AXIAL_LOW,
  AXIAL_TURN,
  DOP853,
  DOPRI5,
  createResult,
  createSolveOptions,
  createWorkspace,
  defineEvent,
  defineProblem,
  evaluateDenseOutput,
  solve,
  solveAxial,
  type AxialForce,
  type RungeKuttaTableau,
} from '../../../src/physics/integrator/index';

/** z'' = −ω²z: a harmonic well (textbook mechanics, e.g. Landau & Lifshitz, Mechanics §21). */
class Harmonic implements AxialForce {
  readonly uniformInSpace = false;
  constructor(readonly omega: number) {}
  acceleration(_t: number, z: number): number {
    return -this.omega * this.omega * z;
  }
}

/** A uniform field switched on with an exponential rise, as in a pulsed source stage. */
class RisingUniform implements AxialForce {
  constructor(
    readonly uniformInSpace: boolean,
    readonly aFinal: number,
    readonly tau: number,
  ) {}
  acceleration(t: number): number {
    return this.aFinal * -Math.expm1(-t / this.tau);
  }
}

/** The same problem for the generic driver: planes lo/hi and the turning point as terminal events. */
function genericProblem(force: AxialForce, lo: number, hi: number) {
  return defineProblem<AxialForce>(
    (t, y, dydt, f) => {
      dydt[0] = y[1];
      dydt[1] = f.acceleration(t, y[0]);
    },
    force,
    [
      defineEvent<AxialForce>((_t, y) => y[0] - hi, 1, true),
      defineEvent<AxialForce>((_t, y) => y[0] - lo, -1, true),
      defineEvent<AxialForce>((_t, y) => y[1], 0, true),
    ],
  );
}

interface Case {
  name: string;
  force: AxialForce;
  z0: number;
  v0: number;
  lo: number;
  hi: number;
  tEnd: number;
  expected: number | 'done';
}

const CASES: Case[] = [
  { name: 'harmonic well, turns before the far plane', force: new Harmonic(2), z0: 0, v0: 1, lo: -1, hi: 1, tEnd: 10, expected: AXIAL_TURN },
  { name: 'harmonic well, leaves through the far plane', force: new Harmonic(2), z0: 0, v0: 3, lo: -1, hi: 1, tEnd: 10, expected: AXIAL_HIGH },
  { name: 'harmonic well, leaves through the near plane', force: new Harmonic(2), z0: 0.5, v0: -3, lo: -1, hi: 1, tEnd: 10, expected: AXIAL_LOW },
  { name: 'rising field, position ignored', force: new RisingUniform(true, 2, 0.1), z0: 0, v0: 0.05, lo: -1, hi: 1, tEnd: 10, expected: AXIAL_HIGH },
  { name: 'rising field, position passed', force: new RisingUniform(false, 2, 0.1), z0: 0, v0: 0.05, lo: -1, hi: 1, tEnd: 10, expected: AXIAL_HIGH },
  { name: 'rising field pushing back, turns', force: new RisingUniform(true, -2, 0.1), z0: 0, v0: 0.5, lo: -1, hi: 1, tEnd: 10, expected: AXIAL_TURN },
  { name: 'no event before the end', force: new Harmonic(1), z0: 0, v0: 0.1, lo: -1, hi: 1, tEnd: 1, expected: 'done' },
];

describe('solveAxial (the tracer’s one-axis integrator)', () => {
  for (const [tableau, predictive] of [[DOP853, false], [DOPRI5, false], [DOP853, true]] as [RungeKuttaTableau, boolean][]) {
    for (const c of CASES) {
      it(`${tableau.name}${predictive ? ' (predictive control)' : ''}: ${c.name} gives the generic driver's numbers`, () => {
        const options = createSolveOptions({ rtol: 1e-9, atol: Float64Array.of(1e-12, 1e-12), predictive });
        const wsA = createWorkspace(tableau, 2);
        const wsG = createWorkspace(tableau, 2);
        const axial = solveAxial(wsA, c.force, 0, c.z0, c.v0, c.tEnd, c.lo, c.hi, options, createResult(2, 4));
        const generic = solve(wsG, genericProblem(c.force, c.lo, c.hi), 0, [c.z0, c.v0], c.tEnd, options, createResult(2, 4));
        expect(axial.status).toBe(c.expected === 'done' ? 'done' : 'event');
        if (c.expected !== 'done') expect(axial.terminalEvent).toBe(c.expected);
        expect(axial.status).toBe(generic.status);
        expect(axial.terminalEvent).toBe(generic.terminalEvent);
        expect(axial.steps).toBe(generic.steps);
        expect(axial.rejectedSteps).toBe(generic.rejectedSteps);
        expect(axial.rhsEvaluations).toBe(generic.rhsEvaluations);
        // Same arithmetic in the same order: equal to rounding (the Brent iterates may differ in the last bits).
        expect(Math.abs(axial.t - generic.t)).toBeLessThanOrEqual(8 * Number.EPSILON * Math.abs(generic.t));
        expect(axial.y[0]).toBeCloseTo(generic.y[0], 14);
        expect(axial.y[1]).toBeCloseTo(generic.y[1], 14);
        // The workspace keeps the step's interpolant, as after `solve`.
        if (axial.status === 'event') {
          const at = evaluateDenseOutput(wsA, axial.t, new Float64Array(2));
          expect(at[0]).toBeCloseTo(axial.y[0], 14);
        }
      });
    }
  }

  it('turning point of a harmonic well at a quarter period, amplitude v0/ω (textbook mechanics)', () => {
    const omega = 3;
    const v0 = 0.6;
    const result = solveAxial(createWorkspace(DOP853, 2), new Harmonic(omega), 0, 0, v0, 10, -1, 1, createSolveOptions({ rtol: 1e-12, atol: 1e-14 }), createResult(2));
    expect(result.terminalEvent).toBe(AXIAL_TURN);
    expect(result.t).toBeCloseTo(Math.PI / (2 * omega), 11);
    expect(result.y[0]).toBeCloseTo(v0 / omega, 11);
    expect(Math.abs(result.y[1])).toBeLessThan(1e-10);
  });

  it('crossing of the far plane under a constant-after-rise field matches the double integral of a(t)', () => {
    // z(t) = a·(t²/2 − τt + τ²(1 − e^(−t/τ))) for a(t) = a(1 − e^(−t/τ)), z0 = v0 = 0 (calculus).
    const a = 2;
    const tau = 0.1;
    const hi = 0.5;
    const result = solveAxial(createWorkspace(DOP853, 2), new RisingUniform(true, a, tau), 0, 0, 0, 10, -1, hi, createSolveOptions({ rtol: 1e-12, atol: 1e-14 }), createResult(2));
    expect(result.terminalEvent).toBe(AXIAL_HIGH);
    const z = (t: number) => a * (0.5 * t * t - tau * t - tau * tau * Math.expm1(-t / tau));
    expect(z(result.t)).toBeCloseTo(hi, 11);
    expect(result.y[0]).toBe(result.y[0]);
  });

  it('refuses a workspace of the wrong dimension with a message, without throwing', () => {
    const result = solveAxial(createWorkspace(DOP853, 3), new Harmonic(1), 0, 0, 1, 1, -1, 1, createSolveOptions(), createResult(2));
    expect(result.status).toBe('failed');
    expect(result.message).toMatch(/dimension 2/);
  });

  it('fails cleanly on a force that is not finite', () => {
    const bad: AxialForce = { uniformInSpace: false, acceleration: () => Number.NaN };
    const result = solveAxial(createWorkspace(DOP853, 2), bad, 0, 0, 1, 1, -1, 1, createSolveOptions(), createResult(2));
    expect(result.status).toBe('failed');
    expect(result.message).toMatch(/not finite/);
  });
});
