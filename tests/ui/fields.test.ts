import { describe, expect, it } from 'vitest';
import { validatePreset } from '../../src/presets/load';
import { LIMITS } from '../../src/presets/schema';
import {
  FIELDS,
  fieldForIssue,
  nextSpecies,
  sliderSpan,
  speciesFields,
  type ChoiceField,
  type NumberField,
  type SwitchField,
  type TextField,
} from '../../src/ui/panel/fields';
import { cloneJson, deleteAt, getAt, parsePath, setAt } from '../../src/ui/panel/presetPath';
import { DEMO_FILES, demoPreset } from './helpers';

const field = <T>(key: string): T => FIELDS.find((f) => f.key === key) as T;

describe('preset paths', () => {
  it('parse, read, write and delete by JSON path', () => {
    expect(parsePath('ions.species[2].mz')).toEqual(['ions', 'species', 2, 'mz']);
    const doc = { a: { list: [{ x: 1 }] } };
    expect(getAt(doc, 'a.list[0].x')).toBe(1);
    expect(getAt(doc, 'a.list[3].x')).toBeUndefined();
    setAt(doc, 'a.list[1].y', 5);
    setAt(doc, 'b.c', 'new');
    expect(doc).toEqual({ a: { list: [{ x: 1 }, { y: 5 }] }, b: { c: 'new' } });
    deleteAt(doc, 'b.c');
    expect(doc).toEqual({ a: { list: [{ x: 1 }, { y: 5 }] }, b: {} });
  });

  it('refuses prototype keys', () => {
    expect(() => setAt({}, '__proto__.polluted', true)).toThrow(/refused/);
    expect(() => setAt({}, 'a.constructor.prototype', 1)).toThrow(/refused/);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });
});

