import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { renderPresetJsonSchema } from '../../src/presets/jsonSchema';
import { parsePresetText, validatePreset } from '../../src/presets/load';
import { migratePreset } from '../../src/presets/migrate';

const presetDir = new URL('../../presets/', import.meta.url);
const shipped = readdirSync(presetDir).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));
const demo = () => JSON.parse(readFileSync(new URL('demo-linear-delayed.json', presetDir), 'utf8'));

describe('shipped presets', () => {
  it('there are at least three demo presets: linear delayed extraction, single- and dual-stage reflectron', () => {
    const docs = shipped.map((f) => JSON.parse(readFileSync(new URL(f, presetDir), 'utf8')));
    expect(docs.some((d) => d.mirror.type === 'none' && d.source.extraction.mode === 'delayed')).toBe(true);
    expect(docs.some((d) => d.mirror.type === 'single')).toBe(true);
    expect(docs.some((d) => d.mirror.type === 'dual')).toBe(true);
  });
  it.each(shipped)('%s is valid and says it is an invented scenario', (file) => {
    const text = readFileSync(new URL(file, presetDir), 'utf8');
    const r = parsePresetText(text);
    expect(r.ok ? [] : r.issues).toEqual([]);
    expect(JSON.parse(text).description).toMatch(/INVENTED/);
  });
  it('presets/preset.schema.json is the current rendering of the validator (run `npm run schema`)', () => {
    expect(readFileSync(new URL('preset.schema.json', presetDir), 'utf8')).toBe(renderPresetJsonSchema());
  });
});

describe('validation errors name the field and the allowed range', () => {
  const issuesOf = (mutate: (d: Record<string, any>) => void) => {
    const doc = demo();
    mutate(doc);
    const r = validatePreset(doc);
    return r.ok ? [] : r.issues;
  };
  it('non-positive gap', () => {
    expect(issuesOf((d) => (d.source.extractionGrid.gap_mm = 0))).toEqual([
      { path: 'source.extractionGrid.gap_mm', message: 'must be a number > 0.01 and ≤ 500 mm' },
    ]);
  });
  it('unknown key and prototype keys are refused, never merged', () => {
    const r = parsePresetText(JSON.stringify(demo()).replace('"drift":{', '"drift":{"__proto__":{"polluted":1},"tilt_deg":3,'));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues[0]).toEqual({ path: 'drift', message: 'unknown keys "__proto__", "tilt_deg"' });
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });
  it('start position beyond the first grid', () => {
    expect(issuesOf((d) => (d.ions.startPosition = { kind: 'surface', position_mm: 3 }))).toEqual([
      { path: 'ions.startPosition.position_mm', message: 'must lie inside the first source stage: ≥ 0 and < 3 mm (source.extractionGrid.gap_mm)' },
    ]);
  });
  it('wrong types, missing fields and bad enum values', () => {
    const issues = issuesOf((d) => {
      d.drift.length_mm = '1200';
      delete d.run.seed;
      d.mirror = { type: 'triple' };
    });
    expect(issues).toContainEqual({ path: 'drift.length_mm', message: 'must be a number > 1 and ≤ 50000 mm' });
    expect(issues).toContainEqual({ path: 'run.seed', message: 'is required' });
    expect(issues).toContainEqual({ path: 'mirror.type', message: 'is not one of the allowed values ("none", "single", "dual", "profile", "solved")' });
  });
  it('not JSON, not an object, too large', () => {
    expect(parsePresetText('{').ok).toBe(false);
    expect(validatePreset([1, 2])).toEqual({ ok: false, issues: [{ path: '(top level)', message: 'a preset must be a JSON object' }] });
    expect(parsePresetText(' '.repeat(1_000_001)).ok).toBe(false);
  });
});

describe('format versions and migration', () => {
  it('refuses a missing or newer version with a message', () => {
    const d = demo();
    delete d.formatVersion;
    expect(validatePreset(d)).toEqual({ ok: false, issues: [{ path: 'formatVersion', message: 'is missing (this program reads version 1)' }] });
    expect(validatePreset({ ...demo(), formatVersion: 2 }).ok).toBe(false);
  });
  it('runs the chain of migrations and never changes the input object', () => {
    const old = { formatVersion: 1, driftLength: 5 };
    const frozen = JSON.stringify(old);
    const r = migratePreset(old, { 1: (d) => ({ ...d, drift: { length_mm: d.driftLength } }) }, 2);
    expect(r).toEqual({ ok: true, value: { formatVersion: 2, driftLength: 5, drift: { length_mm: 5 } } });
    expect(JSON.stringify(old)).toBe(frozen);
    expect(migratePreset({ formatVersion: 1 }, {}, 3).ok).toBe(false); // a gap in the chain is an error
  });
});

describe('a UTF-8 byte-order mark', () => {
  it('is stripped before parsing: a preset saved with one loads as without it', () => {
    const text = readFileSync(new URL('demo-linear-delayed.json', presetDir), 'utf8');
    const plain = parsePresetText(text);
    const marked = parsePresetText('\uFEFF' + text);
    expect(marked).toEqual(plain);
    expect(marked.ok).toBe(true);
    // Only a leading mark is stripped; one inside the text stays part of it (here: not JSON).
    const inside = parsePresetText(text.replace('{', '{\uFEFF'));
    expect(inside.ok).toBe(false);
  });
});
