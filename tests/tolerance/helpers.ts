/** Presets built for the tolerance tests (geometry invented for the tests) and an in-process pool. */
import { validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { inProcessPool } from '../../src/tuning/pool';
import { engineTasks } from '../../src/tuning/tasks';
import { toleranceWith, type ToleranceRequest, type ToleranceResult } from '../../src/tolerance/analysis';

export function valid(doc: unknown): Preset {
  const r = validatePreset(doc);
  if (!r.ok) throw new Error('test preset invalid: ' + JSON.stringify(r.issues));
  return r.value;
}

/**
 * A drift-dominated linear instrument: a single-stage static source (5 mm, 20 kV), ions at rest on
 * the repeller, a 4 m field-free drift. The source takes 2·d/v of the flight, 0.25 % of the total.
 */
export function driftDominated(extra: Record<string, unknown> = {}): Preset {
  return valid({
    formatVersion: 1,
    name: 'test: drift-dominated linear',
    polarity: 'positive',
    source: { repeller: { potential_V: 20000 }, groundGrid: { gap_mm: 5 }, extraction: { mode: 'static' } },
    drift: { length_mm: 4000 },
    mirror: { type: 'none' },
    ions: {
      species: [
        { mz: 500, charge: 1 },
        { mz: 2000, charge: 1 },
      ],
      startPosition: { kind: 'surface', position_mm: 0 },
      startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 },
    },
    run: { ions: 200, seed: 3 },
    ...extra,
  });
}

export function runTolerance(request: ToleranceRequest, lanes = 1): Promise<ToleranceResult> {
  return toleranceWith(inProcessPool(engineTasks, lanes), request);
}
