import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { MAX_IMPORT_BYTES, presetFileName, presetToJson, readPresetFile } from '../../src/ui/io/presetFile';
import { DEMO_FILES, demoPreset, demoText } from './helpers';

const file = (text: string): Blob => new Blob([text], { type: 'application/json' });

describe('setup files: export and import', () => {
  for (const name of DEMO_FILES) {
    it(`${name}: export → import gives the same preset and the same text`, async () => {
      const preset = demoPreset(name);
      const text = presetToJson(preset);
      const back = await readPresetFile(file(text));
      expect(back.ok).toBe(true);
      if (!back.ok) return;
      expect(back.value).toEqual(preset);
      expect(presetToJson(back.value)).toBe(text);
    });
  }

  it('refuses a file above the size cap before reading it', async () => {
    const big = file(' '.repeat(MAX_IMPORT_BYTES + 1));
    const result = await readPresetFile(big);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues[0].message).toMatch(/largest accepted/);
  });

  it('refuses empty files, bad JSON, unknown keys and prototype keys with the JSON path', async () => {
    const cases: [string, RegExp][] = [
      ['', /empty/],
      ['{ "formatVersion": 1, ', /not valid JSON/],
      ['[1, 2]', /JSON object/],
    ];
    for (const [text, message] of cases) {
      const r = await readPresetFile(file(text));
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.issues.map((i) => i.message).join(' ')).toMatch(message);
    }
    const doc = JSON.parse(demoText('demo-linear-delayed'));
    doc.drift.colour = 'blue';
    const unknown = await readPresetFile(file(JSON.stringify(doc)));
    expect(unknown.ok).toBe(false);
    if (!unknown.ok) expect(unknown.issues).toContainEqual({ path: 'drift', message: 'unknown key "colour"' });
    const polluted = demoText('demo-linear-delayed').replace('"polarity"', '"__proto__": { "polluted": true }, "polarity"');
    const proto = await readPresetFile(file(polluted));
    expect(proto.ok).toBe(false);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });

  it('reports range problems at their path', async () => {
    const doc = JSON.parse(demoText('demo-reflectron-dual'));
    doc.mirror.backPlate_V = 90_000;
    const r = await readPresetFile(file(JSON.stringify(doc)));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues[0].path).toBe('mirror.backPlate_V');
  });

  it('names files after the setup', () => {
    const preset = { ...demoPreset('demo-linear-delayed'), name: 'Peptides: linear / 140 ns (v2)' };
    expect(presetFileName(preset)).toBe('peptides-linear-140-ns-v2.json');
    expect(presetFileName({ ...preset, name: '***' })).toBe('setup.json');
    expect(parsePresetText(presetToJson(preset)).ok).toBe(true);
  });
});
