/**
 * Reference checks of the exact engine against published closed forms. Each expected value is
 * computed independently here from the cited formula, not taken from the engine.
 */
import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../src/physics/constants';
import { Fate } from '../../src/physics/fates';
import { buildModel, relErr, traceOne } from '../helpers';

const MZ = 1000;
const M_PER_Q = (MZ * U_KG) / E_C; // kg/C for a singly charged ion of m/z 1000

describe('t = L·sqrt(m/(2zeU)) (textbook kinematics of an accelerated ion drifting L)', () => {
  it('drift time after acceleration through U, for several charge states', () => {
    const U = 20_000;
    const gap = 5e-3;
    const L = 1.2;
    for (const [mass_u, z] of [
      [1000, 1],
      [2000, 2],
      [15_000, 3],
    ] as const) {
      const m = mass_u * U_KG;
      // Independent numbers: drift time and the uniform-field acceleration time 2d/v_final.
      const v = Math.sqrt((2 * z * E_C * U) / m);
      const tDrift = L * Math.sqrt(m / (2 * z * E_C * U));
      const tAccel = (2 * gap) / v;
      const model = buildModel({ repeller_V: U, gap1_m: gap, drift_m: L });
      const r = traceOne(model, mass_u / z, 0, 0);
      expect(r.fate).toBe(Fate.DETECTED);
      expect(relErr(r.t, tDrift + tAccel)).toBeLessThan(1e-13);
      expect(relErr(r.v, v)).toBeLessThan(1e-13);
    }
  });

  it('worked number: m/z 1000 at 20 kV drifts 1 m in about 16.1 µs (common practice, no source)', () => {
    const model = buildModel({ repeller_V: 20_000, gap1_m: 1e-9, drift_m: 1 });
    const r = traceOne(model, 1000, 0, 0);
    expect(r.t * 1e6).toBeCloseTo(16.1, 1);
  });
});

/** Central-difference derivative of f at x with step h. */
const deriv = (f: (x: number) => number, x: number, h: number): number => (f(x + h) - f(x - h)) / (2 * h);

describe('Wiley & McLaren 1955 (Rev. Sci. Instrum. 26, 1150) space focusing', () => {
  it('single-field source: the space-focus plane is at D = 2·s0', () => {
    const gap = 10e-3;
    const s0 = 4e-3; // distance from the ion to the exit grid
    const make = (D: number) => buildModel({ repeller_V: 5000, gap1_m: gap, drift_m: D });
    const T = (D: number) => (s: number) => traceOne(make(D), MZ, gap - s, 0).t;
    const h = 1e-7;
    const atFocus = deriv(T(2 * s0), s0, h);
    const scale = T(2 * s0)(s0) / s0;
    expect(Math.abs(atFocus) / scale).toBeLessThan(1e-6);
    // Away from the focus the derivative is large, with opposite signs on either side: short of
    // the focus the slower source transit of ions starting deeper dominates, beyond it their speed.
    expect(deriv(T(1.5 * s0), s0, h) / scale).toBeGreaterThan(1e-3);
    expect(deriv(T(3 * s0), s0, h) / scale).toBeLessThan(-1e-3);
  });

  it('two-field source: D = 2·s0·k0^{3/2}·(1 − d/((k0 + √k0)·s0)) makes dT/ds0 vanish, with a sign change across', () => {
    const gap1 = 3e-3;
    const d = 10e-3;
    const Vr = 20_000;
    const Vg = 17_000;
    const s0 = 1.5e-3;
    const Es = (Vr - Vg) / gap1;
    const Ed = Vg / d;
    const k0 = (s0 * Es + d * Ed) / (s0 * Es);
    const D = 2 * s0 * k0 ** 1.5 * (1 - d / ((k0 + Math.sqrt(k0)) * s0));
    const T = (drift: number) => (s: number) =>
      traceOne(buildModel({ repeller_V: Vr, grid_V: Vg, gap1_m: gap1, gap2_m: d, drift_m: drift }), MZ, gap1 - s, 0).t;
    const h = 1e-7;
    const scale = T(D)(s0) / s0;
    expect(Math.abs(deriv(T(D), s0, h)) / scale).toBeLessThan(1e-6);
    // Stationary point: the derivative changes sign across s0 (a minimum in s).
    const left = deriv(T(D), s0 * 0.9, h);
    const right = deriv(T(D), s0 * 1.1, h);
    expect(Math.sign(left)).toBe(-Math.sign(right));
    // 10 % off the published drift the derivative is clearly non-zero.
    expect(Math.abs(deriv(T(D * 1.1), s0, h)) / scale).toBeGreaterThan(1e-3);
  });

  it('turn-around time: an ion launched backwards arrives 2·m·|v0|/(qE) after its forward twin', () => {
    // The turn-around time of Wiley & McLaren's energy-spread discussion.
    const gap = 3e-3;
    const E = 3000 / gap;
    const model = buildModel({ repeller_V: 20_000, grid_V: 17_000, gap1_m: gap, gap2_m: 10e-3, drift_m: 1 });
    const v0 = 300;
    const fwd = traceOne(model, MZ, 1.5e-3, v0);
    const back = traceOne(model, MZ, 1.5e-3, -v0);
    const expected = (2 * M_PER_Q * v0) / E;
    expect(relErr(back.t - fwd.t, expected)).toBeLessThan(1e-6);
  });
});

