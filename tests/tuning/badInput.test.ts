/** Bad input to scans and tunes: a clear error naming the argument, before any work starts. */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import type { ScanRequest, TuneRequest } from '../../src/tuning/api';
import { TuningInputError } from '../../src/tuning/errors';
import { numberAt, numericPaths, parsePath, withValues } from '../../src/tuning/paramPath';
import { checkScanRequest } from '../../src/tuning/scan';
import { axisValues, pointValues, resolveAxes, shardIndices } from '../../src/tuning/scanPlan';
import { checkTuneRequest } from '../../src/tuning/tune';

const loaded = parsePresetText(readFileSync(new URL('../../presets/demo-linear-delayed.json', import.meta.url), 'utf8'));
if (!loaded.ok) throw new Error('demo preset invalid');
const preset = loaded.value;

function errorOf(fn: () => unknown): TuningInputError {
  try {
    fn();
  } catch (err) {
    if (err instanceof TuningInputError) return err;
    throw err;
  }
  throw new Error('expected a TuningInputError');
}

const scan = (axes: ScanRequest['axes'], extra: Partial<ScanRequest> = {}) => () => checkScanRequest({ preset, axes, ...extra });
const tune = (extra: Partial<TuneRequest>) => () =>
  checkTuneRequest({ preset, parameters: [{ path: 'source.extraction.delay_ns', min: 0, max: 400 }], objective: { name: 'max-r-at-mz', targetMz: 1336.7008 }, ...extra });

describe('parameter paths', () => {
  it('parse names and list indices, and refuse anything that could reach a prototype', () => {
    expect(parsePath('ions.species[2].mz')).toEqual(['ions', 'species', 2, 'mz']);
    expect(parsePath('a..b')).toBeNull();
    expect(parsePath('source.__proto__.x')).toBeNull();
    expect(parsePath('constructor')).toBeNull();
    expect(parsePath('a[-1]')).toBeNull();
  });
  it('read numbers and say why a path has none', () => {
    expect(numberAt(preset, 'source.extraction.delay_ns')).toEqual({ ok: true, value: preset.source.extraction.mode === 'delayed' ? preset.source.extraction.delay_ns : NaN });
    const mz1 = numberAt(preset, 'ions.species[1].mz');
    expect(mz1.ok && mz1.value).toBeCloseTo(1336.7008, 4);
    const missing = numberAt(preset, 'mirror.backPlate_V');
    expect(missing.ok ? '' : missing.reason).toMatch(/does not exist in the preset: no "backPlate_V" in mirror \(keys there: type\)/);
    const section = numberAt(preset, 'source.repeller');
    expect(section.ok ? '' : section.reason).toMatch(/is not a numeric parameter: it is a section with keys potential_V, hold_V/);
    const list = numberAt(preset, 'ions.species');
    expect(list.ok ? '' : list.reason).toMatch(/a list of 4 entries/);
    expect(numericPaths(preset)).toContain('ions.species[3].abundance');
  });
  it('write a copy and validate it (the original is untouched)', () => {
    const r = withValues(preset, ['source.extraction.delay_ns', 'ions.species[0].abundance'], [200, 3]);
    expect(r.ok ? [] : r.issues).toEqual([]);
    if (r.ok && r.value.source.extraction.mode === 'delayed') expect(r.value.source.extraction.delay_ns).toBe(200);
    if (r.ok) expect(r.value.ions.species[0].abundance).toBe(3);
    expect(preset.ions.species[0].abundance).toBe(1);
  });
});

describe('scan points', () => {
  it('steps count points with both ends included; the first axis varies slowest; shards interleave', () => {
    expect(axisValues({ path: 'x', from: 0, to: 1, steps: 5 }, 'a')).toEqual([0, 0.25, 0.5, 0.75, 1]);
    const axes = resolveAxes(preset, [
      { path: 'source.extraction.delay_ns', from: 100, to: 200, steps: 3 },
      { path: 'ions.species[0].abundance', values: [1, 2] },
    ]);
    expect([0, 1, 2, 5].map((i) => pointValues(axes, i))).toEqual([[100, 1], [100, 2], [150, 1], [200, 2]]);
    expect(shardIndices(7, { index: 1, count: 3 })).toEqual([1, 4]);
    const all = [0, 1, 2].flatMap((index) => shardIndices(7, { index, count: 3 })).sort((a, b) => a - b);
    expect(all).toEqual([0, 1, 2, 3, 4, 5, 6]);
  });
});

