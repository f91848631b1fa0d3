/**
 * Auto-tune of gridded mirrors against Mamyrin, Karataev, Shmikk & Zagulin 1973 (Sov. Phys. JETP 37, 45):
 * - single stage: first-order energy focus when the field-free path L equals 4 × the penetration depth
 *   p = depth·U/ΔV, i.e. ΔV = 4·depth·U/L for the back-plate step;
 * - dual stage: second-order focus, dT/dU = d²T/dU² = 0, with c·T = L·U^{-1/2} +
 *   (4d1/V1)(U^{1/2} − (U−V1)^{1/2}) + 4·D2·(U−V1)^{1/2}, D2 = d2/(V2−V1) (the expression of the
 *   exact-engine reference test, tests/physics/exactEngine.reference.test.ts, solved the same way).
 * Expected values come from these formulas; the tuner sees only simulated peak widths and starts from
 * the preset's (deliberately wrong) values, not from the analytic conditions.
 */
import { describe, expect, it } from 'vitest';
import { inProcessEngine, mirrorOnly } from './fixtures';

/**
 * Ions of 10 keV ± 10 eV (z = 1) from a field-free source (see mirrorOnly): the drift energy per charge
 * is U0 = 10 kV. The spread is small enough that the variance minimum sits on the focus conditions
 * (it moves by O(σ²) in the first-order coefficient).
 */
const ENERGY = { mean_eV: 10000, sd_eV: 10 };
const U0 = ENERGY.mean_eV;

describe('single-stage mirror: L = 4 × penetration depth (Mamyrin et al. 1973)', () => {
  it('tuning the back-plate potential lands on the condition within 0.5 %', async () => {
    const depth = 0.4;
    const L = 1.2; // 0.7 m to the mirror, 0.5 m back
    const expected_V = (4 * depth * U0) / L;
    const preset = mirrorOnly({
      mirror: { type: 'single', depth_mm: depth * 1e3, backPlate_V: 15000, returnLength_mm: 500 },
      drift_mm: 700,
      energy: ENERGY,
      mz: [{ mz: 1000 }],
      ions: 3000,
    });
    const r = await inProcessEngine(2).optimise({
      preset,
      parameters: [{ path: 'mirror.backPlate_V', min: 11000, max: 17000 }],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      useAnalyticStart: false,
    });
    expect(Math.abs(r.best[0] / expected_V - 1)).toBeLessThan(0.005);
    expect(r.species?.[0].transmission).toBe(1);
  });

  it('and tuning the mirror depth for a fixed back plate (within 0.5 %)', async () => {
    const backPlate = 13000;
    const L = 1.2;
    const expected_mm = ((L * backPlate) / (4 * U0)) * 1e3;
    const preset = mirrorOnly({
      mirror: { type: 'single', depth_mm: 450, backPlate_V: backPlate, returnLength_mm: 500 },
      drift_mm: 700,
      energy: ENERGY,
      mz: [{ mz: 1000 }],
      ions: 3000,
    });
    const r = await inProcessEngine(2).optimise({
      preset,
      parameters: [{ path: 'mirror.depth_mm', min: 320, max: 600 }],
      objective: { name: 'max-r-at-mz', targetMz: 1000 },
      useAnalyticStart: false,
    });
    expect(Math.abs(r.best[0] / expected_mm - 1)).toBeLessThan(0.005);
  });
});

/** dT/dU = d²T/dU² = 0 at U0: linear in (L, D2) for given V1 and d1 (as in the exact-engine reference test). */
function secondOrderConditions(U: number, V1: number, d1: number) {
  const W = U - V1;
  const a11 = -0.5 * U ** -1.5;
  const a12 = 2 * W ** -0.5;
  const b1 = -((2 * d1) / V1) * (U ** -0.5 - W ** -0.5);
  const a21 = 0.75 * U ** -2.5;
  const a22 = -(W ** -1.5);
  const b2 = -(d1 / V1) * (-(U ** -1.5) + W ** -1.5);
  const det = a11 * a22 - a12 * a21;
  return { L: (b1 * a22 - a12 * b2) / det, D2: (a11 * b2 - a21 * b1) / det };
}

describe('dual-stage mirror: second-order conditions (Mamyrin et al. 1973)', () => {
  it('tuning both stage potentials lands on the published second-order conditions within 0.5 %', async () => {
    const d1 = 0.03;
    const d2 = 0.1;
    const V1 = 7000;
    const { L, D2 } = secondOrderConditions(U0, V1, d1);
    const V2 = V1 + d2 / D2;
    expect(L).toBeGreaterThan(1);
    expect(V2).toBeGreaterThan(U0);
    const preset = mirrorOnly({
      mirror: { type: 'dual', deceleratingLength_mm: d1 * 1e3, intermediateGrid_V: 6300, reflectingLength_mm: d2 * 1e3, backPlate_V: 11500, returnLength_mm: (L / 2) * 1e3 },
      drift_mm: (L / 2) * 1e3,
      energy: ENERGY,
      mz: [{ mz: 1000 }],
      ions: 2000,
    });
    const r = await inProcessEngine(2).optimise({
      preset,
      parameters: [
        { path: 'mirror.intermediateGrid_V', min: 5500, max: 8000 },
        { path: 'mirror.backPlate_V', min: 10500, max: 14000 },
      ],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      useAnalyticStart: false,
      restarts: 1,
    });
    expect(Math.abs(r.best[0] / V1 - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.best[1] / V2 - 1)).toBeLessThan(0.005);
  });
});

describe('the tuner starts from these conditions when asked to (analytic start)', () => {
  it('single stage: back plate at ΔV = 4·depth·U0/L; dual stage: (V1, V2) on the second-order conditions', async () => {
    const single = mirrorOnly({
      mirror: { type: 'single', depth_mm: 400, backPlate_V: 15000, returnLength_mm: 500 },
      drift_mm: 700,
      energy: ENERGY,
      mz: [{ mz: 1000 }],
      ions: 200,
    });
    const r1 = await inProcessEngine(1).optimise({
      preset: single,
      parameters: [{ path: 'mirror.backPlate_V', min: 11000, max: 17000 }],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      restarts: 0,
    });
    expect(Math.abs(r1.start[0] / ((4 * 0.4 * U0) / 1.2) - 1)).toBeLessThan(1e-9);
    expect(r1.startSource?.join(' ')).toMatch(/Mamyrin et al\. 1973 single-stage/);

    const V1 = 7000;
    const { L, D2 } = secondOrderConditions(U0, V1, 0.03);
    const dual = mirrorOnly({
      mirror: { type: 'dual', deceleratingLength_mm: 30, intermediateGrid_V: 6300, reflectingLength_mm: 100, backPlate_V: 11500, returnLength_mm: (L / 2) * 1e3 },
      drift_mm: (L / 2) * 1e3,
      energy: ENERGY,
      mz: [{ mz: 1000 }],
      ions: 200,
    });
    const r2 = await inProcessEngine(1).optimise({
      preset: dual,
      parameters: [
        { path: 'mirror.intermediateGrid_V', min: 5500, max: 8000 },
        { path: 'mirror.backPlate_V', min: 10500, max: 14000 },
      ],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      restarts: 0,
      maxEvaluations: 40,
    });
    expect(Math.abs(r2.start[0] / V1 - 1)).toBeLessThan(1e-6);
    expect(Math.abs(r2.start[1] / (V1 + 0.1 / D2) - 1)).toBeLessThan(1e-6);
    expect(r2.startSource?.join(' ')).toMatch(/second-order/);
  });
});