describe('Mamyrin et al. 1973 (Sov. Phys. JETP 37, 45) gridded mirrors', () => {
  /** Launch at the source exit plane with kinetic energy U (eV per charge): source time is zero. */
  const launch = (model: ReturnType<typeof buildModel>, U: number) => {
    const gap = 1e-3;
    return traceOne(model, MZ, gap, Math.sqrt((2 * U) / M_PER_Q));
  };

  it('single-stage mirror: first-order energy focus when the field-free path is 4× the penetration depth', () => {
    const U0 = 20_000;
    const depth = 0.2;
    const Vb = 25_000;
    const p = (depth * U0) / Vb; // penetration depth of the reference ion
    const make = (L: number) =>
      buildModel({
        repeller_V: U0,
        gap1_m: 1e-3,
        drift_m: L / 2,
        mirror: { stages: [{ length_m: depth, exitPotential_V: Vb }], returnLength_m: L / 2 },
      });
    const T = (L: number) => (U: number) => launch(make(L), U).t;
    const h = 1;
    const scale = T(4 * p)(U0) / U0;
    expect(Math.abs(deriv(T(4 * p), U0, h)) / scale).toBeLessThan(1e-7);
    expect(Math.abs(deriv(T(4.4 * p), U0, h)) / scale).toBeGreaterThan(1e-2);
  });

  /**
   * Dual-stage mirror, second-order focus. With c = sqrt(2q/m), the time from the drift start back to
   * the detector is c·T = L·U^{-1/2} + (4d1/V1)(U^{1/2} − (U−V1)^{1/2}) + 4·D2·(U−V1)^{1/2}, D2 = d2/(V2−V1)
   * (the expression Mamyrin et al. analyse; reconstructed from memory). Setting dT/dU = d²T/dU² = 0
   * gives two equations, linear in L and D2, solved here for given d1, V1, U0.
   */
  function secondOrderConditions(U0: number, V1: number, d1: number) {
    const W = U0 - V1;
    // a11·L + a12·D2 = b1 ; a21·L + a22·D2 = b2
    const a11 = -0.5 * U0 ** -1.5;
    const a12 = 2 * W ** -0.5;
    const b1 = -(2 * d1 / V1) * (U0 ** -0.5 - W ** -0.5);
    const a21 = 0.75 * U0 ** -2.5;
    const a22 = -(W ** -1.5);
    const b2 = -(d1 / V1) * (-(U0 ** -1.5) + W ** -1.5);
    const det = a11 * a22 - a12 * a21;
    return { L: (b1 * a22 - a12 * b2) / det, D2: (a11 * b2 - a21 * b1) / det };
  }

  it('the conditions reduce to the published short-first-stage limit: two thirds of the energy lost in stage 1', () => {
    // As d1/L → 0 the two conditions become homogeneous in (L, D2) and admit a drift length only
    // where their determinant vanishes; Mamyrin et al. 1973 give that point as W = U0/3, i.e. the
    // decelerating stage takes two thirds of the ion energy. Locate the root by bisection.
    const U0 = 20_000;
    const det = (V1: number) => {
      const W = U0 - V1;
      return -0.5 * U0 ** -1.5 * -(W ** -1.5) - 2 * W ** -0.5 * 0.75 * U0 ** -2.5;
    };
    let lo = 0.3 * U0;
    let hi = 0.9 * U0;
    expect(Math.sign(det(lo))).toBe(-Math.sign(det(hi)));
    for (let i = 0; i < 200; i++) {
      const mid = (lo + hi) / 2;
      if (Math.sign(det(mid)) === Math.sign(det(lo))) lo = mid;
      else hi = mid;
    }
    expect(lo / U0).toBeCloseTo(2 / 3, 10);
    // And at finite d1 the solved drift length grows without bound as V1 approaches that point.
    expect(Math.abs(secondOrderConditions(U0, 0.6666 * U0, 1e-3).L)).toBeGreaterThan(
      100 * Math.abs(secondOrderConditions(U0, 0.6 * U0, 1e-3).L),
    );
  });

  it('dual-stage mirror at the second-order conditions: dT/dU and d²T/dU² vanish, d³T/dU³ does not', () => {
    const U0 = 20_000;
    const d1 = 0.03;
    const d2 = 0.1;
    const V1 = 14_000;
    const { L, D2 } = secondOrderConditions(U0, V1, d1);
    expect(L).toBeGreaterThan(0.5);
    const V2 = V1 + d2 / D2;
    const model = buildModel({
      repeller_V: U0,
      gap1_m: 1e-3,
      drift_m: L / 2,
      mirror: {
        stages: [
          { length_m: d1, exitPotential_V: V1 },
          { length_m: d2, exitPotential_V: V2 },
        ],
        returnLength_m: L / 2,
      },
    });
    const T = (U: number) => launch(model, U).t;
    const h = 20;
    const t0 = T(U0);
    const d1T = (T(U0 + 1) - T(U0 - 1)) / 2; // a small step: the third derivative is not small
    const d2T = (T(U0 + h) - 2 * t0 + T(U0 - h)) / (h * h);
    const d3T = (T(U0 + 2 * h) - 2 * T(U0 + h) + 2 * T(U0 - h) - T(U0 - 2 * h)) / (2 * h ** 3);
    // Scale each derivative by U^n/T: dimensionless, O(1) when a focus condition is not met.
    expect(Math.abs(d1T * U0) / t0).toBeLessThan(1e-8);
    expect(Math.abs(d2T * U0 * U0) / t0).toBeLessThan(1e-5);
    expect(Math.abs(d3T * U0 ** 3) / t0).toBeGreaterThan(1e-3);
    // A single-stage mirror of the same drift length is only first-order at best: its second
    // derivative at its own first-order focus is large by comparison.
    const p = L / 4;
    const single = buildModel({
      repeller_V: U0,
      gap1_m: 1e-3,
      drift_m: L / 2,
      mirror: { stages: [{ length_m: 2 * p, exitPotential_V: 2 * U0 }], returnLength_m: L / 2 },
    });
    const Ts = (U: number) => launch(single, U).t;
    const s2 = (Ts(U0 + h) - 2 * Ts(U0) + Ts(U0 - h)) / (h * h);
    expect(Math.abs(s2 * U0 * U0) / Ts(U0)).toBeGreaterThan(1e-2);
  });
});

