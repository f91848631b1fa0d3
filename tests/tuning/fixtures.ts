/** Preset builders and an in-process engine for the tuning tests. */
import { validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { runRequest } from '../../src/simulation/runOutput';
import type { EngineApi } from '../../src/tuning/api';
import { inProcessPool } from '../../src/tuning/pool';
import { createEngineService } from '../../src/tuning/service';
import { engineTasks } from '../../src/tuning/tasks';

export function valid(doc: unknown): Preset {
  const r = validatePreset(doc);
  if (!r.ok) throw new Error('test preset invalid: ' + JSON.stringify(r.issues));
  return r.value;
}

export function inProcessEngine(size = 1): EngineApi {
  return createEngineService(inProcessPool(engineTasks, size), (request) => runRequest(request));
}

export interface SpeciesSpec {
  mz: number;
  charge?: number;
}

const species = (list: SpeciesSpec[]) => list.map((s) => ({ mz: s.mz, charge: s.charge ?? 1, abundance: 1 }));

/** A linear instrument with a static two-stage source. */
export function staticTwoStage(o: { repeller_V: number; grid_V: number; gap1_mm: number; gap2_mm: number; drift_mm: number; start: unknown; velocity: unknown; mz: SpeciesSpec[]; ions: number }): Preset {
  return valid({
    formatVersion: 1,
    name: 'test: static two-stage source',
    polarity: 'positive',
    source: {
      repeller: { potential_V: o.repeller_V },
      extractionGrid: { gap_mm: o.gap1_mm, potential_V: o.grid_V },
      groundGrid: { gap_mm: o.gap2_mm },
      extraction: { mode: 'static' },
    },
    drift: { length_mm: o.drift_mm },
    mirror: { type: 'none' },
    ions: { species: species(o.mz), startPosition: o.start, startVelocity: o.velocity },
    run: { ions: o.ions, seed: 7 },
  });
}

/**
 * A reflectron fed by a field-free source: the ions start 0.1 µm before the ground grid with their
 * whole energy as initial kinetic energy, so their time in the source is ~1e-12 s and independent of
 * energy to ~1e-15 s; the mirror alone shapes the peak.
 */
export function mirrorOnly(o: { mirror: unknown; drift_mm: number; energy: { mean_eV: number; sd_eV: number }; mz: SpeciesSpec[]; ions: number }): Preset {
  return valid({
    formatVersion: 1,
    name: 'test: gridded mirror',
    polarity: 'positive',
    source: {
      repeller: { potential_V: 0 },
      groundGrid: { gap_mm: 0.011 },
      extraction: { mode: 'static' },
    },
    drift: { length_mm: o.drift_mm },
    mirror: o.mirror,
    ions: {
      species: species(o.mz),
      startPosition: { kind: 'surface', position_mm: 0.0109 },
      startVelocity: { kind: 'energy', mean_eV: o.energy.mean_eV, sd_eV: o.energy.sd_eV },
    },
    run: { ions: o.ions, seed: 11 },
  });
}

/** The shipped demos' delayed-extraction source (two stages, field-free delay) in linear mode. */
export function delayedLinear(o: { delay_ns: number; velocity: unknown; mz: SpeciesSpec[]; ions: number }): Preset {
  return valid({
    formatVersion: 1,
    name: 'test: delayed extraction',
    polarity: 'positive',
    source: {
      repeller: { potential_V: 20000, hold_V: 18800 },
      extractionGrid: { gap_mm: 3, potential_V: 18800 },
      groundGrid: { gap_mm: 10 },
      extraction: { mode: 'delayed', delay_ns: o.delay_ns },
    },
    drift: { length_mm: 1200 },
    mirror: { type: 'none' },
    ions: { species: species(o.mz), startPosition: { kind: 'surface', position_mm: 0 }, startVelocity: o.velocity },
    run: { ions: o.ions, seed: 5 },
  });
}
