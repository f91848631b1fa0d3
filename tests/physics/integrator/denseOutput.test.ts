import { describe, expect, it } from 'vitest';
import {
  DOP853,
  DOPRI5,
  createResult,
  createSolveOptions,
  createWorkspace,
  defineProblem,
  evaluateDenseOutput,
  prepareDenseOutput,
  rungeKuttaStep,
  solve,
  type RhsFunction,
  type RungeKuttaTableau,
} from '../../../src/physics/integrator/index';

// (The interpolants' orders are checked in tableaus.test.ts, by the continuous order conditions
// and by step halving on a Kepler orbit.)

const TABLEAUS = [DOPRI5, DOP853] as const;

// Harmonic oscillator x'' = −x from x = 1, v = 0: exact x = cos t, v = −sin t (textbook).
const oscillatorRhs: RhsFunction<null> = (_t, y, dydt) => {
  dydt[0] = y[1];
  dydt[1] = -y[0];
};
const OPTIONS = createSolveOptions({ rtol: 1e-10, atol: 1e-12 });

describe('DOPRI5 dense output', () => {
  it("equals Shampine's interpolation matrix form (SciPy RK45.P) to rounding", () => {
    // Reference: SciPy scipy/integrate/_ivp/rk.py, class RK45, matrix P (Shampine, Math. Comp. 46
    // (1986) 135–150): y(θ) = y_old + h·Σ_j k_j·Σ_m P[j][m]·θ^(m+1).
    const P = [
      [1, -8048581381 / 2820520608, 8663915743 / 2820520608, -12715105075 / 11282082432],
      [0, 0, 0, 0],
      [0, 131558114200 / 32700410799, -68118460800 / 10900136933, 87487479700 / 32700410799],
      [0, -1754552775 / 470086768, 14199869525 / 1410260304, -10690763975 / 1880347072],
      [0, 127303824393 / 49829197408, -318862633887 / 49829197408, 701980252875 / 199316789632],
      [0, -282668133 / 205662961, 2019193451 / 616988883, -1453857185 / 822651844],
      [0, 40617522 / 29380423, -110615467 / 29380423, 69997945 / 29380423],
    ];
    const rhs: RhsFunction<null> = (t, y, dydt) => {
      dydt[0] = y[1];
      dydt[1] = -Math.sin(y[0]) + 0.3 * Math.cos(2 * t);
    };
    const ws = createWorkspace(DOPRI5, 2);
    const h = 0.4;
    ws.y.set([0.7, -0.2]);
    rhs(0, ws.y, ws.kRows[0], null);
    rungeKuttaStep(ws, rhs, null, 0, h, h);
    // Accept by hand: rotate the state buffers as the driver does.
    const old = ws.yOld;
    ws.yOld = ws.y;
    ws.y = ws.yNew;
    ws.yNew = old;
    ws.tOld = 0;
    ws.t = h;
    ws.h = h;
    ws.denseReady = false;
    prepareDenseOutput(ws, rhs, null);
    const out = new Float64Array(2);
    for (const x of [0, 0.1, 0.37, 0.5, 0.9, 1]) {
      evaluateDenseOutput(ws, x * h, out);
      for (let i = 0; i < 2; i++) {
        let acc = 0;
        for (let j = 0; j < 7; j++) {
          let poly = 0;
          for (let m = 3; m >= 0; m--) poly = (poly + P[j][m]) * x;
          acc += ws.k[j * 2 + i] * poly;
        }
        const shampine = ws.yOld[i] + h * acc;
        expect(Math.abs(out[i] - shampine), `θ = ${x}, component ${i}`).toBeLessThan(2e-15);
      }
    }
  });
});

describe.each(TABLEAUS)('$name dense output after a solve', (tab: RungeKuttaTableau) => {
  it('interpolates the last step to the tolerance and meets its end points exactly', () => {
    const ws = createWorkspace(tab, 2);
    const result = createResult(2);
    const problem = defineProblem(oscillatorRhs, null);
    solve(ws, problem, 0, [1, 0], 5, OPTIONS, result);
    expect(result.status).toBe('done');
    prepareDenseOutput(ws, oscillatorRhs, null);
    const out = new Float64Array(2);
    // End points: y_old + (y − y_old) reproduces y to rounding.
    for (const [t, y] of [
      [ws.t, ws.y],
      [ws.tOld, ws.yOld],
    ] as const) {
      evaluateDenseOutput(ws, t, out);
      for (let i = 0; i < 2; i++) {
        const scale = Math.max(Math.abs(ws.y[i]), Math.abs(ws.yOld[i]));
        expect(Math.abs(out[i] - y[i])).toBeLessThanOrEqual(2 * Number.EPSILON * scale);
      }
    }
    // Writing at an offset leaves the rest of the array alone.
    const wide = new Float64Array(6).fill(7);
    evaluateDenseOutput(ws, ws.t, wide, 2);
    expect([wide[0], wide[1], wide[4], wide[5]]).toEqual([7, 7, 7, 7]);
    expect(Array.from(wide.subarray(2, 4))).toEqual(Array.from(evaluateDenseOutput(ws, ws.t, out)));
    for (let j = 1; j < 10; j++) {
      const t = ws.tOld + (j / 10) * (ws.t - ws.tOld);
      evaluateDenseOutput(ws, t, out);
      expect(Math.abs(out[0] - Math.cos(t))).toBeLessThan(1e-9);
      expect(Math.abs(out[1] + Math.sin(t))).toBeLessThan(1e-9);
    }
  });
});
