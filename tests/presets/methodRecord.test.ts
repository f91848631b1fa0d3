/** The method record travels with a preset: export/import keep it, and every digit of the values. */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText, validatePreset } from '../../src/presets/load';
import { withMethodRecord } from '../../src/presets/methodRecord';
import { presetToJson } from '../../src/ui/io/presetFile';
import { TOOL_VERSION } from '../../src/version';

const demo = (): ReturnType<typeof parse> => parse(readFileSync('presets/demo-linear-delayed.json', 'utf8'));
function parse(text: string) {
  const r = parsePresetText(text);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

describe('method record', () => {
  it('the tool version matches package.json', () => {
    expect(TOOL_VERSION).toBe(JSON.parse(readFileSync('package.json', 'utf8')).version);
  });

  it('export and import keep the record and full precision', () => {
    const base = demo();
    const tuned = { ...base, source: { ...base.source, extraction: { mode: 'delayed' as const, delay_ns: 262.2371894561 } } };
    const recorded = withMethodRecord(tuned, {
      kind: 'tune',
      ions: 2000,
      seed: 1,
      objective: 'max-r-at-mz, R (FWHM) at m/z 1336.7008',
      criterion: 'spectrum',
      parameters: [{ path: 'source.extraction.delay_ns', min: 100, max: 400, before: 228, applied: 262.2371894561 }],
      result: 10234.5,
      date: '2026-01-02T03:04:05.000Z',
    });
    const back = parse(presetToJson(recorded));
    expect(back).toEqual(recorded);
    expect(back.source.extraction.mode === 'delayed' && back.source.extraction.delay_ns).toBe(262.2371894561);
    expect(back.method!.records[0]).toMatchObject({ kind: 'tune', toolVersion: TOOL_VERSION, date: '2026-01-02T03:04:05.000Z', seed: 1 });
  });

  it('a damaged record is refused with its path', () => {
    const bad = { ...demo(), method: { records: [{ kind: 'tune', date: 'x', toolVersion: '1', ions: 0, seed: 1, objective: 'o', criterion: 'ideal', parameters: [], result: null }] } };
    const r = validatePreset(bad);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues.map((i) => i.path)).toContain('method.records[0].ions');
  });
});
