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
  type RungeKuttaTableau,
  type SolveResult,
} from '../../../src/physics/integrator/index';

const TABLEAUS = [DOPRI5, DOP853] as const;

function expectNoNaN(result: SolveResult): void {
  expect(Number.isNaN(result.t)).toBe(false);
  for (const v of result.y) expect(Number.isNaN(v)).toBe(false);
}

/** y' = y, exact solution y0·e^t (calculus). */
const growth = defineProblem<null>((_t, y, dydt) => {
  dydt[0] = y[0];
}, null);

describe.each(TABLEAUS)('$name on y′ = y: global error in tolerance units against exp', (tab) => {
  const ws = createWorkspace(tab, 1);
  const result = createResult(1);
  // atol negligible: pure relative error control.
  const run = (rtol: number, tEnd: number): number => {
    solve(ws, growth, 0, [1], tEnd, createSolveOptions({ rtol, atol: 1e-300 }), result);
    expect(result.status).toBe('done');
    expect(result.t).toBe(tEnd);
    return Math.abs(result.y[0] - Math.exp(tEnd)) / (rtol * Math.exp(tEnd));
  };

  it.each([1e-3, 1e-6, 1e-9, 1e-12])('rtol %s: below half a tolerance unit at t = 1, below 5 at t = 10', (rtol) => {
    // Measured maxima: 0.2 units at t = 1 and 3.1 units at t = 10 (the error accumulates over
    // the steps of a growing solution).
    expect(run(rtol, 1)).toBeLessThan(0.5);
    expect(run(rtol, 10)).toBeLessThan(5);
  });

  it('the error is proportional to the tolerance (tolerance proportionality)', () => {
    const coarse = run(1e-6, 1) * 1e-6;
    const fine = run(1e-12, 1) * 1e-12;
    expect(coarse / fine).toBeGreaterThan(1e4);
  });

  it('integrates backwards in time (tEnd < t0)', () => {
    solve(ws, growth, 1, [Math.E], 0, createSolveOptions({ rtol: 1e-10, atol: 1e-300 }), result);
    expect(result.status).toBe('done');
    expect(result.t).toBe(0);
    expect(Math.abs(result.y[0] - 1)).toBeLessThan(1e-10);
  });

  it("picks the first step by Hairer's formula (worked by hand for y′ = y)", () => {
    // y0 = f0 = 1, scale sc = atol + rtol: d0 = d1 = 1/sc, so h0 = 0.01; the Euler step gives
    // f1 = 1.01, d2 = 1/sc; h1 = (0.01/max(d1, d2))^(1/(q+1)) = (0.01·sc)^(1/(q+1));
    // first step = min(100·h0, h1) (Hairer, Nørsett & Wanner, Solving ODEs I, Sec. II.4).
    const rtol = 1e-6;
    const atol = 1e-12;
    solve(ws, growth, 0, [1], 10, createSolveOptions({ rtol, atol }), result);
    const expected = Math.min(1, Math.pow(0.01 * (atol + rtol), 1 / (tab.errorOrder + 1)));
    expect(result.rejectedSteps).toBe(0);
    expect(Math.abs(result.firstStep - expected) / expected).toBeLessThan(1e-12);
  });

  it('counts every right-hand-side call: 1 (start) + 1 (first-step choice) + stages·(accepted + rejected)', () => {
    let calls = 0;
    const counted = defineProblem<null>((_t, y, dydt) => {
      calls++;
      dydt[0] = y[0];
    }, null);
    solve(ws, counted, 0, [1], 3, createSolveOptions({ rtol: 1e-9, atol: 1e-300 }), result);
    expect(result.rhsEvaluations).toBe(calls);
    expect(calls).toBe(2 + tab.stages * (result.steps + result.rejectedSteps));
    calls = 0;
    solve(ws, counted, 0, [1], 3, createSolveOptions({ rtol: 1e-9, atol: 1e-300, firstStep: 0.01 }), result);
    expect(calls).toBe(1 + tab.stages * (result.steps + result.rejectedSteps));
    expect(result.rhsEvaluations).toBe(calls);
  });
});

