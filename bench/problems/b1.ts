/**
 * Benchmark problem B1 (static two-stage source, drift, single-stage mirror), written exactly as the
 * shared benchmark definition gives it: repeller 20 000 V at z = 0, extraction grid 17 000 V at 3 mm,
 * ground grid 0 V at 13 mm, 1.000 m to the mirror entrance grid, single uniform retarding stage of
 * 100 mm to a 21 500 V back plate, 0.800 m back to the detector; m/z 1000, z = +1; start position
 * uniform in [1.0, 1.5] mm; axial velocity normal, mean +400 m/s, sd 150 m/s, negatives allowed.
 */
import type { PresetInput } from '../../src/presets/schema';

export const B1_IONS = 1_000_000;
export const B1_SEED = 20_261_202;

export const b1Preset: PresetInput = {
  formatVersion: 1,
  name: 'Benchmark B1',
  description: 'Benchmark problem B1: static two-stage source, 1.000 m drift, single-stage mirror, 0.800 m return.',
  polarity: 'positive',
  source: {
    repeller: { potential_V: 20_000 },
    extractionGrid: { gap_mm: 3, potential_V: 17_000 },
    groundGrid: { gap_mm: 10 },
    extraction: { mode: 'static' },
  },
  drift: { length_mm: 1000, potential_V: 0 },
  mirror: { type: 'single', depth_mm: 100, backPlate_V: 21_500, returnLength_mm: 800 },
  detector: {},
  ions: {
    species: [{ label: 'm/z 1000', mz: 1000, charge: 1, abundance: 1 }],
    startPosition: { kind: 'uniform', from_mm: 1.0, to_mm: 1.5 },
    startVelocity: { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 150 },
  },
  run: { ions: B1_IONS, seed: B1_SEED },
};

/** The reference ion of B1: starts at z0 = 1.5 mm from the repeller at rest. */
export const B1_REFERENCE = { z0_m: 1.5e-3, v0_m_per_s: 0 } as const;
