/**
 * The panel's ion-load controls: each edits the `ionLoad` path it names, switching a part on gives a
 * preset the validator accepts, a mode switched away from comes back as it was, and a bad value is
 * refused with a one-line message at the control's own path (so the panel outlines that control).
 */
import { describe, expect, it } from 'vitest';
import { validatePreset } from '../../src/presets/load';
import { ION_LOAD_LIMITS } from '../../src/presets/ionLoadSchema';
import { numberBoundsAt } from '../../src/presets/pathBounds';
import { ACQUISITION_FIELDS } from '../../src/ui/panel/acquisitionFields';
import { fieldForIssue, FIELDS, type ChoiceField, type ModeMemory, type NumberField, type SwitchField } from '../../src/ui/panel/fields';
import { cloneJson, getAt } from '../../src/ui/panel/presetPath';
import { demoPreset } from './helpers';

const field = <T>(key: string): T => ACQUISITION_FIELDS.find((f) => f.key === key) as T;

describe('ion-load controls', () => {
  it('have unique keys beside the other fields, sit in the detector group and quote the validator\'s bounds', () => {
    const keys = [...FIELDS, ...ACQUISITION_FIELDS].map((f) => f.key);
    expect(new Set(keys).size).toBe(keys.length);
    for (const f of ACQUISITION_FIELDS) {
      expect(f.group).toBe('detector');
      expect(f.path.startsWith('ionLoad')).toBe(true);
    }
    const doc = cloneJson(demoPreset('demo-linear-delayed')) as Record<string, unknown>;
    doc.ionLoad = { ionsPerShot: 10, detection: { mode: 'counting', deadTime_ns: 5 }, spaceCharge: { beamRadius_mm: 1 } };
    for (const f of ACQUISITION_FIELDS.filter((x): x is NumberField => x.kind === 'number')) {
      const bounds = numberBoundsAt(f.path, doc);
      if (bounds) {
        expect(f.limits.min, f.path).toBe(bounds.min);
        expect(f.limits.max, f.path).toBe(bounds.max);
      }
    }
    expect(field<NumberField>('deadTime_ns').limits).toEqual(ION_LOAD_LIMITS.deadTime_ns);
  });

  it('switch on the load, each detector mode, the yield law and space charge into a valid preset, and bring a mode back as it was', () => {
    const doc = cloneJson(demoPreset('demo-linear-delayed'));
    const memory: ModeMemory = new Map();
    field<SwitchField>('ionLoad').set(doc, true, memory);
    expect(validatePreset(cloneJson(doc)).ok).toBe(true);
    const mode = field<ChoiceField>('ionLoadDetection');
    expect(mode.get(doc)).toBe('none');
    mode.set(doc, 'counting', memory);
    field<NumberField>('deadTime_ns').set(doc, 12);
    field<NumberField>('channels').set(doc, 4);
    expect(validatePreset(cloneJson(doc)).ok).toBe(true);
    mode.set(doc, 'analog', memory);
    field<SwitchField>('ionLoadSaturation').set(doc, true, memory);
    field<NumberField>('gainRelativeSd').set(doc, 0.7);
    field<SwitchField>('detectionYield').set(doc, true, memory);
    field<SwitchField>('spaceCharge').set(doc, true, memory);
    field<NumberField>('beamRadius_mm').set(doc, 0.5);
    const checked = validatePreset(cloneJson(doc));
    expect(checked.ok).toBe(true);
    if (checked.ok) {
      expect(checked.value.ionLoad?.detection).toMatchObject({ mode: 'analog', gainRelativeSd: 0.7, saturation_ions: 100 });
      expect(checked.value.ionLoad?.spaceCharge?.beamRadius_mm).toBe(0.5);
      expect(checked.value.ionLoad?.detectionYield?.law).toBe('kineticEmission');
    }
    mode.set(doc, 'counting', memory);
    expect(getAt(doc, 'ionLoad.detection')).toEqual({ mode: 'counting', deadTime_ns: 12, channels: 4, deadTimeCorrection: true });
    expect(field<NumberField>('gainRelativeSd').visible?.(doc)).toBe(false);
    mode.set(doc, 'none', memory);
    expect(getAt(doc, 'ionLoad.detection')).toBeUndefined();
    field<SwitchField>('ionLoad').set(doc, false, memory);
    expect(getAt(doc, 'ionLoad')).toBeUndefined();
    field<SwitchField>('ionLoad').set(doc, true, memory);
    expect(getAt(doc, 'ionLoad.spaceCharge.beamRadius_mm')).toBe(0.5); // the whole section comes back
  });

  it('a bad value is refused with one line at the control\'s path', () => {
    const doc = cloneJson(demoPreset('demo-linear-delayed'));
    const memory: ModeMemory = new Map();
    field<SwitchField>('ionLoad').set(doc, true, memory);
    field<ChoiceField>('ionLoadDetection').set(doc, 'counting', memory);
    for (const [key, value, path] of [
      ['deadTime_ns', 1e6, 'ionLoad.detection.deadTime_ns'],
      ['channels', 2.5, 'ionLoad.detection.channels'],
      ['ionsPerShot', 0, 'ionLoad.ionsPerShot'],
    ] as const) {
      const bad = cloneJson(doc);
      field<NumberField>(key).set(bad, value);
      const r = validatePreset(bad);
      expect(r.ok).toBe(false);
      if (!r.ok) {
        expect(r.issues).toHaveLength(1);
        expect(r.issues[0].path).toBe(path);
        expect(r.issues[0].message).not.toContain('\n');
        expect(fieldForIssue(ACQUISITION_FIELDS, r.issues[0].path)?.key).toBe(key);
      }
    }
    // A dead time shorter than one sample is refused by the cross-field check, also at its path.
    const short = cloneJson(doc);
    field<NumberField>('deadTime_ns').set(short, 0.1);
    const r = validatePreset(short);
    expect(!r.ok && r.issues.map((i) => i.path)).toEqual(['ionLoad.detection.deadTime_ns']);
  });
});