describe('evaluation-count ceilings on y′ = y over [0, 1] (regression guards, not requirements)', () => {
  // Measured: DOPRI5 56 / 248 / 1004 / 4022, DOP853 50 / 122 / 278 / 674; ceilings ~15 % above.
  const ceilings: [RungeKuttaTableau, number, number][] = [
    [DOPRI5, 1e-3, 65],
    [DOPRI5, 1e-6, 290],
    [DOPRI5, 1e-9, 1150],
    [DOPRI5, 1e-12, 4600],
    [DOP853, 1e-3, 58],
    [DOP853, 1e-6, 140],
    [DOP853, 1e-9, 320],
    [DOP853, 1e-12, 780],
  ];
  it.each(ceilings.map(([tab, rtol, ceiling]) => [tab.name, rtol, ceiling, tab] as const))(
    '%s at rtol %s: at most %i evaluations',
    (_name, rtol, ceiling, tab) => {
    const result = createResult(1);
    solve(createWorkspace(tab, 1), growth, 0, [1], 1, createSolveOptions({ rtol, atol: 1e-300 }), result);
    expect(result.status).toBe('done');
    expect(result.rhsEvaluations).toBeLessThanOrEqual(ceiling);
    // A smooth problem needs no rejected step once the first step is well chosen.
    expect(result.rejectedSteps).toBe(0);
    },
  );

  it('DOP853 is the cheaper method at tight tolerance (the reason to carry it)', () => {
    const r5 = createResult(1);
    const r8 = createResult(1);
    const options = createSolveOptions({ rtol: 1e-12, atol: 1e-300 });
    solve(createWorkspace(DOPRI5, 1), growth, 0, [1], 1, options, r5);
    solve(createWorkspace(DOP853, 1), growth, 0, [1], 1, options, r8);
    expect(r8.rhsEvaluations * 3).toBeLessThan(r5.rhsEvaluations);
  });
});

describe.each(TABLEAUS)('$name on the harmonic oscillator', (tab) => {
  // x'' = −ω²x with ω = 2π: exact x = cos ωt, v = −ω sin ωt; E = (v²/ω² + x²)/2 is conserved.
  const omega = 2 * Math.PI;
  const oscillator = defineProblem<null>((_t, y, dydt) => {
    dydt[0] = y[1];
    dydt[1] = -omega * omega * y[0];
  }, null);
  // Measured after 10 periods at rtol 1e-10 (atol 1e-12): DOPRI5 |ΔE/E| 1.5e-9, |Δx| 7.5e-10,
  // 12278 evaluations; DOP853 1.1e-10, 5.3e-11, 2390 evaluations. Bounds ~2× / ceilings ~15 % above.
  const bounds = tab === DOPRI5 ? { energy: 3e-9, x: 1.5e-9, v: 1e-9, evals: 14_000 } : { energy: 3e-10, x: 2e-10, v: 1e-9, evals: 2_750 };

  it('keeps the energy and the phase over 10 periods', () => {
    const result = createResult(2);
    solve(createWorkspace(tab, 2), oscillator, 0, [1, 0], 10, createSolveOptions({ rtol: 1e-10, atol: 1e-12 }), result);
    expect(result.status).toBe('done');
    const energy = 0.5 * ((result.y[1] / omega) ** 2 + result.y[0] ** 2);
    expect(Math.abs(energy - 0.5) / 0.5).toBeLessThan(bounds.energy);
    expect(Math.abs(result.y[0] - Math.cos(omega * 10))).toBeLessThan(bounds.x);
    expect(Math.abs(result.y[1] / omega + Math.sin(omega * 10))).toBeLessThan(bounds.v);
    expect(result.rhsEvaluations).toBeLessThanOrEqual(bounds.evals);
  });

  it('respects maxStep', () => {
    const result = createResult(2);
    solve(createWorkspace(tab, 2), oscillator, 0, [1, 0], 1, createSolveOptions({ rtol: 1e-6, atol: 1e-8, maxStep: 0.01 }), result);
    expect(result.status).toBe('done');
    expect(result.steps).toBeGreaterThanOrEqual(100);
  });

  it('takes a given first step as is when it is acceptable, and reports the next proposal', () => {
    const result = createResult(2);
    solve(createWorkspace(tab, 2), oscillator, 0, [1, 0], 1, createSolveOptions({ rtol: 1e-6, atol: 1e-8, firstStep: 1e-3 }), result);
    expect(result.firstStep).toBe(1e-3);
    expect(result.nextStep).toBeGreaterThan(0);
    expect(Number.isFinite(result.nextStep)).toBe(true);
  });
});

describe.each(TABLEAUS)('$name in an odd dimension (3 components)', (tab) => {
  it('integrates x′ = −y, y′ = x, z′ = −z (exact cos t, sin t, e^−t) to the tolerance', () => {
    const rotation = defineProblem<null>((_t, y, dydt) => {
      dydt[0] = -y[1];
      dydt[1] = y[0];
      dydt[2] = -y[2];
    }, null);
    const result = createResult(3);
    solve(createWorkspace(tab, 3), rotation, 0, [1, 0, 1], 3, createSolveOptions({ rtol: 1e-10, atol: 1e-12 }), result);
    expect(result.status).toBe('done');
    expect(Math.abs(result.y[0] - Math.cos(3))).toBeLessThan(1e-9);
    expect(Math.abs(result.y[1] - Math.sin(3))).toBeLessThan(1e-9);
    expect(Math.abs(result.y[2] - Math.exp(-3)) / Math.exp(-3)).toBeLessThan(1e-9);
  });
});

