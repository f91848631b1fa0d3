/**
 * Tolerance-analysis figures on the shipped dual-stage reflectron demo at 2·10^4 ions, with the
 * CLI's worker-thread pool (one thread per core), timed after the pool has warmed up:
 * - tolerance_sensitivity_s: wall time of every sensitivity (central differences of each slow
 *   parameter, each parameter at its tolerance, the shot-to-shot terms) and the budget;
 * - tolerance_mc_draws_per_s: Monte-Carlo draws per second (each a full rerun and spectrum).
 * The demo has no tolerances section; the bench adds one (invented values, not a real data sheet).
 */
import { readFileSync } from 'node:fs';
import { createThreadPoolClient, defaultThreadCount } from '../src/cli/threadPool';
import { parsePresetText } from '../src/presets/load';

export const TOLERANCE_IONS = 20_000;
export const TOLERANCE_DRAWS = 64;

const INVENTED_TOLERANCES = {
  supplies: { repeller: { drift_ppm: 5, ripple_ppm: 10 }, extractionGrid: { drift_ppm: 5, ripple_ppm: 10 }, mirrorIntermediateGrid: { drift_ppm: 5 }, mirrorBackPlate: { drift_ppm: 5 } },
  timing: { delayOffset_ns: 0.1, delayJitter_ns: 0.2, triggerJitter_ns: 0.1 },
  temperature: { flightTube_K: 0.2, mirror_K: 0.2 },
  positions: { detector_um: 10 },
  detectorTilt_mrad: 0.5,
};

export async function runToleranceBench(threads = defaultThreadCount()): Promise<Record<string, number>> {
  const text = readFileSync(new URL('../presets/demo-reflectron-dual.json', import.meta.url), 'utf8');
  const loaded = parsePresetText(JSON.stringify({ ...JSON.parse(text), tolerances: INVENTED_TOLERANCES }));
  if (!loaded.ok) throw new Error('bench tolerance preset is invalid: ' + JSON.stringify(loaded.issues));
  const preset = loaded.value;
  const client = createThreadPoolClient(threads);
  try {
    await client.tolerance({ preset, ions: 2000, draws: 2 * threads }); // warm-up
    const t0 = performance.now();
    const sens = await client.tolerance({ preset, ions: TOLERANCE_IONS });
    const sensitivitySeconds = (performance.now() - t0) / 1000;
    if (sens.sensitivities.length === 0) throw new Error('no sensitivities');
    // Draws only: the same request minus the sensitivity part's time.
    const t1 = performance.now();
    const mc = await client.tolerance({ preset, ions: TOLERANCE_IONS, draws: TOLERANCE_DRAWS });
    const mcSeconds = (performance.now() - t1) / 1000 - sensitivitySeconds;
    if (mc.monteCarlo?.drawsRun !== TOLERANCE_DRAWS) throw new Error('Monte Carlo returned the wrong number of draws');
    return {
      tolerance_sensitivity_s: Math.round(sensitivitySeconds * 1000) / 1000,
      tolerance_mc_draws_per_s: Math.round((TOLERANCE_DRAWS / Math.max(mcSeconds, 1e-3)) * 10) / 10,
      tolerance_parameters: sens.sensitivities.length,
      tolerance_pool_threads: threads,
    };
  } finally {
    client.dispose();
  }
}