describe('energy conservation (final kinetic energy = q·potential drop + initial kinetic energy)', () => {
  it('holds through a floated drift tube, a dual-stage mirror and post-acceleration', () => {
    const model = buildModel({
      repeller_V: 12_000,
      grid_V: 9_000,
      gap1_m: 4e-3,
      gap2_m: 8e-3,
      drift_m: 0.7,
      driftPotential_V: -2_000,
      mirror: {
        stages: [
          { length_m: 0.02, exitPotential_V: 7_000 },
          { length_m: 0.12, exitPotential_V: 13_500 },
        ],
        returnLength_m: 0.6,
      },
      post: { gap_m: 5e-3, potential_V: -8_000 },
    });
    for (const [z0, v0] of [
      [1e-3, 0],
      [2.5e-3, 700],
      [3e-3, -200],
    ]) {
      const r = traceOne(model, MZ, z0, v0);
      expect(r.fate).toBe(Fate.DETECTED);
      const Vstart = 12_000 - (3_000 * z0) / 4e-3;
      const expectedKe = E_C * (Vstart - -8_000) + 0.5 * (MZ * U_KG) * v0 * v0;
      const ke = 0.5 * (MZ * U_KG) * r.v * r.v;
      expect(relErr(ke, expectedKe)).toBeLessThan(1e-12);
    }
  });
});