describe('parameter panel fields', () => {
  it('number limits are the preset schema LIMITS and every label carries a unit or is dimensionless', () => {
    const byPath: Record<string, { min: number; max: number }> = {
      'source.repeller.potential_V': LIMITS.potential_V,
      'source.extraction.delay_ns': LIMITS.delay_ns,
      'drift.length_mm': LIMITS.driftLength_mm,
      'mirror.depth_mm': LIMITS.mirrorStage_mm,
      'run.ions': LIMITS.ions,
      'run.seed': LIMITS.seed,
    };
    for (const [path, limits] of Object.entries(byPath)) {
      const f = FIELDS.find((x) => x.path === path) as NumberField;
      expect(f.limits).toBe(limits);
    }
    for (const f of FIELDS) {
      if (f.kind !== 'number') continue;
      expect(f.label).toMatch(/\((V|mm|ns|mm from repeller|m\/s|mrad|eV|K|0–1|µs)\)|ions|seed|shots/);
      if (f.window) {
        expect(f.window[0]).toBeGreaterThanOrEqual(f.limits.min);
        expect(f.window[1]).toBeLessThanOrEqual(f.limits.max);
      }
    }
  });

  for (const name of DEMO_FILES) {
    it(`${name}: every shown control reads a value, and writing it back leaves a valid, equal preset`, () => {
      const preset = demoPreset(name);
      const doc = cloneJson(preset);
      for (const f of [...FIELDS, ...preset.ions.species.flatMap((_s, i) => speciesFields(i))]) {
        if (f.visible && !f.visible(doc)) continue;
        if (f.kind === 'number') {
          const v = f.get(doc);
          expect(Number.isFinite(v)).toBe(true);
          if (getAt(doc, f.path) !== undefined) f.set(doc, v);
        } else if (f.kind === 'text') {
          if (getAt(doc, f.path) !== undefined) f.set(doc, f.get(doc));
        }
      }
      const checked = validatePreset(doc);
      expect(checked.ok).toBe(true);
      if (checked.ok) expect(checked.value).toEqual(preset);
    });
  }

  it('switching the mirror type keeps the settings of the mode switched away from', () => {
    const memory = new Map<string, unknown>();
    const dual = demoPreset('demo-reflectron-dual');
    const doc = cloneJson(dual);
    const mirror = field<ChoiceField>('mirrorType');
    mirror.set(doc, 'none', memory);
    expect(getAt(doc, 'mirror')).toEqual({ type: 'none' });
    expect(validatePreset(doc).ok).toBe(true);
    mirror.set(doc, 'single', memory);
    expect(getAt(doc, 'mirror.type')).toBe('single');
    expect(validatePreset(doc).ok).toBe(true);
    mirror.set(doc, 'dual', memory);
    expect(getAt(doc, 'mirror')).toEqual(dual.mirror);
  });

  it('switching to a gridless (solved) mirror gives a valid preset whose back plate suits the source, and back again', () => {
    const memory = new Map<string, unknown>();
    const dual = demoPreset('demo-reflectron-dual');
    const doc = cloneJson(dual);
    const mirror = field<ChoiceField>('mirrorType');
    mirror.set(doc, 'solved', memory);
    expect(getAt(doc, 'mirror.type')).toBe('solved');
    // 1.12 × the repeller's potential above the drift tube, as in the gridless demo (invented scenario).
    const expected = dual.drift.potential_V + 1.12 * (dual.source.repeller.potential_V - dual.drift.potential_V);
    expect(getAt(doc, 'mirror.backPlate.potential_V')).toBeCloseTo(expected, -1);
    const checked = validatePreset(doc);
    expect(checked.ok).toBe(true);
    // Its controls: the back plate and the return path; no entrance grid transmission (it has no grid).
    const shown = FIELDS.filter((f) => f.group === 'mirror' && (!f.visible || f.visible(doc))).map((f) => f.key);
    expect(shown).toEqual(['mirrorType', 'solvedBack_V', 'return_mm']);
    const back = field<NumberField>('solvedBack_V');
    back.set(doc, 23_000);
    expect(getAt(doc, 'mirror.backPlate.potential_V')).toBe(23_000);
    mirror.set(doc, 'dual', memory);
    expect(getAt(doc, 'mirror')).toEqual(dual.mirror);
    mirror.set(doc, 'solved', memory);
    expect(getAt(doc, 'mirror.backPlate.potential_V')).toBe(23_000);
  });

  it('the aperture-plate switch adds and removes the solved source, and leaving the two-stage source sets it aside', () => {
    const memory = new Map<string, unknown>();
    const linear = demoPreset('demo-linear-delayed');
    const doc = cloneJson(linear);
    const plates = field<SwitchField>('apertureSource');
    plates.set(doc, true, memory);
    expect(getAt(doc, 'source.solved')).toEqual(demoPreset('demo-aperture-source').source.solved);
    expect(validatePreset(doc).ok).toBe(true);
    // Plates have no grid transmission to edit.
    expect(field<NumberField>('gridTransmission').visible!(doc)).toBe(false);
    expect(field<NumberField>('groundTransmission').visible!(doc)).toBe(false);
    const twoStage = field<SwitchField>('twoStage');
    twoStage.set(doc, false, memory);
    expect(getAt(doc, 'source.solved')).toBeUndefined();
    expect(validatePreset(doc).ok).toBe(true);
    twoStage.set(doc, true, memory);
    plates.set(doc, true, memory);
    expect(getAt(doc, 'source.solved')).toEqual(demoPreset('demo-aperture-source').source.solved);
    plates.set(doc, false, memory);
    expect(getAt(doc, 'source.solved')).toBeUndefined();
    expect(validatePreset(doc).ok).toBe(true);
  });

  it('switches that add and remove a part (two-stage source, post-acceleration) give valid presets', () => {
    const memory = new Map<string, unknown>();
    const doc = cloneJson(demoPreset('demo-linear-delayed'));
    const twoStage = field<SwitchField>('twoStage');
    twoStage.set(doc, false, memory);
    expect(getAt(doc, 'source.extractionGrid')).toBeUndefined();
    // The repeller's hold potential must now refer to the ground grid: the demo's 18 800 V hold stays as set.
    expect(validatePreset(doc).ok).toBe(true);
    twoStage.set(doc, true, memory);
    expect(getAt(doc, 'source.extractionGrid')).toEqual(demoPreset('demo-linear-delayed').source.extractionGrid);
    const post = field<SwitchField>('postAcceleration');
    post.set(doc, true, memory);
    expect(getAt(doc, 'detector.postAcceleration')).toEqual({ gap_mm: 5, potential_V: -5000 });
    expect(validatePreset(doc).ok).toBe(true);
    const extraction = field<ChoiceField>('extractionMode');
    extraction.set(doc, 'static', memory);
    expect(getAt(doc, 'source.extraction')).toEqual({ mode: 'static' });
    extraction.set(doc, 'delayed', memory);
    expect(getAt(doc, 'source.extraction.delay_ns')).toBe(getAt(demoPreset('demo-linear-delayed'), 'source.extraction.delay_ns'));
  });

  it('gives a species a formula (m/z then computed) and takes it away again (m/z kept)', () => {
    const doc = cloneJson(demoPreset('demo-linear-delayed'));
    const [formula, adduct, mz, charge] = ['species0_formula', 'species0_adduct', 'species0_mz', 'species0_charge'].map((key) =>
      speciesFields(0).find((f) => f.key === key),
    ) as [TextField, TextField, NumberField, NumberField];
    // The demo species are given by formula: clearing it keeps the computed m/z (and the calibrant mark).
    const demoMz = getAt(doc, 'ions.species[0].mz');
    expect(adduct.visible!(doc)).toBe(true);
    formula.set(doc, '');
    expect(getAt(doc, 'ions.species[0].mz')).toBe(demoMz);
    expect(getAt(doc, 'ions.species[0].isotopes')).toBeUndefined();
    expect(validatePreset(doc).ok).toBe(true);
    mz.set(doc, 1046);
    expect(getAt(doc, 'analysis.calibrantMz[0]')).toBe(1046);
    expect(adduct.visible!(doc)).toBe(false);
    expect(mz.visible!(doc)).toBe(true);
    // A decapeptide formula, C50H71N13O12; [M+H]+ monoisotopic m/z 1046.5418 (from our AME 2020
    // masses, which tests/ions check against the isotopic-distribution package).
    formula.set(doc, ' C50H71N13O12 ');
    expect(getAt(doc, 'ions.species[0].formula')).toBe('C50H71N13O12');
    expect(getAt(doc, 'ions.species[0].adduct')).toBe('protonated');
    expect(adduct.visible!(doc)).toBe(true);
    expect(mz.visible!(doc)).toBe(false);
    expect(getAt(doc, 'ions.species[0].mz') as number).toBeCloseTo(1046.5418, 4);
    const checked = validatePreset(doc);
    expect(checked.ok).toBe(true);
    if (checked.ok) expect(checked.value.ions.species[0].mz).toBeCloseTo(1046.5418, 4);
    // Doubly protonated: (M + 2H)/2, i.e. ([M+H]+ + proton mass 1.00727646688 u, CODATA 2018) / 2;
    // the species stays the mass calibrant it was.
    expect(getAt(doc, 'analysis.calibrantMz[0]') as number).toBeCloseTo(1046.5418, 4);
    charge.set(doc, 2);
    expect(getAt(doc, 'analysis.calibrantMz[0]')).toBe(getAt(doc, 'ions.species[0].mz'));
    expect(getAt(doc, 'ions.species[0].mz') as number).toBeCloseTo((1046.5418 + 1.00727646688) / 2, 4);
    formula.set(doc, '');
    expect(getAt(doc, 'ions.species[0].formula')).toBeUndefined();
    expect(getAt(doc, 'ions.species[0].adduct')).toBeUndefined();
    expect(getAt(doc, 'ions.species[0].mz') as number).toBeCloseTo(523.7745, 3);
    const final = validatePreset(doc);
    expect(final.ok ? [] : final.issues).toEqual([]);
    // Typing an m/z moves the calibrant mark with it too.
    mz.set(doc, 600);
    expect(getAt(doc, 'analysis.calibrantMz[0]')).toBe(600);
    expect(validatePreset(doc).ok).toBe(true);
  });

  it('an unreadable formula is reported on the formula control', () => {
    const doc = cloneJson(demoPreset('demo-linear-delayed'));
    const formula = speciesFields(0).find((f) => f.key === 'species0_formula') as TextField;
    formula.set(doc, 'C50Xx71');
    const checked = validatePreset(doc);
    expect(checked.ok).toBe(false);
    if (!checked.ok) {
      const issue = checked.issues.find((i) => i.path.startsWith('ions.species[0]'));
      expect(issue).toBeDefined();
      expect(fieldForIssue([...FIELDS, ...speciesFields(0)], issue!.path)?.key).toBe('species0_formula');
    }
  });

  it('maps validation issues to the control that answers for them', () => {
    const fields = [...FIELDS, ...speciesFields(0), ...speciesFields(1)];
    expect(fieldForIssue(fields, 'source.extraction.delay_ns')?.key).toBe('delay_ns');
    expect(fieldForIssue(fields, 'ions.species[1].mz')?.key).toBe('species1_mz');
    expect(fieldForIssue(fields, 'ions.startPosition.position_mm')?.key).toBe('position_mm');
    expect(fieldForIssue(fields, 'formatVersion')).toBeUndefined();
  });

  it('slider spans widen to include a value but never pass the limits', () => {
    const delay = field<NumberField>('delay_ns');
    expect(sliderSpan(delay, 140)).toEqual([0, 2000]);
    expect(sliderSpan(delay, 3300)).toEqual([0, 5000]);
    expect(sliderSpan(delay, 900_000)).toEqual([0, 1_000_000]);
    const v = field<NumberField>('repeller_V');
    expect(sliderSpan(v, -42_000)).toEqual([-50_000, 30_000]);
  });

  it('adds species 10 % heavier than the last', () => {
    const next = nextSpecies(demoPreset('demo-linear-delayed'));
    expect(next.mz).toBeCloseTo(2508.29938 * 1.1, 3); // the last demo species, valquorin-22 (invented)
    expect(next.charge).toBe(1);
  });
});

describe('tuning choices', () => {
  it('offers analyser settings only, each with a default range inside its limits around the current value', async () => {
    const { tunableFields, defaultRange } = await import('../../src/ui/tuning/tuningView');
    const preset = demoPreset('demo-reflectron-dual');
    const fields = tunableFields(preset);
    const paths = fields.map((f) => f.path);
    expect(paths).toContain('source.extraction.delay_ns');
    expect(paths).toContain('mirror.intermediateGrid_V');
    expect(paths.some((p) => p.startsWith('acquisition.') || /transmission/i.test(p))).toBe(false);
    for (const f of fields) {
      const value = getAt(preset, f.path) as number;
      const [lo, hi] = defaultRange(f, value);
      expect(lo).toBeLessThanOrEqual(value);
      expect(hi).toBeGreaterThanOrEqual(value);
      expect(lo).toBeGreaterThanOrEqual(f.limits.min);
      expect(hi).toBeLessThanOrEqual(f.limits.max);
      expect(hi).toBeGreaterThan(lo);
    }
  });
});
