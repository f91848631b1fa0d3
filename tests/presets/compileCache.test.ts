/**
 * The engine worker keeps the last few compiled presets (keepCompiledPresets) and hands the same
 * compiled model to every step of the next run with an equal preset. That is only right if no run
 * changes the model it was given: every shipped demo is run with the cache on, and afterwards its
 * compiled model must still equal a fresh compile (every number and typed array, bit for bit), a
 * second run (served from the cache) must give the first run's numbers, and a changed preset must
 * miss. The split run's steps (fit the mirror map, trace chunks, finish) through the solved
 * mirror are checked the same way. Common practice for a memoising cache, no source.
 */
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { afterEach, describe, expect, it } from 'vitest';
import { compilePreset } from '../../src/presets/compile';
import { compilePresetKept, keepCompiledPresets } from '../../src/presets/compileCache';
import { validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';
import { concatChunks, fitRunMap, mapShare, mergeMapFits, overlayFitted, traceRunChunk } from '../../src/simulation/runChunks';
import { runRequest } from '../../src/simulation/runOutput';

const IONS = 400;
const demos = readdirSync(new URL('../../presets/', import.meta.url)).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));

function load(file: string): Preset {
  const checked = validatePreset(JSON.parse(readFileSync(new URL(`../../presets/${file}`, import.meta.url), 'utf8')));
  if (!checked.ok) throw new Error(`${file}: ${JSON.stringify(checked.issues)}`);
  return checked.value;
}

const bytes = (a: ArrayBufferView): Buffer => Buffer.from(a.buffer, a.byteOffset, a.byteLength);

/** sha256 over every number, string, flag and typed array reachable from `value` (functions by their source). */
function digest(value: unknown): string {
  const hash = createHash('sha256');
  const seen = new Set<unknown>();
  const walk = (v: unknown, path: string): void => {
    hash.update(path);
    if (ArrayBuffer.isView(v)) hash.update(`${v.constructor.name}:`).update(bytes(v));
    else if (typeof v === 'number') hash.update(`n${String(v)}`);
    else if (typeof v === 'function') hash.update(`f${v.toString()}`);
    else if (v === null || typeof v !== 'object') hash.update(`${typeof v}:${String(v)}`);
    else {
      if (seen.has(v)) return void hash.update('seen');
      seen.add(v);
      for (const key of Object.keys(v).sort()) walk((v as Record<string, unknown>)[key], `${path}.${key}`);
    }
  };
  walk(value, '');
  return hash.digest('hex');
}

afterEach(() => keepCompiledPresets(0));

describe('kept compiled presets', () => {
  it('hands out the same compiled preset for an equal preset and compiles anew for a changed one', () => {
    const preset = load('demo-gridless-mirror.json');
    keepCompiledPresets(2);
    const a = compilePresetKept(preset);
    expect(compilePresetKept(structuredClone(preset))).toBe(a);
    const m = preset.mirror;
    if (m.type !== 'solved') throw new Error('the gridless demo has a solved mirror');
    const changed = { ...preset, mirror: { ...m, backPlate: { ...m.backPlate, potential_V: m.backPlate.potential_V + 1 } } };
    const b = compilePresetKept(changed);
    expect(b).not.toBe(a);
    expect(digest(b.model)).not.toBe(digest(a.model));
    expect(compilePresetKept({ ...preset, run: { ...preset.run, seed: preset.run.seed + 1 } })).not.toBe(a);
    keepCompiledPresets(0);
    const fresh = compilePresetKept(preset);
    expect(fresh).not.toBe(a);
    expect(digest(fresh)).toBe(digest(a));
  });

  it.each(demos)('%s: a run leaves its compiled preset as compiled, and a run from the kept one gives the same numbers', (file) => {
    const preset = load(file);
    keepCompiledPresets(4);
    const kept = compilePresetKept(preset);
    const first = simulate(preset, { ions: IONS, withSpectrum: true });
    const second = simulate(preset, { ions: IONS, withSpectrum: true });
    expect(second.compiled.model).toBe(kept.model); // served from the cache
    expect(digest(kept)).toBe(digest(compilePreset(preset)));
    expect(bytes(second.trace.flightTime_s).equals(bytes(first.trace.flightTime_s))).toBe(true);
    expect(bytes(second.trace.fate).equals(bytes(first.trace.fate))).toBe(true);
    expect(JSON.stringify(second.report)).toBe(JSON.stringify(first.report));
  }, 120_000);

  it('a split run through the solved mirror gives the same numbers from kept compiled presets as from fresh ones', () => {
    const preset = load('demo-gridless-mirror.json');
    const request = { preset, ions: 3000 };
    const split = () => {
      const fits = [fitRunMap(request, 0, 2), fitRunMap(request, 1, 2)];
      if (fits[0] === null || fits[1] === null) throw new Error('the gridless demo at 3000 ions crosses its mirror by the transfer map');
      const fit = mergeMapFits([fits[0], fits[1]]);
      const chunks = [traceRunChunk(request, 0, 1500, mapShare(fit)), traceRunChunk(request, 1500, 3000, mapShare(fit))];
      const trace = concatChunks(3000, chunks);
      overlayFitted(trace, fit.fitted);
      return runRequest(request, undefined, trace);
    };
    const fresh = split();
    keepCompiledPresets(4);
    const kept = compilePresetKept(preset);
    const fromKept = split();
    expect(compilePresetKept(preset)).toBe(kept);
    expect(digest(kept)).toBe(digest(compilePreset(preset)));
    expect(bytes(fromKept.flightTime_s).equals(bytes(fresh.flightTime_s))).toBe(true);
    expect(bytes(fromKept.fate).equals(bytes(fresh.fate))).toBe(true);
    expect(JSON.stringify(fromKept.report)).toBe(JSON.stringify(fresh.report));
  }, 120_000);
});
