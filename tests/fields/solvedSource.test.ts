import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { Fate } from '../../src/physics/fates';
import { idealGridEquivalent } from '../../src/presets/compileFields';
import { validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';
import { buildLayout } from '../../src/simulation/scene/layout';
import { drawableModel } from '../../src/simulation/scene/drawableModel';
import { MAX_EQUIPOTENTIAL_SEGMENTS, fillEquipotentials } from '../../src/simulation/scene/equipotentials';

const text = readFileSync(new URL('../../presets/demo-aperture-source.json', import.meta.url), 'utf8');
const doc = () => JSON.parse(text) as Record<string, any>;
function valid(d: unknown): Preset {
  const r = validatePreset(d);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

/** Mean flight time (ns) of the first species, solved and ideal-grid equivalent, for a few on-axis ions. */
function solvedVsIdeal(d: Record<string, any>): { solved: number; ideal: number } {
  const p = valid(d);
  const solved = simulate(p, { ions: 40 }).report.species[0].flightTime_ns!;
  const ideal = simulate(valid(idealGridEquivalent(p)), { ions: 40 }).report.species[0].flightTime_ns!;
  return { solved, ideal };
}

/**
 * A source with small apertures in thin plates, resolved by the mesh (spacing = aperture/4), on-axis
 * ions. Plates 20 mm in radius (≫ the 3 mm first gap), so the grounded housing does not disturb the
 * stage fields near the axis (its influence decays like exp(−π·20/3) ≈ 1e-9).
 */
function smallAperture(aperture_mm: number, delayed: boolean): Record<string, any> {
  const d = doc();
  d.source.solved = {
    repellerThickness_mm: 1,
    extractionAperture_mm: aperture_mm,
    extractionThickness_mm: aperture_mm,
    groundAperture_mm: aperture_mm,
    groundThickness_mm: aperture_mm,
    plateRadius_mm: 20,
    exitLength_mm: 2,
    mesh: { spacing_mm: aperture_mm / 4, wallRadius_mm: 24 },
  };
  d.drift.length_mm = 1000;
  d.ions.transverse = { spotRadius_mm: 0, beamEnergy_eV: 0, beamEnergySd_eV: 0 };
  d.ions.startVelocity = { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 0 };
  if (!delayed) d.source.extraction = { mode: 'static' };
  d.ions.species = [d.ions.species[1]];
  delete d.analysis;
  return d;
}

/**
 * Field penetration through an aperture of radius a in a plate is confined to a region of a few a
 * around it (e.g. the aperture-lens field, Wollnik, Optics of Charged Particles, 1987, from memory),
 * so with small apertures the flight time approaches the ideal-grid result, the gap between them
 * shrinking about in proportion to a. This holds for a static source and, by superposition of the
 * unit fields, for the pulsed (delayed-extraction) source.
 */
describe('solved aperture source', () => {
  it('approaches the ideal-grid source as the apertures shrink, static and pulsed', () => {
    for (const delayed of [false, true]) {
      const errors = [0.4, 0.2].map((a) => {
        const { solved, ideal } = solvedVsIdeal(smallAperture(a, delayed));
        return Math.abs(solved - ideal) / ideal;
      });
      // Measured when written: static 1.08e-3, 5.61e-4; pulsed 1.63e-3, 8.34e-4 (first order in the aperture).
      expect(errors[1]).toBeLessThan(errors[0] / 1.5);
      expect(errors[1]).toBeLessThan(1e-3);
    }
  }, 60_000);

  it('the shipped demo runs with every ion given a fate; the pulse changes the flight times', () => {
    const base = simulate(valid(doc()), { ions: 200 });
    for (let i = 0; i < base.ensemble.count; i++) {
      expect(base.trace.fate[i]).not.toBe(Fate.UNSET);
      expect(Number.isFinite(base.trace.flightTime_s[i])).toBe(true);
    }
    expect(base.report.detected).toBeGreaterThan(190);
    const d = doc();
    d.source.extraction.delay_ns = 400;
    const later = simulate(valid(d), { ions: 200 });
    expect(later.report.species[0].flightTime_ns!).toBeGreaterThan(base.report.species[0].flightTime_ns! + 100);
  });

  it('strikes: ions sent at the extraction plate strike it; ions moving into the repeller strike the repeller', () => {
    const d = doc();
    d.ions.transverse = { spotRadius_mm: 0, velocity: { kind: 'normal', sd_m_per_s: 20_000 }, beamEnergy_eV: 0, beamEnergySd_eV: 0 };
    const wide = simulate(valid(d), { ions: 100 });
    expect(wide.report.fates.struckElectrode).toBeGreaterThan(20);
    const back = doc();
    back.ions.startVelocity = { kind: 'normal', mean_m_per_s: -400, sd_m_per_s: 10 };
    expect(simulate(valid(back), { ions: 40 }).report.fates.struckRepeller).toBe(40);
  });

  it('geometry problems are named under source.solved', () => {
    const d = doc();
    d.source.solved.extractionAperture_mm = 13;
    delete d.source.extractionGrid;
    const r = validatePreset(d);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues.map((i) => i.path)).toContain('source.solved');
  });

  it('the 3D view draws it with ideal grids and its equipotentials at the source', () => {
    const { model } = { model: simulate(valid(doc()), { ions: 10 }).compiled.model };
    const drawable = drawableModel(model);
    expect(drawable.approximations).toContain('aperture source drawn with ideal grids');
    const layout = buildLayout(drawable.model, 40);
    const buffer = new Float32Array(12 * MAX_EQUIPOTENTIAL_SEGMENTS);
    const n = fillEquipotentials(model, layout, buffer);
    expect(n).toBeGreaterThan(100);
    // Source lines start at the repeller face (x = 0) and stay within the solved region.
    for (let v = 0; v < n; v++) {
      expect(buffer[3 * v]).toBeGreaterThan(-3);
      expect(buffer[3 * v]).toBeLessThan(40);
    }
  });
});
