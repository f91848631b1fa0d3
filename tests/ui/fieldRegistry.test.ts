import { describe, expect, it } from 'vitest';
import { FIELDS, numberAt, type NumberField } from '../../src/ui/panel/fields';
import { panelFields, registerFields } from '../../src/ui/panel/fieldRegistry';
import { LIMITS } from '../../src/presets/schema';
import { presetPath } from '../../src/presets/presetPaths';
import { demoPreset } from './helpers';

describe('panel controls registered from another module', () => {
  it('a registered group shows after the fixed controls; a key already used is refused', () => {
    const extra = numberAt('test_offset_ns', 'detector', 'time offset (ns)', 'acquisition.timeOffset_ns', LIMITS.timeOffset_ns, 0.1);
    registerFields([extra]);
    const all = panelFields();
    expect(all.slice(0, FIELDS.length)).toEqual(FIELDS);
    expect(all[all.length - 1]).toBe(extra);
    expect(() => registerFields([{ ...extra }])).toThrow(/test_offset_ns/);
    expect(() => registerFields([{ ...extra, key: 'drift_mm' }])).toThrow(/drift_mm/);
    // It reads and writes the preset like a fixed control.
    const doc = JSON.parse(JSON.stringify(demoPreset('demo-linear-delayed')));
    (extra as NumberField).set(doc, 12.5);
    expect(doc.acquisition.timeOffset_ns).toBe(12.5);
  });

  it('paths are checked against the preset schema at compile time', () => {
    expect(presetPath('source.extraction.delay_ns')).toBe('source.extraction.delay_ns');
    // @ts-expect-error: no such path in the preset schema (tsc fails if this ever type-checks)
    presetPath('source.extraction.delay_n');
    // @ts-expect-error: a control on a misspelt path does not compile
    numberAt('typo', 'drift', 'drift (mm)', 'drift.lenght_mm', LIMITS.driftLength_mm, 1);
    expect(FIELDS.every((f) => typeof f.path === 'string' && f.path.length > 0)).toBe(true);
  });
});
