/**
 * The ion-load controls of the panel's "Detector and acquisition" group: ions per shot and its
 * count law, the detector mode (analog: gain statistics, saturation, baseline noise; counting: dead
 * time, channels, dead-time correction), the velocity-dependent detection yield and the
 * space-charge beam cross-section — the preset section `ionLoad` (src/presets/ionLoadSchema.ts).
 * Descriptors only, no DOM (tested in Node); the panel binds them like its other fields. Limits come
 * from the section's own ION_LOAD_LIMITS, hints from the validator (allowedHint).
 */
import {
  DEFAULT_OPEN_AREA_FRACTION,
  DEFAULT_THRESHOLD_SPEED_KM_PER_S,
  DEFAULT_YIELD_SLOPE_PER_KM_PER_S,
} from '../../analysis/acquisition/detectionYield';
import { ION_LOAD_LIMITS as L } from '../../presets/ionLoadSchema';
import { allowedHint, type ChoiceField, type FieldSpec, type ModeMemory, type NumberField, type SwitchField } from './fields';
import type { PresetPath } from '../../presets/presetPaths';
import { registerFields } from './fieldRegistry';
import { deleteAt, getAt, setAt } from './presetPath';

const has = (doc: unknown, path: PresetPath): boolean => getAt(doc, path) !== undefined;
const loadOn = (doc: unknown): boolean => has(doc, 'ionLoad');
const detectionMode = (doc: unknown): string => String(getAt(doc, 'ionLoad.detection.mode') ?? 'none');
const analog = (doc: unknown): boolean => loadOn(doc) && detectionMode(doc) === 'analog';
const counting = (doc: unknown): boolean => loadOn(doc) && detectionMode(doc) === 'counting';

/** Defaults of a newly switched-on part (the schema's own defaults; a dead time of 5 ns is common practice, no source). */
export const ION_LOAD_DEFAULTS = {
  ionLoad: { ionsPerShot: 10, countLaw: 'poisson' },
  analog: { mode: 'analog', gainRelativeSd: 0.5, baselineNoise_ions: 0 },
  counting: { mode: 'counting', deadTime_ns: 5, channels: 1, deadTimeCorrection: true },
  detectionYield: {
    law: 'kineticEmission',
    thresholdSpeed_km_per_s: DEFAULT_THRESHOLD_SPEED_KM_PER_S,
    yieldSlope_per_km_per_s: DEFAULT_YIELD_SLOPE_PER_KM_PER_S,
    openAreaFraction: DEFAULT_OPEN_AREA_FRACTION,
  },
  spaceCharge: { beamRadius_mm: 1 },
  saturation_ions: 100,
} as const;

const copy = <T>(x: T): T => JSON.parse(JSON.stringify(x)) as T;

/** What was set aside when a part was switched off, else its default. */
function recalled(memory: ModeMemory, key: string, fallback: unknown): unknown {
  return memory.has(key) ? copy(memory.get(key)) : copy(fallback);
}

function setAside(doc: unknown, memory: ModeMemory, path: PresetPath, key: string): void {
  const current = getAt(doc, path);
  if (current !== undefined) memory.set(key, copy(current));
  deleteAt(doc, path);
}

function number(
  key: string,
  label: string,
  path: PresetPath,
  limits: { readonly min: number; readonly max: number },
  step: number,
  window: readonly [number, number],
  visible: (doc: unknown) => boolean,
  fallback: number,
): NumberField {
  return {
    kind: 'number',
    key,
    group: 'detector',
    label,
    path,
    limits,
    step,
    window: [Math.max(window[0], limits.min), Math.min(window[1], limits.max)],
    visible,
    get: (doc) => {
      const v = getAt(doc, path);
      return typeof v === 'number' ? v : fallback;
    },
    set: (doc, value) => setAt(doc, path, value),
    hint: (doc) => allowedHint(path, label, limits, doc),
  };
}

/** A part of the section switched on (its defaults or what was set aside) or off (set aside). */
function part(key: string, label: string, path: PresetPath, fallback: unknown, visible: (doc: unknown) => boolean): SwitchField {
  return {
    kind: 'boolean',
    key,
    group: 'detector',
    label,
    path,
    visible,
    get: (doc) => has(doc, path),
    set: (doc, on, memory) => {
      if (on === has(doc, path)) return;
      if (on) setAt(doc, path, recalled(memory, `${key}:on`, fallback));
      else setAside(doc, memory, path, `${key}:on`);
    },
  };
}

const detectionField: ChoiceField = {
  kind: 'select',
  key: 'ionLoadDetection',
  group: 'detector',
  label: 'detection mode',
  path: 'ionLoad.detection',
  options: { 'ideal (same pulse per ion)': 'none', 'analog (digitizer)': 'analog', 'counting (time to digital)': 'counting' },
  visible: loadOn,
  get: detectionMode,
  set: (doc, mode, memory) => {
    const from = detectionMode(doc);
    if (mode === from) return;
    if (from !== 'none') setAside(doc, memory, 'ionLoad.detection', `detection:${from}`);
    if (mode === 'analog' || mode === 'counting') setAt(doc, 'ionLoad.detection', recalled(memory, `detection:${mode}`, ION_LOAD_DEFAULTS[mode]));
  },
};

