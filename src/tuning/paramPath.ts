/**
 * Numeric preset parameters addressed by their dotted path, e.g. `source.extraction.delay_ns` or
 * `ions.species[0].mz`. Reading and writing walk own properties only, so a path can never reach
 * a prototype; writing works on a copy and the copy is validated again before it is used.
 */
import { validatePreset } from '../presets/load';
import type { PresetResult } from '../presets/issues';
import type { Preset } from '../presets/schema';

export type PathKey = string | number;

const SEGMENT = /^([A-Za-z_][A-Za-z0-9_]*)((?:\[\d+\])*)$/;
const FORBIDDEN = new Set(['__proto__', 'prototype', 'constructor']);

/** Split `a.b[2].c` into ['a', 'b', 2, 'c']; null when the text is not a well-formed path. */
export function parsePath(path: string): PathKey[] | null {
  if (path.length === 0 || path.length > 300) return null;
  const keys: PathKey[] = [];
  for (const part of path.split('.')) {
    const m = SEGMENT.exec(part);
    if (!m || FORBIDDEN.has(m[1])) return null;
    keys.push(m[1]);
    for (const idx of m[2].matchAll(/\[(\d+)\]/g)) keys.push(Number(idx[1]));
  }
  return keys;
}

export type NumberLookup = { readonly ok: true; readonly value: number } | { readonly ok: false; readonly reason: string };

function describe(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return `a list of ${value.length} entries (add an index such as [0])`;
  if (typeof value === 'object') return `a section with keys ${Object.keys(value as object).join(', ')}`;
  return `a ${typeof value} (${JSON.stringify(value)})`;
}

/** The number at `path` in `doc`, or why there is none. */
export function numberAt(doc: unknown, path: string): NumberLookup {
  const keys = parsePath(path);
  if (!keys) return { ok: false, reason: 'is not a parameter path (expected names joined by dots, with [n] for a list entry, e.g. source.extraction.delay_ns)' };
  let node: unknown = doc;
  let walked = '';
  for (const key of keys) {
    const here = walked || 'the preset';
    if (typeof key === 'number') {
      if (!Array.isArray(node)) return { ok: false, reason: `does not exist in the preset: ${here} is not a list` };
      if (key >= node.length) return { ok: false, reason: `does not exist in the preset: ${here} has ${node.length} entries (indices 0..${node.length - 1})` };
      node = node[key];
      walked += `[${key}]`;
    } else {
      if (typeof node !== 'object' || node === null || Array.isArray(node) || !Object.hasOwn(node, key)) {
        const known = typeof node === 'object' && node !== null && !Array.isArray(node) ? ` (keys there: ${Object.keys(node).join(', ')})` : '';
        return { ok: false, reason: `does not exist in the preset: no "${key}" in ${here}${known}` };
      }
      node = (node as Record<string, unknown>)[key];
      walked += walked ? `.${key}` : key;
    }
  }
  if (typeof node !== 'number') return { ok: false, reason: `is not a numeric parameter: it is ${describe(node)}` };
  return { ok: true, value: node };
}

/** Write `value` at an existing numeric `path` of a plain JSON document (in place). */
function setNumber(doc: unknown, keys: readonly PathKey[], value: number): void {
  let node = doc as Record<PathKey, unknown>;
  for (let i = 0; i < keys.length - 1; i++) node = node[keys[i]] as Record<PathKey, unknown>;
  node[keys[keys.length - 1]] = value;
}

/** A deep copy of plain JSON data (presets hold nothing else). */
export function cloneJson<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}

/**
 * A copy of `doc` with `values[i]` written at `paths[i]`, validated like a loaded file.
 * The paths must already have been checked with `numberAt`.
 */
export function withValues(doc: unknown, paths: readonly string[], values: readonly number[]): PresetResult<Preset> {
  const copy = cloneJson(doc);
  for (let i = 0; i < paths.length; i++) {
    const keys = parsePath(paths[i]);
    if (!keys) throw new Error(`unchecked parameter path ${paths[i]}`);
    setNumber(copy, keys, values[i]);
  }
  return validatePreset(copy);
}

/** Every numeric parameter path of a preset, in document order (for pickers and messages). */
export function numericPaths(doc: unknown): string[] {
  const out: string[] = [];
  const walk = (node: unknown, prefix: string): void => {
    if (typeof node === 'number') out.push(prefix);
    else if (Array.isArray(node)) node.forEach((item, i) => walk(item, `${prefix}[${i}]`));
    else if (typeof node === 'object' && node !== null) {
      for (const [key, value] of Object.entries(node)) walk(value, prefix ? `${prefix}.${key}` : key);
    }
  };
  walk(doc, '');
  return out;
}
