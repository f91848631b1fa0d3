/** How each tolerance parameter perturbs a preset, and how bad tolerance values are refused. */
import { describe, expect, it } from 'vitest';
import { parsePresetText, validatePreset } from '../../src/presets/load';
import { perturbedPreset, toleranceParameters } from '../../src/tolerance/parameters';
import { MATERIALS, materialExpansion_per_K } from '../../src/tolerance/materials';
import { valid } from './helpers';

/** The dual-stage reflectron geometry of the shipped demo, with species of the test's own. */
function dualStage(extra: Record<string, unknown> = {}) {
  return valid({
    formatVersion: 1,
    name: 'test: dual-stage reflectron',
    polarity: 'positive',
    source: {
      repeller: { potential_V: 22000, hold_V: 18800 },
      extractionGrid: { gap_mm: 3, potential_V: 18800 },
      groundGrid: { gap_mm: 10 },
      extraction: { mode: 'delayed', delay_ns: 196.3 },
    },
    drift: { length_mm: 1000 },
    mirror: { type: 'dual', deceleratingLength_mm: 30, intermediateGrid_V: 14167, reflectingLength_mm: 100, backPlate_V: 22950, returnLength_mm: 800 },
    ions: {
      species: [{ mz: 1200, charge: 1 }],
      startPosition: { kind: 'surface', position_mm: 0 },
      startVelocity: { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 150, minimum_m_per_s: 0 },
    },
    run: { ions: 500, seed: 1 },
    ...extra,
  });
}

const applied = (preset: ReturnType<typeof dualStage>, values: Record<string, number>) => {
  const r = perturbedPreset(preset, values);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
};

describe('tolerance parameters', () => {
  it('lists the parameters that apply to the geometry', () => {
    const ids = toleranceParameters(dualStage()).map((p) => p.id);
    expect(ids).toContain('supply.mirrorIntermediateGrid.drift');
    expect(ids).toContain('timing.delayJitter');
    expect(ids).toContain('position.mirrorIntermediateGrid');
    expect(ids).not.toContain('supply.driftTube.drift'); // a grounded tube has no supply to drift
    expect(ids).not.toContain('supply.postAcceleration.drift');
    const linear = valid({ ...dualStage(), mirror: { type: 'none' }, source: { ...dualStage().source, extraction: { mode: 'static' } } });
    const linearIds = toleranceParameters(linear).map((p) => p.id);
    expect(linearIds).not.toContain('temperature.mirror');
    expect(linearIds).not.toContain('timing.delayOffset');
    expect(linearIds).not.toContain('position.mirrorEntranceGrid');
  });

  it('a supply drift scales the hold and the extraction potential of that supply only', () => {
    const p = applied(dualStage(), { 'supply.repeller.drift': 100 });
    expect(p.source.repeller.potential_V).toBeCloseTo(22000 * (1 + 1e-4), 9);
    expect(p.source.repeller.hold_V).toBeCloseTo(18800 * (1 + 1e-4), 9);
    expect(p.source.extractionGrid!.potential_V).toBe(18800);
    const m = applied(dualStage(), { 'supply.mirrorBackPlate.drift': -50 }).mirror;
    expect(m.type === 'dual' && m.backPlate_V).toBeCloseTo(22950 * (1 - 5e-5), 9);
  });

  it('a grid position error moves one plane: the gaps on both sides change, their sum does not', () => {
    const base = dualStage();
    const p = applied(base, { 'position.extractionGrid': 10 });
    expect(p.source.extractionGrid!.gap_mm).toBeCloseTo(3.01, 12);
    expect(p.source.groundGrid.gap_mm).toBeCloseTo(9.99, 12);
    const q = applied(base, { 'position.mirrorEntranceGrid': 25 });
    const m = q.mirror.type === 'dual' ? q.mirror : null;
    expect(q.drift.length_mm).toBeCloseTo(1000.025, 10);
    expect(m!.returnLength_mm).toBeCloseTo(800.025, 10);
    expect(m!.deceleratingLength_mm).toBeCloseTo(29.975, 10);
    const det = applied(base, { 'position.detector': -40 });
    expect(det.mirror.type === 'dual' && det.mirror.returnLength_mm).toBeCloseTo(799.96, 10);
  });

  it('temperature scales the tube and mirror lengths by (1 + α·ΔT) with the material chosen', () => {
    const preset = dualStage({ tolerances: { temperature: { tubeMaterial: 'aluminium-6061', mirror_K: 1 } } });
    const alpha = materialExpansion_per_K('aluminium-6061');
    const p = applied(preset, { 'temperature.flightTube': 2 });
    expect(p.drift.length_mm).toBeCloseTo(1000 * (1 + 2 * alpha), 10);
    expect(p.mirror.type === 'dual' && p.mirror.returnLength_mm).toBeCloseTo(800 * (1 + 2 * alpha), 10);
    expect(p.mirror.type === 'dual' && p.mirror.reflectingLength_mm).toBe(100);
    const q = applied(preset, { 'temperature.mirror': 3 });
    expect(q.mirror.type === 'dual' && q.mirror.reflectingLength_mm).toBeCloseTo(100 * (1 + 3 * materialExpansion_per_K('stainless-304')), 10);
  });

  it('stainless steel 304 defaults to 17.3e-6/K (handbook value, from memory)', () => {
    expect(materialExpansion_per_K('stainless-304')).toBe(17.3e-6);
    for (const m of MATERIALS) expect(m.expansion_per_K).toBeGreaterThan(0);
  });

  it('reads the tolerance values from the preset section', () => {
    const preset = dualStage({ tolerances: { supplies: { repeller: { drift_ppm: 4, ripple_ppm: 7 } }, timing: { delayJitter_ns: 0.2 } } });
    const byId = new Map(toleranceParameters(preset).map((p) => [p.id, p]));
    expect(byId.get('supply.repeller.drift')!.tolerance).toBe(4);
    expect(byId.get('supply.repeller.ripple')!.tolerance).toBe(7);
    expect(byId.get('supply.repeller.ripple')!.kind).toBe('shot');
    expect(byId.get('timing.delayJitter')!.tolerance).toBe(0.2);
    expect(byId.get('timing.delayJitter')!.linkedTo).toBe('timing.delayOffset');
  });
});