export const ACQUISITION_FIELDS: readonly FieldSpec[] = [
  part('ionLoad', 'ion load per shot', 'ionLoad', ION_LOAD_DEFAULTS.ionLoad, () => true),
  number('ionsPerShot', 'ions per shot, mean over species', 'ionLoad.ionsPerShot', L.ionsPerShot, 0.01, [0.1, 1000], loadOn, 10),
  {
    kind: 'select',
    key: 'ionLoadCountLaw',
    group: 'detector',
    label: 'ions per shot drawn',
    path: 'ionLoad.countLaw',
    options: { 'Poisson (a real source)': 'poisson', 'fixed (exactly the mean)': 'fixed' },
    visible: loadOn,
    get: (doc) => String(getAt(doc, 'ionLoad.countLaw') ?? 'poisson'),
    set: (doc, value) => setAt(doc, 'ionLoad.countLaw', value),
  },
  detectionField,
  number('gainRelativeSd', 'gain spread, sd/mean (Pólya)', 'ionLoad.detection.gainRelativeSd', L.gainRelativeSd, 0.01, [0, 1.5], analog, 0.5),
  {
    kind: 'boolean',
    key: 'ionLoadSaturation',
    group: 'detector',
    label: 'detector saturates',
    path: 'ionLoad.detection.saturation_ions',
    visible: analog,
    get: (doc) => has(doc, 'ionLoad.detection.saturation_ions'),
    set: (doc, on, memory) => {
      const path = 'ionLoad.detection.saturation_ions';
      if (on === has(doc, path)) return;
      if (on) setAt(doc, path, recalled(memory, 'saturation:on', ION_LOAD_DEFAULTS.saturation_ions));
      else setAside(doc, memory, path, 'saturation:on');
    },
  },
  number('saturationIons', 'saturation level (single-ion pulse heights)', 'ionLoad.detection.saturation_ions', L.saturation_ions, 0.1, [1, 1000], (doc) => analog(doc) && has(doc, 'ionLoad.detection.saturation_ions'), 100),
  number('baselineNoiseIons', 'baseline noise sd (single-ion pulse heights)', 'ionLoad.detection.baselineNoise_ions', L.baselineNoise_ions, 0.01, [0, 5], analog, 0),
  number('deadTime_ns', 'dead time per channel (ns)', 'ionLoad.detection.deadTime_ns', L.deadTime_ns, 0.1, [0, 100], counting, 5),
  number('channels', 'channels (anode segments)', 'ionLoad.detection.channels', L.channels, 1, [1, 64], counting, 1),
  {
    kind: 'boolean',
    key: 'deadTimeCorrection',
    group: 'detector',
    label: 'dead-time correction',
    path: 'ionLoad.detection.deadTimeCorrection',
    visible: counting,
    get: (doc) => getAt(doc, 'ionLoad.detection.deadTimeCorrection') !== false,
    set: (doc, on) => setAt(doc, 'ionLoad.detection.deadTimeCorrection', on),
  },
  part('detectionYield', 'detection yield falls for slow ions', 'ionLoad.detectionYield', ION_LOAD_DEFAULTS.detectionYield, loadOn),
  number('yieldThreshold', 'yield threshold speed (km/s)', 'ionLoad.detectionYield.thresholdSpeed_km_per_s', L.speed_km_per_s, 0.1, [0, 50], (doc) => loadOn(doc) && has(doc, 'ionLoad.detectionYield'), DEFAULT_THRESHOLD_SPEED_KM_PER_S),
  number('yieldSlope', 'yield slope (electrons per km/s)', 'ionLoad.detectionYield.yieldSlope_per_km_per_s', L.yieldSlope_per_km_per_s, 0.001, [0, 1], (doc) => loadOn(doc) && has(doc, 'ionLoad.detectionYield'), DEFAULT_YIELD_SLOPE_PER_KM_PER_S),
  number('yieldOpenArea', 'detector open area (fraction)', 'ionLoad.detectionYield.openAreaFraction', L.openAreaFraction, 0.01, [0.01, 1], (doc) => loadOn(doc) && has(doc, 'ionLoad.detectionYield'), DEFAULT_OPEN_AREA_FRACTION),
  part('spaceCharge', 'space charge (charged sheets)', 'ionLoad.spaceCharge', ION_LOAD_DEFAULTS.spaceCharge, loadOn),
  number('beamRadius_mm', 'beam radius, space charge (mm)', 'ionLoad.spaceCharge.beamRadius_mm', L.beamRadius_mm, 0.01, [0.05, 10], (doc) => loadOn(doc) && has(doc, 'ionLoad.spaceCharge'), 1),
];

registerFields(ACQUISITION_FIELDS);
