/**
 * Focus analysis: numerical derivatives against functions with known derivatives, and the
 * Wiley–McLaren space focus (W. C. Wiley & I. H. McLaren, Rev. Sci. Instrum. 26, 1150 (1955))
 * with the flight time written here in closed form from uniform-field kinematics.
 */
import { describe, expect, it } from 'vitest';
import { analyseFocus, differentiate, findSpaceFocusPlane } from '../../src/analysis/focus';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../src/physics/constants';

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

describe('differentiate', () => {
  it('is exact (to rounding) for a quartic: Richardson removes the h² term, h⁴ terms vanish', () => {
    const f = (x: number): number => 3 + 2 * x - 5 * x * x + 0.7 * x ** 3 + 0.25 * x ** 4;
    const x = 0.3;
    const d = differentiate(f, x, 2e-3)!;
    expect(d.stencil).toBe('central');
    expect(rel(d.first, 2 - 10 * x + 2.1 * x * x + x ** 3)).toBeLessThan(1e-10);
    expect(rel(d.second, -10 + 4.2 * x + 3 * x * x)).toBeLessThan(1e-9);
  });

  it('matches exp and sin to ~1e-10', () => {
    const e = differentiate(Math.exp, 1.3, 2e-3)!;
    expect(rel(e.first, Math.exp(1.3))).toBeLessThan(1e-10);
    expect(rel(e.second, Math.exp(1.3))).toBeLessThan(1e-9);
    const s = differentiate(Math.sin, 0.4, 2e-3)!;
    expect(rel(s.first, Math.cos(0.4))).toBeLessThan(1e-10);
    expect(rel(s.second, -Math.sin(0.4))).toBeLessThan(1e-9);
  });

  it('stays inside a bound: shrinks the step, or goes one-sided', () => {
    const near = differentiate(Math.exp, 0.001, 2e-3, 0, 1)!;
    expect(near.stencil).toBe('central');
    expect(near.step).toBeCloseTo(0.001, 15);
    expect(rel(near.first, Math.exp(0.001))).toBeLessThan(1e-9);
    const edge = differentiate(Math.exp, 1, 2e-3, 0, 1)!;
    expect(edge.stencil).toBe('one-sided');
    expect(edge.step).toBeLessThan(0);
    expect(rel(edge.first, Math.E)).toBeLessThan(1e-7);
    expect(rel(edge.second, Math.E)).toBeLessThan(1e-5);
    expect(differentiate(Math.exp, 2, 2e-3, 0, 1)).toBeNull();
    expect(differentiate(() => NaN, 0, 1e-3)).toBeNull();
  });
});

// ---- Single-field source (Wiley & McLaren 1955) ------------------------------------------------
// Field E over a gap d; the ion starts z0 from the repeller, s = d − z0 from the exit grid, with
// axial energy U0; then drifts D. Acceleration a = qE/m.
const MZ = 1000;
const M_KG = MZ * U_KG;
const GAP_M = 10e-3;
const E_V_PER_M = 5000 / GAP_M;
const ACC = (E_C * E_V_PER_M) / M_KG;

function wileyMcLarenTime(z0_m: number, U0_J: number, D_m: number): number {
  const s = GAP_M - z0_m;
  const v0 = Math.sqrt((2 * U0_J) / M_KG);
  const v = Math.sqrt(v0 * v0 + 2 * ACC * s);
  return (v - v0) / ACC + D_m / v;
}

