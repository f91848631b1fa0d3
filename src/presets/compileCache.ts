/**
 * The last few compiled presets, when keepCompiledPresets turned it on (the engine worker does).
 * A run split over workers compiles the same preset in each of its steps on each worker (fit the
 * mirror map, trace a chunk, finish, extras); through a solved mirror each compile superposes the
 * unit fields and solves the spline coefficients again (~10 ms). A compiled preset is read-only to
 * every caller (its types are readonly throughout; runs keep their own state in tracers and
 * mappers, and tests/presets/compileCache.test.ts checks a run leaves it as compiled), so handing
 * out the same one gives the same numbers. Keyed by the preset's JSON, numbers written exactly; a
 * preset written with its keys in another order only misses.
 */
import { compilePreset, type CompiledPreset } from './compile';
import type { Preset } from './schema';
import { KeptResults } from '../keptResults';

const kept = new KeptResults<CompiledPreset>();

/** Keep the last `entries` compiled presets for reuse (0 turns it off and forgets them). */
export function keepCompiledPresets(entries: number): void {
  kept.keep(entries);
}

/** compilePreset, or the kept result of an equal preset (a preset that fails to compile is never kept). */
export function compilePresetKept(preset: Preset): CompiledPreset {
  return kept.get(preset, compilePreset);
}