describe('bad scan input names the argument', () => {
  it('a path that does not exist, or is not numeric', () => {
    expect(errorOf(scan([{ path: 'source.extraction.delay', from: 0, to: 1, steps: 2 }])).message).toBe(
      'axes[0]: source.extraction.delay does not exist in the preset: no "delay" in source.extraction (keys there: mode, delay_ns)',
    );
    expect(errorOf(scan([{ path: 'name', from: 0, to: 1, steps: 2 }])).argument).toBe('axes[0]');
    expect(errorOf(scan([{ path: 'polarity', values: [1] }])).message).toMatch(/polarity is not a numeric parameter/);
    expect(errorOf(scan([{ path: 'ions.species[9].mz', values: [1] }])).message).toMatch(/has 4 entries/);
  });
  it('a range outside the validated limits, reported with the preset rule', () => {
    const err = errorOf(scan([{ path: 'source.extraction.delay_ns', from: -5, to: 100, steps: 3 }]));
    expect(err.message).toBe('axes[0]: source.extraction.delay_ns = -5 is outside the allowed settings: source.extraction.delay_ns: must be a number ≥ 0 and ≤ 1000000 ns');
    expect(errorOf(scan([{ path: 'run.ions', values: [10, 0.5] }])).message).toMatch(/run\.ions = 0\.5 is outside the allowed settings: run\.ions: must be an integer/);
    // A cross-field rule: the start position must lie inside the first stage.
    expect(errorOf(scan([{ path: 'ions.startPosition.position_mm', from: 0, to: 5, steps: 2 }])).message).toMatch(/must lie inside the first source stage/);
  });
  it('zero steps, and a range with one step', () => {
    expect(errorOf(scan([{ path: 'source.extraction.delay_ns', from: 0, to: 100, steps: 0 }])).message).toBe('axes[0]: steps must be a whole number of points ≥ 1 (got 0)');
    expect(errorOf(scan([{ path: 'source.extraction.delay_ns', from: 0, to: 100, steps: 1 }])).message).toMatch(/from and to must be equal/);
    expect(errorOf(scan([{ path: 'source.extraction.delay_ns', values: [] }])).message).toMatch(/list of values is empty/);
  });
  it('an objective that needs a target without one, or a target that matches nothing', () => {
    const axes = [{ path: 'source.extraction.delay_ns', values: [100] }];
    expect(errorOf(scan(axes, { objective: { name: 'max-r-at-mz' } })).message).toMatch(/^objective\.targetMz: is required by the objective max-r-at-mz/);
    expect(errorOf(scan(axes, { objective: { name: 'min-fwhm' } })).argument).toBe('objective.targetMz');
    expect(errorOf(scan(axes, { objective: { name: 'max-min-r-over-range' } })).message).toMatch(/^objective\.range: is required/);
    expect(errorOf(scan(axes, { objective: { name: 'max-min-r-over-range', range: [3000, 4000] } })).message).toMatch(/holds no species/);
    expect(errorOf(scan(axes, { objective: { name: 'max-r-at-mz', targetMz: 1500 } })).message).toMatch(/matches no species of the preset within ±0\.5 Th/);
  });
  it('shards, ions, seed and axis counts', () => {
    const axes = [{ path: 'source.extraction.delay_ns', values: [100] }];
    expect(errorOf(scan(axes, { shard: { index: 3, count: 3 } })).argument).toBe('shard');
    expect(errorOf(scan(axes, { ions: 0 })).argument).toBe('ions');
    expect(errorOf(scan(axes, { seed: -1 })).argument).toBe('seed');
    expect(errorOf(scan([])).argument).toBe('axes');
    expect(errorOf(scan([...axes, { path: 'drift.length_mm', values: [1] }, { path: 'drift.potential_V', values: [0] }])).argument).toBe('axes[2]');
    expect(errorOf(scan([axes[0], axes[0]])).message).toMatch(/same parameter/);
  });
});

describe('bad tune input names the argument', () => {
  it('paths, bounds and their limits', () => {
    expect(errorOf(tune({ parameters: [{ path: 'mirror.depth_mm', min: 1, max: 2 }] })).message).toMatch(/^parameters\[0\]: mirror\.depth_mm does not exist/);
    expect(errorOf(tune({ parameters: [{ path: 'source.extraction.delay_ns', min: 5, max: 5 }] })).message).toMatch(/min < max/);
    expect(errorOf(tune({ parameters: [{ path: 'source.extraction.delay_ns', min: -1, max: 5 }] })).message).toMatch(/delay_ns = -1 is outside the allowed settings/);
    expect(errorOf(tune({ parameters: [] })).argument).toBe('parameters[0]');
    const twice = { path: 'drift.length_mm', min: 100, max: 2000 };
    expect(errorOf(tune({ parameters: [twice, twice] })).message).toMatch(/listed twice/);
  });
  it('objective targets, constraints and options', () => {
    expect(errorOf(tune({ objective: { name: 'max-r-at-mz' } })).argument).toBe('objective.targetMz');
    expect(errorOf(tune({ objective: { name: 'max-min-r-over-range', range: [2000, 1000] } })).argument).toBe('objective.range');
    expect(errorOf(tune({ minTransmission: 1.5 })).argument).toBe('minTransmission');
    expect(errorOf(tune({ measure: 'median' as never })).argument).toBe('measure');
    expect(errorOf(tune({ restarts: -1 })).argument).toBe('restarts');
    expect(errorOf(tune({ objective: { name: 'best' as never } })).message).toMatch(/unknown objective "best"/);
  });
});

describe('2-D scans check every corner of the grid', () => {
  it('a combination of two allowed values that breaks a cross-field rule names both axes', () => {
    // Start position 2.5 mm is allowed with the 3 mm first gap, not with a 2 mm one.
    const err = errorOf(
      scan([
        { path: 'ions.startPosition.position_mm', values: [0, 2.5] },
        { path: 'source.extractionGrid.gap_mm', from: 2, to: 4, steps: 3 },
      ]),
    );
    expect(err.argument).toBe('axes[0] × axes[1]');
    expect(err.message).toMatch(/ions\.startPosition\.position_mm = 2\.5, source\.extractionGrid\.gap_mm = 2 is outside the allowed settings: .*must lie inside the first source stage/);
  });
});
