import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../../src/physics/constants';
import { createExactPlan, prepareExactPlan } from '../../../src/physics/exactEngine';
import { Fate } from '../../../src/physics/fates';
import { createTrajectory, Region, traceTrajectory } from '../../../src/physics/trajectory';
import { compilePreset } from '../../../src/presets/compile';
import { validatePreset } from '../../../src/presets/load';
import { drawableModel, PROFILE_SLABS, profilePotential_V } from '../../../src/simulation/scene/drawableModel';
import { demoPreset } from '../../ui/helpers';

function harmonicSetup(backPlate_V: number, depth_mm: number) {
  const doc = structuredClone(demoPreset('demo-reflectron-single')) as unknown as Record<string, unknown>;
  doc.mirror = { type: 'profile', depth_mm, profile: { kind: 'harmonic', backPlate_V }, returnLength_mm: 500 };
  const checked = validatePreset(doc);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  return compilePreset(checked.value);
}

describe('drawing stand-ins for integrated parts', () => {
  it('leaves closed-form setups untouched', () => {
    const { model } = compilePreset(demoPreset('demo-reflectron-dual'));
    const d = drawableModel(model);
    expect(d.model).toBe(model);
    expect(d.approximations).toEqual([]);
  });

  it('samples a harmonic mirror at its own potentials', () => {
    const { model } = harmonicSetup(30_000, 400);
    const d = drawableModel(model);
    expect(d.model.mirror!.stages).toHaveLength(PROFILE_SLABS);
    d.model.mirror!.stages.forEach((s, k) => {
      const u = (k + 1) / PROFILE_SLABS;
      expect(s.exitPotential_V).toBeCloseTo(30_000 * u * u, 9);
      expect(s.length_m).toBeCloseTo(0.4 / PROFILE_SLABS, 12);
    });
    expect(profilePotential_V(5, [1, 2], 0.5)).toBeCloseTo(5 + 0.5 + 0.5, 12);
  });

  it('the stand-in turns ions where the harmonic field does and keeps them about half a period (textbook oscillator)', () => {
    const { model } = harmonicSetup(30_000, 400);
    const d = drawableModel(model);
    const mz = 1336.7008;
    const tr = traceTrajectory(createTrajectory(), prepareExactPlan(createExactPlan(), d.model, mz), 0, 0);
    expect(tr.fate).toBe(Fate.DETECTED);
    const regions = Array.from(tr.region.subarray(0, tr.count));
    const firstIn = regions.indexOf(Region.MIRROR_IN);
    const turn = regions.indexOf(Region.MIRROR_OUT);
    const entrance = tr.x0_m[firstIn];
    const depth = tr.x0_m[turn] - entrance;
    // Energy balance: K = c·u² at the turn, K = q·V_repeller from rest at the repeller, c = 30 000 V.
    const repeller_V = demoPreset('demo-reflectron-single').source.repeller.potential_V;
    expect(depth / 0.4).toBeCloseTo(Math.sqrt(repeller_V / 30_000), 2);
    // Harmonic motion: in and out again in half a period, π/ω with ω² = 2qc/(m·d²), whatever the energy.
    const m = mz * ATOMIC_MASS_CONSTANT_KG;
    const omega = Math.sqrt((2 * ELEMENTARY_CHARGE_C * 30_000) / (m * 0.4 * 0.4));
    const inMirror = regions.reduce((sum, r, k) => sum + (r === Region.MIRROR_IN || r === Region.MIRROR_OUT ? tr.dt_s[k] : 0), 0);
    expect(Math.abs(inMirror - Math.PI / omega) / (Math.PI / omega)).toBeLessThan(0.02);
  });

  it('leaves a sloped pulse edge as it is: the drawn paths fly the pulse itself (drawnPaths.ts), the layout does not depend on it', () => {
    const doc = structuredClone(demoPreset('demo-linear-delayed')) as unknown as { source: { extraction: Record<string, unknown> } };
    doc.source.extraction.rise = { shape: 'linear', riseTime_ns: 40 };
    const checked = validatePreset(doc);
    expect(checked.ok).toBe(true);
    if (!checked.ok) return;
    const model = compilePreset(checked.value).model;
    const d = drawableModel(model);
    expect(d.model).toBe(model);
    expect(d.approximations).toEqual([]);
  });
});
