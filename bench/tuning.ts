/**
 * Tuning figures on the shipped linear delayed-extraction demo, with the CLI's worker-thread pool
 * (one thread per core):
 * - scan_points_per_s: a 64-point scan of the extraction delay at 2·10^4 ions per point, timed after
 *   the pool has started and warmed up (thread start-up is not included);
 * - tune_s: wall time of an auto-tune of the delay and the repeller's extraction potential for the
 *   resolving power of the preset's m/z 1336.7 species, on the same warm pool.
 */
import { readFileSync } from 'node:fs';
import { createThreadPoolClient, defaultThreadCount } from '../src/cli/threadPool';
import { parsePresetText } from '../src/presets/load';

export interface TuningFigures {
  scan_points_per_s: number;
  tune_s: number;
  tune_evaluations: number;
  tuning_pool_threads: number;
}

export const SCAN_POINTS = 64;
export const SCAN_IONS = 20_000;

export async function runTuningBench(threads = defaultThreadCount()): Promise<TuningFigures> {
  const loaded = parsePresetText(readFileSync(new URL('../presets/demo-linear-delayed.json', import.meta.url), 'utf8'));
  if (!loaded.ok) throw new Error('demo-linear-delayed.json is invalid: ' + JSON.stringify(loaded.issues));
  const preset = loaded.value;
  const delay = 'source.extraction.delay_ns';
  const client = createThreadPoolClient(threads);
  try {
    // Warm-up: start every thread and let the JIT optimise the kernels.
    await client.scan({ preset, axes: [{ path: delay, from: 100, to: 300, steps: 4 * threads }], ions: SCAN_IONS });

    const t0 = performance.now();
    const scan = await client.scan({ preset, axes: [{ path: delay, from: 60, to: 320, steps: SCAN_POINTS }], ions: SCAN_IONS });
    const scanSeconds = (performance.now() - t0) / 1000;
    if (scan.points.length !== SCAN_POINTS) throw new Error('scan returned the wrong number of points');

    const t1 = performance.now();
    const tune = await client.optimise({
      preset,
      parameters: [
        { path: delay, min: 0, max: 400 },
        { path: 'source.repeller.potential_V', min: 19_000, max: 22_000 },
      ],
      objective: { name: 'max-r-at-mz', targetMz: 1336.7008 },
    });
    const tuneSeconds = (performance.now() - t1) / 1000;
    return {
      scan_points_per_s: Math.round((SCAN_POINTS / scanSeconds) * 10) / 10,
      tune_s: Math.round(tuneSeconds * 1000) / 1000,
      tune_evaluations: tune.evaluations,
      tuning_pool_threads: threads,
    };
  } finally {
    client.dispose();
  }
}
