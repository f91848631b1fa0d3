/** Transverse motion, detector active area and grid transmission (ideal grids). */
import { describe, expect, it } from 'vitest';
import { allocateEnsemble, allocateTraceResult } from '../../src/ions/ensemble';
import { applyDetectorPlane, traceExact } from '../../src/physics/exactEngine';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../src/physics/constants';
import { Fate } from '../../src/physics/fates';
import { buildModel } from '../helpers';

function traceWithTransverse(model: ReturnType<typeof buildModel>, x0: number, vx: number) {
  const ens = allocateEnsemble([{ label: 't', mz: 1000, charge: 1, abundance: 1 }], [1]);
  ens.z0_m[0] = 0;
  ens.x0_m[0] = x0;
  ens.vx0_m_per_s[0] = vx;
  const out = allocateTraceResult(1);
  traceExact(model, ens, out);
  applyDetectorPlane(model, ens, out);
  return out;
}

describe('transverse motion through ideal grids', () => {
  it('keeps its transverse velocity: x at the detector = x0 + vx·t', () => {
    const model = buildModel({ repeller_V: 20_000, gap1_m: 5e-3, drift_m: 1 });
    const out = traceWithTransverse(model, 1e-3, 50);
    expect(out.detectorX_m[0]).toBeCloseTo(1e-3 + 50 * out.flightTime_s[0], 15);
  });

  it('an orthogonal-injection beam drifts sideways; an offset detector catches it, a centred one misses', () => {
    // 20 eV beam along x for m/z 1000: v = sqrt(2·20 eV/m).
    const vx = Math.sqrt((2 * 20 * ELEMENTARY_CHARGE_C) / (1000 * ATOMIC_MASS_CONSTANT_KG));
    const centred = { ...buildModel({ repeller_V: 10_000, gap1_m: 5e-3, drift_m: 1 }), detectorAperture: { radius_m: 0.02, centreX_m: 0, centreY_m: 0 } };
    const hit = traceWithTransverse(centred, 0, vx);
    expect(hit.fate[0]).toBe(Fate.MISSED_DETECTOR);
    const drift = vx * hit.flightTime_s[0];
    const offset = { ...centred, detectorAperture: { radius_m: 0.02, centreX_m: drift, centreY_m: 0 } };
    expect(traceWithTransverse(offset, 0, vx).fate[0]).toBe(Fate.DETECTED);
  });

  it('grid transmissions multiply along the path (mirror grids are passed twice)', () => {
    const base = buildModel({
      repeller_V: 20_000,
      grid_V: 17_000,
      gap1_m: 3e-3,
      gap2_m: 1e-2,
      drift_m: 1,
      mirror: { stages: [{ length_m: 0.02, exitPotential_V: 14_000 }, { length_m: 0.1, exitPotential_V: 22_000 }], returnLength_m: 0.8 },
      post: { gap_m: 5e-3, potential_V: -5_000 },
    });
    const model = {
      ...base,
      source: { ...base.source, planeTransmission: [1, 0.9, 0.8] },
      mirror: { ...base.mirror!, entranceGridTransmission: 0.7, innerGridTransmission: [0.6] },
      postAcceleration: { ...base.postAcceleration!, gridTransmission: 0.5 },
    };
    const out = traceWithTransverse(model, 0, 0);
    expect(out.fate[0]).toBe(Fate.DETECTED);
    // Turns in the second mirror stage (20 kV ions, intermediate grid at 14 kV).
    expect(out.weight[0]).toBeCloseTo(0.9 * 0.8 * 0.7 ** 2 * 0.6 ** 2 * 0.5, 14);
  });
});
