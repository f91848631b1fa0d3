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

let kept: { key: string; compiled: CompiledPreset }[] = [];
let keepCount = 0;

/** Keep the last `entries` compiled presets for reuse (0 turns it off and forgets them). */
export function keepCompiledPresets(entries: number): void {
  keepCount = Math.max(0, Math.floor(entries));
  kept = kept.slice(0, keepCount);
}

function presetKey(preset: Preset): string {
  // String(x) is exact for every double (and tells Infinity, -Infinity and NaN apart, which JSON does not).
  return JSON.stringify(preset, (_key, value: unknown) => (typeof value === 'number' ? `n${String(value)}` : value));
}

/** compilePreset, or the kept result of an equal preset (a preset that fails to compile is never kept). */
export function compilePresetKept(preset: Preset): CompiledPreset {
  if (keepCount === 0) return compilePreset(preset);
  const key = presetKey(preset);
  const at = kept.findIndex((e) => e.key === key);
  const entry = at >= 0 ? kept.splice(at, 1)[0] : { key, compiled: compilePreset(preset) };
  kept.unshift(entry);
  kept.length = Math.min(kept.length, keepCount);
  return entry.compiled;
}
