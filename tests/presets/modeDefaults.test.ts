import { describe, expect, it } from 'vitest';
import { compilePreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';
import {
  acquisitionDefaults,
  extractionGridFor,
  extractionGridHoldDefault_V,
  mirrorFor,
  OMITTED_GRID_TRANSMISSION,
  postAccelerationFor,
  repellerHoldDefault_V,
  riseFor,
  startPositionFor,
  startVelocityFor,
  transverseVelocityFor,
} from '../../src/presets/modeDefaults';
import type { Preset } from '../../src/presets/schema';
import { demoPreset } from '../ui/helpers';

type Doc = Record<string, any>;

const draft = (): Doc => JSON.parse(JSON.stringify(demoPreset('demo-linear-delayed')));
function valid(doc: Doc): Preset {
  const checked = validatePreset(doc);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  return checked.value;
}

describe('what an omitted value means (the rules editors show, as compilePreset applies them)', () => {
  it('hold potentials during the delay: the repeller at the next plane, the extraction grid at its own final potential', () => {
    const doc = draft();
    delete doc.source.repeller.hold_V;
    delete doc.source.extractionGrid.hold_V;
    const preset = valid(doc);
    const planes = compilePreset(preset).model.source.planes;
    expect(planes[1].hold_V).toBe(extractionGridHoldDefault_V(preset.source.extractionGrid!.potential_V));
    expect(planes[0].hold_V).toBe(repellerHoldDefault_V(preset.source.extractionGrid!, preset.drift.potential_V));
    // One-stage source: the repeller holds at the drift tube's potential.
    delete doc.source.extractionGrid;
    const single = valid(doc);
    expect(compilePreset(single).model.source.planes[0].hold_V).toBe(repellerHoldDefault_V(null, single.drift.potential_V));
  });

  it('an omitted grid transmission is a fully open grid', () => {
    const doc = draft();
    delete doc.source.extractionGrid.transmission;
    delete doc.source.groundGrid.transmission;
    const t = compilePreset(valid(doc)).model.source.planeTransmission;
    expect(t.slice(1)).toEqual([OMITTED_GRID_TRANSMISSION, OMITTED_GRID_TRANSMISSION]);
  });
});

describe('what a mode switched on starts from', () => {
  it('every default is a valid preset section', () => {
    const scale = { repeller_V: 20_000, driftLength_mm: 1000, driftPotential_V: 0 };
    const gridless = demoPreset('demo-gridless-mirror').mirror;
    for (const type of ['none', 'single', 'dual', 'profile', 'solved'] as const) {
      valid({ ...draft(), mirror: mirrorFor(type, scale, gridless) });
    }
    for (const kind of ['surface', 'uniform', 'gaussian'] as const) valid({ ...draft(), ions: { ...draft().ions, startPosition: startPositionFor(kind, 3) } });
    for (const kind of ['normal', 'energy', 'thermal'] as const) valid({ ...draft(), ions: { ...draft().ions, startVelocity: startVelocityFor(kind) } });
    for (const kind of ['none', 'normal', 'angular', 'thermal'] as const) {
      const d = draft();
      d.ions.transverse = { ...(d.ions.transverse ?? {}), velocity: transverseVelocityFor(kind) };
      valid(d);
    }
    for (const shape of ['linear', 'exponential'] as const) {
      const d = draft();
      d.source.extraction.rise = riseFor(shape);
      valid(d);
    }
    expect(riseFor('step')).toBeUndefined();
    valid({ ...draft(), acquisition: acquisitionDefaults() });
    const d = draft();
    d.detector.postAcceleration = postAccelerationFor('positive');
    valid(d);
    d.source.extractionGrid = { ...d.source.extractionGrid, ...extractionGridFor(20_000) };
    valid(d);
  });

  it('post-acceleration pulls towards the detector for either polarity; mirrors reflect the source energy', () => {
    expect(postAccelerationFor('positive').potential_V).toBeLessThan(0);
    expect(postAccelerationFor('negative').potential_V).toBeGreaterThan(0);
    const single = mirrorFor('single', { repeller_V: 20_000, driftLength_mm: 1000, driftPotential_V: 0 });
    // A uniform single-stage mirror turns ions whose energy per charge is below its back plate (common practice, no source).
    expect(single.type === 'single' && single.backPlate_V).toBeGreaterThan(20_000);
    expect(() => mirrorFor('solved', { repeller_V: 20_000, driftLength_mm: 1000, driftPotential_V: 0 })).toThrow(/template/);
  });
});