describe('Wiley–McLaren single-field source', () => {
  const s0 = 4e-3;
  const z0 = GAP_M - s0;

  it('dT/dz0 and d²T/dz0² match the closed-form derivatives of T(s) = sqrt(2s/a) + D/sqrt(2as)', () => {
    const D = 1.3;
    // dT/ds = (2as)^(−1/2) − a·D·(2as)^(−3/2);  d²T/ds² = −a(2as)^(−3/2) + 3a²D(2as)^(−5/2); z0 = d − s.
    const q = 2 * ACC * s0;
    const dTds = q ** -0.5 - ACC * D * q ** -1.5;
    const d2Tds2 = -ACC * q ** -1.5 + 3 * ACC * ACC * D * q ** -2.5;
    const r = analyseFocus((z, u) => wileyMcLarenTime(z, u, D), {
      z0_m: z0,
      U0_J: 0,
      lengthScale_m: s0,
      z0Range_m: [0, GAP_M],
      positionSpread_m: 50e-6,
      energySpread_J: 0,
    });
    if (!r.ok) throw new Error(r.reason);
    expect(rel(r.focus.dT_dz0_ns_per_mm, -dTds * 1e6)).toBeLessThan(1e-8);
    expect(rel(r.focus.d2T_dz02_ns_per_mm2, d2Tds2 * 1e3)).toBeLessThan(1e-6);
    expect(r.focus.flightTime_ns).toBeCloseTo(wileyMcLarenTime(z0, 0, D) * 1e9, 9);
    expect(r.focus.spaceFocusOrder).toBe(0);
    // At U0 = 0 the energy derivative is infinite (T ∝ √U0): reported as null with a reason.
    expect(r.focus.dT_dU0_ns_per_eV).toBeNull();
    expect(r.focus.energyNote).toMatch(/U0 = 0/);
  });

  it('at D = 2·s0 the focus is first order: ½T″Δz²/T = (1/8)(Δz/s0)² (from T above)', () => {
    // At D = 2s: T = 2·sqrt(2s/a) and T″ = 4a²s(2as)^(−5/2), so T″·s²/T = 1/4.
    const probe = { z0_m: z0, U0_J: 0, lengthScale_m: s0, z0Range_m: [0, GAP_M] as const, energySpread_J: 0 };
    const T = (z: number, u: number): number => wileyMcLarenTime(z, u, 2 * s0);
    const wide = analyseFocus(T, { ...probe, positionSpread_m: 50e-6 });
    if (!wide.ok) throw new Error(wide.reason);
    expect(wide.focus.positionFirstOrder_ppm).toBeLessThan(1e-3);
    expect(rel(wide.focus.positionSecondOrder_ppm, 1e6 * (1 / 8) * (50e-6 / s0) ** 2)).toBeLessThan(1e-6);
    expect(wide.focus.spaceFocusOrder).toBe(1);
    // Over a 5 µm spread even the second-order term is below 1 ppm: order 2 for that spread.
    const narrow = analyseFocus(T, { ...probe, positionSpread_m: 5e-6 });
    expect(narrow.ok && narrow.focus.spaceFocusOrder).toBe(2);
  });

  it('the space-focus plane finder returns D = 2·s0', () => {
    const plane = findSpaceFocusPlane((z, D) => wileyMcLarenTime(z, 0, D), z0, [1e-3, 2], { lengthScale_m: s0, z0Range_m: [0, GAP_M] });
    if (plane.driftLength_m === null) throw new Error(plane.reason);
    expect(rel(plane.driftLength_m, 2 * s0)).toBeLessThan(1e-9);
    expect(plane.driftLength_mm).toBeCloseTo(8, 6);
    expect(plane.otherCrossings).toBe(0);
  });

  it('returns null with a reason when the focus lies outside the range', () => {
    const plane = findSpaceFocusPlane((z, D) => wileyMcLarenTime(z, 0, D), z0, [0.02, 2], { lengthScale_m: s0, z0Range_m: [0, GAP_M] });
    expect(plane.driftLength_m).toBeNull();
    if (plane.driftLength_m === null) expect(plane.reason).toMatch(/no space-focus plane/);
  });
});

describe('Wiley–McLaren two-field source', () => {
  it('the finder reproduces D = 2·s0·k0^(3/2)·[1 − d/((k0 + √k0)·s0)], k0 = (s0·Es + d·Ed)/(s0·Es) (Wiley & McLaren 1955, eq. for first-order space focus; from memory)', () => {
    const s0 = 4e-3;
    const d = 10e-3;
    const Es = 5e4;
    const Ed = 2e5;
    const gap1 = 8e-3; // first stage length; the ion starts s0 before its exit
    const aS = (E_C * Es) / M_KG;
    const aD = (E_C * Ed) / M_KG;
    const T = (z0: number, D: number): number => {
      const s = gap1 - z0;
      const v1 = Math.sqrt(2 * aS * s);
      const v2 = Math.sqrt(v1 * v1 + 2 * aD * d);
      return v1 / aS + (v2 - v1) / aD + D / v2;
    };
    const k0 = (s0 * Es + d * Ed) / (s0 * Es);
    const expected = 2 * s0 * k0 ** 1.5 * (1 - d / ((k0 + Math.sqrt(k0)) * s0));
    const plane = findSpaceFocusPlane(T, gap1 - s0, [0.01, 3], { lengthScale_m: s0, z0Range_m: [0, gap1] });
    if (plane.driftLength_m === null) throw new Error(plane.reason);
    expect(rel(plane.driftLength_m, expected)).toBeLessThan(1e-8);
  });
});

describe('energy derivatives', () => {
  it('pure drift T = D·sqrt(m/(2U)): dT/dU = −T/(2U), d²T/dU² = 3T/(4U²)', () => {
    const D = 1.0;
    const U = 20_000 * E_C; // 20 keV
    const T = (_z: number, u: number): number => D * Math.sqrt(M_KG / (2 * u));
    const r = analyseFocus(T, { z0_m: 0, U0_J: U, lengthScale_m: 1e-3, positionSpread_m: 1e-4, energySpread_J: 1 * E_C });
    if (!r.ok) throw new Error(r.reason);
    const t = T(0, U);
    // Per eV: multiply s/J by e (J per eV).
    expect(rel(r.focus.dT_dU0_ns_per_eV!, (-t / (2 * U)) * E_C * 1e9)).toBeLessThan(1e-9);
    expect(rel(r.focus.d2T_dU02_ns_per_eV2!, ((3 * t) / (4 * U * U)) * E_C * E_C * 1e9)).toBeLessThan(1e-7);
    // A 1 eV spread at 20 keV moves T by 25 ppm (ΔU/2U): not energy focused.
    expect(rel(r.focus.energyFirstOrder_ppm!, 25)).toBeLessThan(1e-6);
    expect(r.focus.energyFocusOrder).toBe(0);
    // T does not depend on z0 here: formally focused to second order in position.
    expect(r.focus.spaceFocusOrder).toBe(2);
  });

  it('a lost reference ion is reported, not turned into numbers', () => {
    const r = analyseFocus(() => NaN, { z0_m: 0, U0_J: 1e-18, lengthScale_m: 1e-3, positionSpread_m: 0, energySpread_J: 0 });
    expect(r.ok).toBe(false);
  });
});