describe('bad tolerance values', () => {
  const text = (tolerances: unknown) => JSON.stringify({ ...dualStage(), tolerances });
  const issues = (tolerances: unknown) => {
    const r = parsePresetText(text(tolerances));
    return r.ok ? [] : r.issues;
  };

  it('names the field and the allowed range', () => {
    expect(issues({ supplies: { repeller: { drift_ppm: -1 } } })).toEqual([
      { path: 'tolerances.supplies.repeller.drift_ppm', message: 'must be a number ≥ 0 and ≤ 100000 ppm' },
    ]);
    expect(issues({ timing: { delayJitter_ns: 'x' } })[0].path).toBe('tolerances.timing.delayJitter_ns');
    expect(issues({ temperature: { tubeMaterial: 'wood' } })[0].message).toMatch(/must be one of stainless-304/);
    expect(issues({ unknownKey: 1 })[0].path).toBe('tolerances');
  });

  it('refuses a tolerance for a part the analyser does not have', () => {
    const linear = { ...dualStage(), mirror: { type: 'none' }, tolerances: { supplies: { mirrorBackPlate: { drift_ppm: 2 } }, positions: { mirrorEntranceGrid_um: 5 } } };
    const r = validatePreset(linear);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues.map((i) => i.path)).toEqual(['tolerances.supplies.mirrorBackPlate.drift_ppm', 'tolerances.positions.mirrorEntranceGrid_um']);
  });

  it('a preset without the section loads unchanged (the section is optional in format version 1)', () => {
    const r = validatePreset(JSON.parse(JSON.stringify(dualStage())));
    expect(r.ok && r.value.tolerances).toBe(undefined);
  });
});