describe('failures are reported, never thrown, and leave no NaN', () => {
  it('step limit', () => {
    const result = createResult(1);
    solve(createWorkspace(DOPRI5, 1), growth, 0, [1], 10, createSolveOptions({ rtol: 1e-12, atol: 1e-300, maxSteps: 5 }), result);
    expect(result.status).toBe('failed');
    expect(result.message).toMatch(/step limit/);
    expect(result.t).toBeGreaterThan(0);
    expect(result.t).toBeLessThan(10);
    // The state is the last accepted one: y = e^t to the tolerance.
    expect(Math.abs(result.y[0] - Math.exp(result.t)) / Math.exp(result.t)).toBeLessThan(1e-10);
    expectNoNaN(result);
  });

  it.each(TABLEAUS)('step-size underflow at a blow-up ($name, y′ = y², y = 1/(1 − t))', (tab: RungeKuttaTableau) => {
    const blowUp = defineProblem<null>((_t, y, dydt) => {
      dydt[0] = y[0] * y[0];
    }, null);
    const result = createResult(1);
    solve(createWorkspace(tab, 1), blowUp, 0, [1], 2, createSolveOptions({ rtol: 1e-8, atol: 1e-8 }), result);
    expect(result.status).toBe('failed');
    expect(result.message).toMatch(/underflow/);
    // The numerical solution's pole sits within the global error of the exact one at t = 1.
    expect(Math.abs(result.t - 1)).toBeLessThan(1e-6);
    expect(result.y[0]).toBeGreaterThan(1e6);
    expectNoNaN(result);
  });

  it('a right-hand side that turns non-finite', () => {
    const broken = defineProblem<null>((t, y, dydt) => {
      dydt[0] = t > 0.5 ? Number.NaN : y[0];
    }, null);
    const result = createResult(1);
    solve(createWorkspace(DOP853, 1), broken, 0, [1], 1, createSolveOptions({ rtol: 1e-8 }), result);
    expect(result.status).toBe('failed');
    expect(result.t).toBeLessThanOrEqual(0.5);
    expectNoNaN(result);
  });

  it('a right-hand side that is not finite at the start', () => {
    const broken = defineProblem<null>((_t, _y, dydt) => {
      dydt[0] = Number.POSITIVE_INFINITY;
    }, null);
    const result = createResult(1);
    solve(createWorkspace(DOP853, 1), broken, 0, [1], 1, createSolveOptions(), result);
    expect(result.status).toBe('failed');
    expect(result.message).toMatch(/not finite/);
    expectNoNaN(result);
  });

  it('invalid inputs', () => {
    const ws = createWorkspace(DOPRI5, 1);
    const result = createResult(1);
    const cases: [number, ArrayLike<number>, number, Parameters<typeof createSolveOptions>[0], RegExp][] = [
      [0, [1], 1, { atol: 0 }, /atol/],
      [0, [1], 1, { atol: Float64Array.of(1, 1) }, /atol/],
      [0, [1], 1, { rtol: -1 }, /rtol/],
      [0, [1], 1, { maxStep: 0 }, /maxStep/],
      [0, [Number.NaN], 1, {}, /initial state/],
      [Number.NaN, [1], 1, {}, /time interval/],
      [0, [1], Number.NaN, {}, /time interval/],
      [0, [], 1, {}, /dimension/],
    ];
    for (const [t0, y0, tEnd, options, message] of cases) {
      expect(() => solve(ws, growth, t0, y0, tEnd, createSolveOptions(options), result)).not.toThrow();
      expect(result.status).toBe('failed');
      expect(result.message).toMatch(message);
    }
    const wrongResult = createResult(2);
    solve(ws, growth, 0, [1], 1, createSolveOptions(), wrongResult);
    expect(wrongResult.status).toBe('failed');
  });

  it('an empty interval is done at once with the initial state', () => {
    const result = createResult(1);
    solve(createWorkspace(DOPRI5, 1), growth, 2, [3], 2, createSolveOptions(), result);
    expect(result.status).toBe('done');
    expect(result.t).toBe(2);
    expect(result.y[0]).toBe(3);
    expect(result.rhsEvaluations).toBe(1);
    expect(result.terminalEvent).toBe(-1);
    expect(result.terminalEventTime).toBe(Number.POSITIVE_INFINITY);
  });

  it('a tolerance below round-off is raised, not obeyed to failure', () => {
    const result = createResult(1);
    solve(createWorkspace(DOP853, 1), growth, 0, [1], 1, createSolveOptions({ rtol: 0, atol: 1e-300 }), result);
    expect(result.status).toBe('done');
    expect(Math.abs(result.y[0] - Math.E) / Math.E).toBeLessThan(1e-13);
  });
});

describe('one workspace reused across many solves', () => {
  // A damped, driven pendulum with two events: the state and every counter must not depend on
  // what the workspace and the result were used for before.
  interface Drive {
    damping: number;
    drive: number;
  }
  const pendulumRhs = (t: number, y: Float64Array, dydt: Float64Array, c: Drive): void => {
    dydt[0] = y[1];
    dydt[1] = -Math.sin(y[0]) - c.damping * y[1] + c.drive * Math.cos(1.3 * t);
  };
  const context: Drive = { damping: 0.1, drive: 0.5 };
  const withEvents = defineProblem(pendulumRhs, context, [
    defineEvent<Drive>((_t, y) => y[0], 0, false),
    defineEvent<Drive>((_t, y) => y[1] - 1.2, 1, true),
  ]);
  const plain = defineProblem(pendulumRhs, context, []);
  const manyEvents = defineProblem(
    pendulumRhs,
    context,
    [0.1, 0.2, 0.3, 0.4, 0.5, 0.6].map((level) => defineEvent<Drive>((_t, y) => y[0] - level, 0, false)),
  );

  function snapshot(r: SolveResult) {
    return {
      status: r.status,
      message: r.message,
      t: r.t,
      y: Array.from(r.y),
      steps: r.steps,
      rejected: r.rejectedSteps,
      evals: r.rhsEvaluations,
      terminal: r.terminalEvent,
      terminalTime: r.terminalEventTime,
      events: r.eventCount,
      eventIndex: Array.from(r.eventIndex.subarray(0, Math.min(r.eventCount, r.eventCapacity))),
      eventTime: Array.from(r.eventTime.subarray(0, Math.min(r.eventCount, r.eventCapacity))),
      eventState: Array.from(r.eventState.subarray(0, 2 * Math.min(r.eventCount, r.eventCapacity))),
    };
  }

  it.each(TABLEAUS)('$name: 1000 solves on one workspace equal 1000 solves on fresh ones, bit for bit', (tab) => {
    const shared = createWorkspace(tab, 2);
    const sharedResult = createResult(2, 8);
    const options = createSolveOptions({ rtol: 1e-8, atol: 1e-10 });
    const problems = [withEvents, plain, manyEvents];
    for (let i = 0; i < 1000; i++) {
      const problem = problems[i % 3];
      const y0 = [Math.sin(i * 0.7), Math.cos(i * 1.1)];
      context.damping = 0.05 + 0.1 * ((i * 37) % 11) / 11;
      const tEnd = 2 + (i % 5);
      solve(shared, problem, 0, y0, tEnd, options, sharedResult);
      const fresh = createResult(2, 8);
      solve(createWorkspace(tab, 2), problem, 0, y0, tEnd, options, fresh);
      expect(snapshot(sharedResult)).toEqual(snapshot(fresh));
    }
  });
});

describe('predictive step control (Gustafsson 1994, as in Hairer & Wanner, Solving ODEs II, IV.8)', () => {
  // y′ = y², y(0) = 1, exact y = 1/(1 − t) (calculus): towards t = 1 every step must be shorter
  // than the last, the case the predictive controller is for.
  const blowUp = defineProblem<null>((_t, y, d) => {
    d[0] = y[0] * y[0];
  }, null);
  const run = (predictive: boolean) =>
    solve(createWorkspace(DOP853, 1), blowUp, 0, [1], 0.999, createSolveOptions({ rtol: 1e-9, atol: 1e-12, predictive }), createResult(1));

  it('follows a shrinking step sequence without the rejections of the plain controller, at the same accuracy', () => {
    const plain = run(false);
    const predicted = run(true);
    expect(plain.status).toBe('done');
    expect(predicted.status).toBe('done');
    // Measured: plain 44 accepted / 41 rejected, predictive 44 / 1.
    expect(plain.rejectedSteps).toBeGreaterThan(20);
    expect(predicted.rejectedSteps).toBeLessThanOrEqual(3);
    expect(predicted.steps).toBeLessThanOrEqual(plain.steps + 5);
    for (const r of [plain, predicted]) expect(Math.abs(r.y[0] * (1 - 0.999) - 1)).toBeLessThan(1e-6);
  });

  it('is off by default', () => {
    expect(createSolveOptions().predictive).toBe(false);
  });
});
