/**
 * What the parameter panel edits: one descriptor per control, grouped by physical part, each tied
 * to the preset path it changes, typed from the preset schema (src/presets/presetPaths.ts: a path
 * the schema does not have is a type error). Units sit in every label; hard limits come from the
 * preset schema's LIMITS; the slider window is only a convenient span inside them (typed values may
 * go beyond it and are then validated like anything else). What a switched-on mode starts from, and
 * what an omitted value means, come from the preset layer (src/presets/modeDefaults.ts). Other
 * modules add groups of controls with `registerFields` (./fieldRegistry.ts). No DOM here, so it is
 * testable in Node.
 */
import { FIELD_LIMITS } from '../../presets/fieldsSchema';
import {
  acquisitionDefaults,
  ACTIVE_DIAMETER_DEFAULT_mm,
  extractionFor,
  extractionGridFor,
  extractionGridHoldDefault_V,
  harmonicProfileFor,
  mirrorFor,
  NOMINAL_DRIFT_mm,
  NOMINAL_REPELLER_V,
  OMITTED_GRID_TRANSMISSION,
  OMITTED_RISE_SHAPE,
  OMITTED_TRANSVERSE_KIND,
  postAccelerationFor,
  repellerHoldDefault_V,
  riseFor,
  startPositionFor,
  startVelocityFor,
  transverseVelocityFor,
} from '../../presets/modeDefaults';
import type { PresetPath, SpeciesBase } from '../../presets/presetPaths';
import type { Preset } from '../../presets/schema';
import { LIMITS } from '../../presets/schema';
import { numberBoundsAt } from '../../presets/pathBounds';
import { boundsWords } from '../../presets/rangeWords';
import { resolveChemistry } from '../../presets/speciesChemistry';
import { demo } from '../presets/demos';
import { deleteAt, getAt, setAt } from './presetPath';

export type GroupId = 'source' | 'timing' | 'drift' | 'mirror' | 'detector' | 'ions' | 'run';

export const GROUPS: readonly { readonly id: GroupId; readonly title: string }[] = [
  { id: 'source', title: 'Source' },
  { id: 'timing', title: 'Timing' },
  { id: 'drift', title: 'Drift' },
  { id: 'mirror', title: 'Mirror' },
  { id: 'detector', title: 'Detector and acquisition' },
  { id: 'ions', title: 'Ions' },
  { id: 'run', title: 'Run' },
];

export type FieldValue = number | string | boolean;

/** Sub-objects set aside when a mode is switched off, so switching back restores them. */
export type ModeMemory = Map<string, unknown>;

interface FieldBase {
  /** Unique id; also the property name of the panel's bound object. */
  readonly key: string;
  readonly group: GroupId;
  readonly label: string;
  /** The preset path this control edits (where validation issues for it are reported). */
  readonly path: PresetPath;
  readonly visible?: (doc: unknown) => boolean;
}

export interface NumberField extends FieldBase {
  readonly kind: 'number';
  readonly limits: { readonly min: number; readonly max: number };
  readonly step: number;
  /** Slider span, inside the limits; absent for values better typed (m/z, seed, ion count). */
  readonly window?: readonly [number, number];
  readonly get: (doc: unknown) => number;
  readonly set: (doc: unknown, value: number) => void;
  /** The allowed range for `doc` in the validator's own words (read from it, see src/presets/pathBounds.ts). */
  readonly hint: (doc: unknown) => string;
}

export interface ChoiceField extends FieldBase {
  readonly kind: 'select';
  /** Shown label → stored value. */
  readonly options: Readonly<Record<string, string>>;
  readonly get: (doc: unknown) => string;
  readonly set: (doc: unknown, value: string, memory: ModeMemory) => void;
}

export interface SwitchField extends FieldBase {
  readonly kind: 'boolean';
  readonly get: (doc: unknown) => boolean;
  readonly set: (doc: unknown, value: boolean, memory: ModeMemory) => void;
}

export interface TextField extends FieldBase {
  readonly kind: 'text';
  readonly get: (doc: unknown) => string;
  readonly set: (doc: unknown, value: string) => void;
}

export type FieldSpec = NumberField | ChoiceField | SwitchField | TextField;

const num = (doc: unknown, path: PresetPath, fallback = 0): number => {
  const v = getAt(doc, path);
  return typeof v === 'number' ? v : fallback;
};
const str = (doc: unknown, path: PresetPath): string => String(getAt(doc, path) ?? '');
const has = (doc: unknown, path: PresetPath): boolean => getAt(doc, path) !== undefined;
const is = (path: PresetPath, value: string) => (doc: unknown) => getAt(doc, path) === value;

/** A plain number at a path (exported so that other modules can build controls to register). */
export function numberAt(
  key: string,
  group: GroupId,
  label: string,
  path: PresetPath,
  limits: { min: number; max: number },
  step: number,
  window?: readonly [number, number],
  visible?: (doc: unknown) => boolean,
  fallback?: (doc: unknown) => number,
): NumberField {
  return {
    kind: 'number',
    key,
    group,
    label,
    path,
    limits,
    step,
    window: window ? [Math.max(window[0], limits.min), Math.min(window[1], limits.max)] : undefined,
    visible,
    get: (doc) => num(doc, path, fallback ? fallback(doc) : 0),
    set: (doc, value) => setAt(doc, path, value),
    hint: (doc) => allowedHint(path, label, limits, doc),
  };
}

/** "allowed: > 1 and ≤ 50000 (mm)": the bounds the validator enforces at `path` (the field's limits if it reports none). */
export function allowedHint(path: PresetPath, label: string, limits: { readonly min: number; readonly max: number }, doc?: unknown): string {
  const unit = /\(([^)]*)\)\s*$/.exec(label)?.[1];
  return `allowed: ${boundsWords(numberBoundsAt(path, doc) ?? limits)}${unit ? ` (${unit})` : ''}`;
}

/** Switch a sub-object between modes, keeping the one switched away from. */
function swapMode(doc: unknown, memory: ModeMemory, path: PresetPath, memoryPrefix: string, fromMode: string, next: unknown): void {
  const current = getAt(doc, path);
  if (current !== undefined) memory.set(`${memoryPrefix}:${fromMode}`, current);
  if (next === undefined) deleteAt(doc, path);
  else setAt(doc, path, next);
}

function recall(memory: ModeMemory, key: string, fallback: () => unknown): unknown {
  return memory.has(key) ? JSON.parse(JSON.stringify(memory.get(key))) : fallback();
}

const repeller = (doc: unknown): number => num(doc, 'source.repeller.potential_V', NOMINAL_REPELLER_V);
const polarity = (doc: unknown): Preset['polarity'] => (getAt(doc, 'polarity') === 'negative' ? 'negative' : 'positive');
const firstGap = (doc: unknown): number =>
  has(doc, 'source.extractionGrid') ? num(doc, 'source.extractionGrid.gap_mm', 3) : num(doc, 'source.groundGrid.gap_mm', 10);

const POTENTIAL_WINDOW: readonly [number, number] = [-30_000, 30_000];
const twoStage = (doc: unknown): boolean => has(doc, 'source.extractionGrid');
const delayed = is('source.extraction.mode', 'delayed');
const mirrorOn = (doc: unknown): boolean => ['single', 'dual', 'profile', 'solved'].includes(String(getAt(doc, 'mirror.type')));
/** Mirrors with an entrance grid (a gridless mirror has an entrance electrode with an aperture). */
const griddedMirror = (doc: unknown): boolean => ['single', 'dual', 'profile'].includes(String(getAt(doc, 'mirror.type')));
/** Plates with apertures (solved field) in place of the source grids. */
const apertureSource = (doc: unknown): boolean => has(doc, 'source.solved');
const steppedMirror = (doc: unknown): boolean => getAt(doc, 'mirror.type') === 'single' || getAt(doc, 'mirror.type') === 'dual';

/** The fixed controls (species are added per species by `speciesFields`). */
export const FIELDS: readonly FieldSpec[] = [
  // Source
  {
    kind: 'select',
    key: 'polarity',
    group: 'source',
    label: 'ion polarity',
    path: 'polarity',
    options: { positive: 'positive', negative: 'negative' },
    get: (doc) => str(doc, 'polarity'),
    set: (doc, value) => setAt(doc, 'polarity', value),
  },
  {
    kind: 'boolean',
    key: 'twoStage',
    group: 'source',
    label: 'two-stage source',
    path: 'source.extractionGrid',
    get: twoStage,
    set: (doc, on, memory) => {
      if (on === twoStage(doc)) return;
      if (on) {
        const grid = recall(memory, 'extractionGrid:on', () => extractionGridFor(repeller(doc)));
        setAt(doc, 'source.extractionGrid', grid);
      } else {
        swapMode(doc, memory, 'source.extractionGrid', 'extractionGrid', 'on', undefined);
        // Aperture plates need the extraction electrode: set them aside with it.
        if (apertureSource(doc)) swapMode(doc, memory, 'source.solved', 'sourceSolved', 'on', undefined);
      }
    },
  },
  {
    kind: 'boolean',
    key: 'apertureSource',
    group: 'source',
    label: 'aperture plates (solved)',
    path: 'source.solved',
    visible: twoStage,
    get: apertureSource,
    set: (doc, on, memory) => {
      if (on === apertureSource(doc)) return;
      if (on) {
        // Plate geometry of the aperture-source demo (invented); gaps and potentials stay this setup's.
        const plates = recall(memory, 'sourceSolved:on', () => demo('aperture').source.solved);
        setAt(doc, 'source.solved', plates);
        // Plates have no grid transmission.
        deleteAt(doc, 'source.extractionGrid.transmission');
        deleteAt(doc, 'source.groundGrid.transmission');
      } else swapMode(doc, memory, 'source.solved', 'sourceSolved', 'on', undefined);
    },
  },
  numberAt('repeller_V', 'source', 'repeller potential (V)', 'source.repeller.potential_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW),
  numberAt('gridGap_mm', 'source', 'repeller → extraction grid (mm)', 'source.extractionGrid.gap_mm', LIMITS.sourceGap_mm, 0.01, [0.1, 30], twoStage),
  numberAt('grid_V', 'source', 'extraction grid potential (V)', 'source.extractionGrid.potential_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW, twoStage),
  numberAt('groundGap_mm', 'source', 'gap to ground grid (mm)', 'source.groundGrid.gap_mm', LIMITS.sourceGap_mm, 0.01, [0.1, 30]),
  numberAt(
    'gridTransmission',
    'source',
    'extraction grid transmission (0–1)',
    'source.extractionGrid.transmission',
    LIMITS.transmission,
    0.01,
    [0.01, 1],
    (doc) => twoStage(doc) && !apertureSource(doc),
    () => OMITTED_GRID_TRANSMISSION,
  ),
  numberAt('groundTransmission', 'source', 'ground grid transmission (0–1)', 'source.groundGrid.transmission', LIMITS.transmission, 0.01, [0.01, 1], (doc) => !apertureSource(doc), () => OMITTED_GRID_TRANSMISSION),

  // Timing
  {
    kind: 'select',
    key: 'extractionMode',
    group: 'timing',
    label: 'extraction',
    path: 'source.extraction.mode',
    options: { 'static field': 'static', 'delayed pulse': 'delayed' },
    get: (doc) => str(doc, 'source.extraction.mode'),
    set: (doc, mode, memory) => {
      const from = str(doc, 'source.extraction.mode');
      if (mode === from) return;
      const next = mode === 'delayed' ? recall(memory, 'extraction:delayed', () => extractionFor('delayed')) : extractionFor('static');
      swapMode(doc, memory, 'source.extraction', 'extraction', from, next);
    },
  },
  numberAt('delay_ns', 'timing', 'extraction delay (ns)', 'source.extraction.delay_ns', LIMITS.delay_ns, 1, [0, 2000], delayed),
  numberAt('repellerHold_V', 'timing', 'repeller during delay (V)', 'source.repeller.hold_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW, delayed, (doc) =>
    repellerHoldDefault_V(
      twoStage(doc) ? { potential_V: num(doc, 'source.extractionGrid.potential_V'), hold_V: has(doc, 'source.extractionGrid.hold_V') ? num(doc, 'source.extractionGrid.hold_V') : undefined } : null,
      num(doc, 'drift.potential_V'),
    ),
  ),
  numberAt(
    'gridHold_V',
    'timing',
    'extraction grid during delay (V)',
    'source.extractionGrid.hold_V',
    LIMITS.potential_V,
    10,
    POTENTIAL_WINDOW,
    (doc) => delayed(doc) && twoStage(doc),
    (doc) => extractionGridHoldDefault_V(num(doc, 'source.extractionGrid.potential_V')),
  ),

  {
    kind: 'select',
    key: 'riseShape',
    group: 'timing',
    label: 'pulse edge',
    path: 'source.extraction.rise.shape',
    options: { 'ideal step': 'step', 'linear ramp': 'linear', 'exponential (RC)': 'exponential', 'tabulated (from file)': 'table' },
    visible: delayed,
    get: (doc) => str(doc, 'source.extraction.rise.shape') || OMITTED_RISE_SHAPE,
    set: (doc, shape, memory) => {
      const from = str(doc, 'source.extraction.rise.shape') || OMITTED_RISE_SHAPE;
      if (shape === from) return;
      const defaults: Record<string, () => unknown> = {
        step: () => riseFor('step'),
        linear: () => riseFor('linear'),
        exponential: () => riseFor('exponential'),
        // A table cannot be typed here: keep a remembered one, else stay with the current edge.
        table: () => getAt(doc, 'source.extraction.rise'),
      };
      const next = recall(memory, `rise:${shape}`, defaults[shape] ?? defaults.step);
      swapMode(doc, memory, 'source.extraction.rise', 'rise', from, next);
    },
  },
  numberAt('riseTime_ns', 'timing', 'ramp time (ns)', 'source.extraction.rise.riseTime_ns', LIMITS.delay_ns, 0.5, [0.5, 500], is('source.extraction.rise.shape', 'linear')),
  numberAt(
    'timeConstant_ns',
    'timing',
    'time constant (ns)',
    'source.extraction.rise.timeConstant_ns',
    LIMITS.delay_ns,
    0.5,
    [0.5, 500],
    is('source.extraction.rise.shape', 'exponential'),
  ),

  // Drift
  numberAt('drift_mm', 'drift', 'drift length (mm)', 'drift.length_mm', LIMITS.driftLength_mm, 1, [50, 5000]),
  numberAt('drift_V', 'drift', 'drift tube potential (V)', 'drift.potential_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW),

  // Mirror
  {
    kind: 'select',
    key: 'mirrorType',
    group: 'mirror',
    label: 'mirror',
    path: 'mirror.type',
    options: {
      'none (linear)': 'none',
      'single-stage': 'single',
      'dual-stage': 'dual',
      'shaped field (profile)': 'profile',
      'gridless rings (solved field)': 'solved',
    },
    get: (doc) => str(doc, 'mirror.type'),
    set: (doc, type, memory) => {
      const from = str(doc, 'mirror.type');
      if (type === from) return;
      const known = ['none', 'single', 'dual', 'profile', 'solved'] as const;
      const kind = known.find((k) => k === type) ?? 'none';
      // A gridless mirror takes the ring-stack geometry of the gridless demo (invented).
      const scale = { repeller_V: repeller(doc), driftLength_mm: num(doc, 'drift.length_mm', NOMINAL_DRIFT_mm), driftPotential_V: num(doc, 'drift.potential_V') };
      const fresh = (): unknown => mirrorFor(kind, scale, kind === 'solved' ? demo('gridless').mirror : undefined);
      swapMode(doc, memory, 'mirror', 'mirror', from, recall(memory, `mirror:${type}`, fresh));
    },
  },
  numberAt('mirrorDepth_mm', 'mirror', 'mirror depth (mm)', 'mirror.depth_mm', LIMITS.mirrorStage_mm, 0.5, [1, 1000], (doc) =>
    ['single', 'profile'].includes(str(doc, 'mirror.type')),
  ),
  {
    kind: 'select',
    key: 'profileKind',
    group: 'mirror',
    label: 'field shape',
    path: 'mirror.profile.kind',
    options: { harmonic: 'harmonic', 'polynomial (from file)': 'polynomial', 'tabulated (from file)': 'table' },
    visible: is('mirror.type', 'profile'),
    get: (doc) => str(doc, 'mirror.profile.kind'),
    set: (doc, kind, memory) => {
      const from = str(doc, 'mirror.profile.kind');
      if (kind === from) return;
      const harmonic = () => harmonicProfileFor(repeller(doc));
      // Coefficient lists and tables are edited in the preset file; here only a remembered one comes back.
      const next = recall(memory, `profile:${kind}`, kind === 'harmonic' ? harmonic : () => getAt(doc, 'mirror.profile'));
      swapMode(doc, memory, 'mirror.profile', 'profile', from, next);
    },
  },
  numberAt('profileBack_V', 'mirror', 'back plate potential (V)', 'mirror.profile.backPlate_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW, (doc) =>
    getAt(doc, 'mirror.profile.kind') === 'harmonic',
  ),
  numberAt('decel_mm', 'mirror', 'decelerating stage (mm)', 'mirror.deceleratingLength_mm', LIMITS.mirrorStage_mm, 0.5, [1, 500], is('mirror.type', 'dual')),
  numberAt('intermediate_V', 'mirror', 'intermediate grid (V)', 'mirror.intermediateGrid_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW, is('mirror.type', 'dual')),
  numberAt('reflecting_mm', 'mirror', 'reflecting stage (mm)', 'mirror.reflectingLength_mm', LIMITS.mirrorStage_mm, 0.5, [1, 1000], is('mirror.type', 'dual')),
  numberAt('backPlate_V', 'mirror', 'back plate potential (V)', 'mirror.backPlate_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW, steppedMirror),
  // A gridless mirror: the ring potentials follow from the divider between the entrance electrode
  // (drift potential) and the back plate; geometry and divider ratios are edited in the preset file.
  numberAt(
    'solvedBack_V',
    'mirror',
    'back plate potential (V)',
    'mirror.backPlate.potential_V',
    FIELD_LIMITS.potential_V,
    10,
    POTENTIAL_WINDOW,
    is('mirror.type', 'solved'),
  ),
  numberAt('return_mm', 'mirror', 'mirror → detector (mm)', 'mirror.returnLength_mm', LIMITS.driftLength_mm, 1, [50, 5000], mirrorOn),
  numberAt(
    'entranceTransmission',
    'mirror',
    'entrance grid transmission (0–1)',
    'mirror.entranceGridTransmission',
    LIMITS.transmission,
    0.01,
    [0.01, 1],
    griddedMirror,
    () => OMITTED_GRID_TRANSMISSION,
  ),

  // Detector and acquisition
  {
    kind: 'boolean',
    key: 'postAcceleration',
    group: 'detector',
    label: 'post-acceleration gap',
    path: 'detector.postAcceleration',
    get: (doc) => has(doc, 'detector.postAcceleration'),
    set: (doc, on, memory) => {
      if (on === has(doc, 'detector.postAcceleration')) return;
      if (on) {
        const gap = recall(memory, 'post:on', () => postAccelerationFor(polarity(doc)));
        setAt(doc, 'detector.postAcceleration', gap);
      } else swapMode(doc, memory, 'detector.postAcceleration', 'post', 'on', undefined);
    },
  },
  numberAt('postGap_mm', 'detector', 'post-acceleration gap (mm)', 'detector.postAcceleration.gap_mm', LIMITS.postAccelerationGap_mm, 0.1, [0.5, 50], (doc) =>
    has(doc, 'detector.postAcceleration'),
  ),
  numberAt('post_V', 'detector', 'detector front potential (V)', 'detector.postAcceleration.potential_V', LIMITS.potential_V, 10, POTENTIAL_WINDOW, (doc) =>
    has(doc, 'detector.postAcceleration'),
  ),
  {
    kind: 'boolean',
    key: 'activeArea',
    group: 'detector',
    label: 'limited active area',
    path: 'detector.activeDiameter_mm',
    get: (doc) => has(doc, 'detector.activeDiameter_mm'),
    set: (doc, on, memory) => {
      if (on === has(doc, 'detector.activeDiameter_mm')) return;
      if (on) setAt(doc, 'detector.activeDiameter_mm', recall(memory, 'activeArea:on', () => ACTIVE_DIAMETER_DEFAULT_mm));
      else swapMode(doc, memory, 'detector.activeDiameter_mm', 'activeArea', 'on', undefined);
    },
  },
  numberAt('activeDiameter_mm', 'detector', 'active diameter (mm)', 'detector.activeDiameter_mm', LIMITS.detectorDiameter_mm, 0.5, [1, 100], (doc) =>
    has(doc, 'detector.activeDiameter_mm'),
  ),

  {
    kind: 'boolean',
    key: 'acquisition',
    group: 'detector',
    label: 'simulated digitizer',
    path: 'acquisition',
    get: (doc) => has(doc, 'acquisition'),
    set: (doc, on, memory) => {
      if (on === has(doc, 'acquisition')) return;
      if (on) {
        const settings = recall(memory, 'acquisition:on', acquisitionDefaults);
        setAt(doc, 'acquisition', settings);
      } else swapMode(doc, memory, 'acquisition', 'acquisition', 'on', undefined);
    },
  },
  numberAt('pulseWidth_ns', 'detector', 'single-ion pulse FWHM (ns)', 'acquisition.pulseWidth_ns', LIMITS.pulseWidth_ns, 0.05, [0, 10], (doc) => has(doc, 'acquisition')),
  numberAt('detectorJitter_ns', 'detector', 'detector jitter sd (ns)', 'acquisition.detectorJitter_ns', LIMITS.jitter_ns, 0.01, [0, 5], (doc) => has(doc, 'acquisition')),
  numberAt('triggerJitter_ns', 'detector', 'trigger jitter sd (ns)', 'acquisition.triggerJitter_ns', LIMITS.jitter_ns, 0.01, [0, 5], (doc) => has(doc, 'acquisition')),
  numberAt('shots', 'detector', 'shots summed', 'acquisition.shots', LIMITS.shots, 1, [1, 2000], (doc) => has(doc, 'acquisition')),
  numberAt('sampleInterval_ns', 'detector', 'sample interval (ns)', 'acquisition.sampleInterval_ns', LIMITS.sampleInterval_ns, 0.01, [0.05, 10], (doc) =>
    has(doc, 'acquisition'),
  ),
  numberAt('timeOffset_ns', 'detector', 'time offset, cables + electronics (ns)', 'acquisition.timeOffset_ns', LIMITS.timeOffset_ns, 0.1, [-200, 200], (doc) => has(doc, 'acquisition')),
  {
    kind: 'boolean',
    key: 'quadraticCalibration',
    group: 'detector',
    label: 'calibration with b·m/z term',
    path: 'analysis.quadraticCalibration',
    visible: (doc) => has(doc, 'analysis.calibrantMz'),
    get: (doc) => getAt(doc, 'analysis.quadraticCalibration') === true,
    set: (doc, on) => setAt(doc, 'analysis.quadraticCalibration', on),
  },

  // Ions (start conditions; species are separate)
  {
    kind: 'select',
    key: 'startPositionKind',
    group: 'ions',
    label: 'start position',
    path: 'ions.startPosition.kind',
    options: { 'on a surface': 'surface', 'uniform layer': 'uniform', 'gaussian cloud': 'gaussian' },
    get: (doc) => str(doc, 'ions.startPosition.kind'),
    set: (doc, kind, memory) => {
      const from = str(doc, 'ions.startPosition.kind');
      if (kind === from) return;
      const law = kind === 'uniform' || kind === 'gaussian' ? kind : 'surface';
      swapMode(doc, memory, 'ions.startPosition', 'startPosition', from, recall(memory, `startPosition:${kind}`, () => startPositionFor(law, firstGap(doc))));
    },
  },
  numberAt('position_mm', 'ions', 'start position (mm from repeller)', 'ions.startPosition.position_mm', LIMITS.position_mm, 0.01, [0, 30], is('ions.startPosition.kind', 'surface')),
  numberAt('from_mm', 'ions', 'layer from (mm)', 'ions.startPosition.from_mm', LIMITS.position_mm, 0.01, [0, 30], is('ions.startPosition.kind', 'uniform')),
  numberAt('to_mm', 'ions', 'layer to (mm)', 'ions.startPosition.to_mm', LIMITS.position_mm, 0.01, [0, 30], is('ions.startPosition.kind', 'uniform')),
  numberAt('mean_mm', 'ions', 'cloud centre (mm)', 'ions.startPosition.mean_mm', LIMITS.position_mm, 0.01, [0, 30], is('ions.startPosition.kind', 'gaussian')),
  numberAt('sd_mm', 'ions', 'cloud sd (mm)', 'ions.startPosition.sd_mm', LIMITS.positionSd_mm, 0.01, [0, 10], is('ions.startPosition.kind', 'gaussian')),
  {
    kind: 'select',
    key: 'startVelocityKind',
    group: 'ions',
    label: 'start velocity',
    path: 'ions.startVelocity.kind',
    options: { 'normal (m/s)': 'normal', 'energy spread (eV)': 'energy', 'thermal (K)': 'thermal' },
    get: (doc) => str(doc, 'ions.startVelocity.kind'),
    set: (doc, kind, memory) => {
      const from = str(doc, 'ions.startVelocity.kind');
      if (kind === from) return;
      const law = kind === 'energy' || kind === 'thermal' ? kind : 'normal';
      swapMode(doc, memory, 'ions.startVelocity', 'startVelocity', from, recall(memory, `startVelocity:${kind}`, () => startVelocityFor(law)));
    },
  },
  numberAt('vMean', 'ions', 'mean velocity (m/s)', 'ions.startVelocity.mean_m_per_s', LIMITS.velocity_m_per_s, 1, [-2000, 2000], is('ions.startVelocity.kind', 'normal')),
  numberAt('vSd', 'ions', 'velocity sd (m/s)', 'ions.startVelocity.sd_m_per_s', LIMITS.velocitySd_m_per_s, 1, [0, 1000], is('ions.startVelocity.kind', 'normal')),
  numberAt('eMean', 'ions', 'mean energy (eV)', 'ions.startVelocity.mean_eV', LIMITS.energy_eV, 0.01, [0, 20], is('ions.startVelocity.kind', 'energy')),
  numberAt('eSd', 'ions', 'energy sd (eV)', 'ions.startVelocity.sd_eV', LIMITS.energySd_eV, 0.01, [0, 10], is('ions.startVelocity.kind', 'energy')),
  numberAt('temperature_K', 'ions', 'temperature (K)', 'ions.startVelocity.temperature_K', LIMITS.temperature_K, 1, [0, 2000], is('ions.startVelocity.kind', 'thermal')),

  numberAt('spotRadius_mm', 'ions', 'spot radius (mm)', 'ions.transverse.spotRadius_mm', LIMITS.spotRadius_mm, 0.01, [0, 5]),
  {
    kind: 'select',
    key: 'transverseKind',
    group: 'ions',
    label: 'sideways velocity',
    path: 'ions.transverse.velocity.kind',
    options: { none: 'none', 'normal (m/s)': 'normal', 'angular (mrad)': 'angular', 'thermal (K)': 'thermal' },
    get: (doc) => str(doc, 'ions.transverse.velocity.kind') || OMITTED_TRANSVERSE_KIND,
    set: (doc, kind, memory) => {
      const from = str(doc, 'ions.transverse.velocity.kind') || OMITTED_TRANSVERSE_KIND;
      if (kind === from) return;
      const law = kind === 'normal' || kind === 'angular' || kind === 'thermal' ? kind : 'none';
      swapMode(doc, memory, 'ions.transverse.velocity', 'transverse', from, recall(memory, `transverse:${kind}`, () => transverseVelocityFor(law)));
    },
  },
  numberAt('transverseSd', 'ions', 'sideways velocity sd (m/s)', 'ions.transverse.velocity.sd_m_per_s', LIMITS.velocitySd_m_per_s, 1, [0, 1000], is('ions.transverse.velocity.kind', 'normal')),
  numberAt('transverseAngle', 'ions', 'angular spread sd (mrad)', 'ions.transverse.velocity.sd_mrad', LIMITS.angle_mrad, 0.1, [0, 50], is('ions.transverse.velocity.kind', 'angular')),
  numberAt(
    'transverseTemperature',
    'ions',
    'sideways temperature (K)',
    'ions.transverse.velocity.temperature_K',
    LIMITS.temperature_K,
    1,
    [0, 2000],
    is('ions.transverse.velocity.kind', 'thermal'),
  ),

  // Run
  numberAt('ions', 'run', 'ions per run', 'run.ions', LIMITS.ions, 1),
  numberAt('seed', 'run', 'random seed', 'run.seed', LIMITS.seed, 1),
  {
    kind: 'select',
    key: 'engine',
    group: 'run',
    label: 'engine',
    path: 'run.engine',
    options: { 'closed form where possible': 'auto', 'integrate everything (cross-check)': 'integrator' },
    get: (doc) => str(doc, 'run.engine') || 'auto',
    set: (doc, value) => setAt(doc, 'run.engine', value),
  },
];

/** Controls of species i (m/z, charge, abundance, label). */
/**
 * Keep a formula species' m/z in the draft equal to its chemistry's (validation recomputes it
 * anyway), so that clearing the formula leaves the species at the m/z it had. Unknown formulas
 * are left to validation, which reports them on the formula control.
 */
function syncChemistryMz(doc: unknown, base: SpeciesBase): void {
  const formula = getAt(doc, `${base}.formula`);
  if (typeof formula !== 'string') return;
  const before = getAt(doc, `${base}.mz`);
  const outcome = resolveChemistry({
    formula,
    adduct: str(doc, `${base}.adduct`) || 'protonated',
    charge: num(doc, `${base}.charge`, 1),
    polarity: getAt(doc, 'polarity') === 'negative' ? 'negative' : 'positive',
  });
  if (!outcome.ok) return;
  setAt(doc, `${base}.mz`, outcome.value.monoisotopicMz);
  followCalibrant(doc, before, outcome.value.monoisotopicMz);
}

/** A species marked as mass calibrant stays marked when its m/z changes (the list holds m/z values). */
function followCalibrant(doc: unknown, before: unknown, after: number): void {
  const list = getAt(doc, 'analysis.calibrantMz');
  if (!Array.isArray(list) || typeof before !== 'number' || before === after) return;
  const at = list.indexOf(before);
  if (at >= 0) setAt(doc, `analysis.calibrantMz[${at}]`, after);
}

export function speciesFields(i: number): FieldSpec[] {
  const base: SpeciesBase = `ions.species[${i}]`;
  return [
    {
      kind: 'text',
      key: `species${i}_label`,
      group: 'ions',
      label: 'label',
      path: `${base}.label`,
      get: (doc) => str(doc, `${base}.label`),
      set: (doc, value) => (value.trim() ? setAt(doc, `${base}.label`, value) : deleteAt(doc, `${base}.label`)),
    },
    {
      // A formula species' m/z (and isotope envelope) is computed from its chemistry when the setup is
      // validated, so its m/z control is hidden; clearing the formula keeps the last computed m/z.
      kind: 'text',
      key: `species${i}_formula`,
      group: 'ions',
      label: 'formula (neutral; sets m/z)',
      path: `${base}.formula`,
      get: (doc) => str(doc, `${base}.formula`),
      set: (doc, value) => {
        const formula = value.replace(/\s+/g, '');
        if (formula) {
          setAt(doc, `${base}.formula`, formula);
          if (!has(doc, `${base}.adduct`)) setAt(doc, `${base}.adduct`, 'protonated');
          syncChemistryMz(doc, base);
        } else {
          deleteAt(doc, `${base}.formula`);
          deleteAt(doc, `${base}.adduct`);
          deleteAt(doc, `${base}.isotopes`);
        }
      },
    },
    {
      kind: 'text',
      key: `species${i}_adduct`,
      group: 'ions',
      label: 'adduct (protonated, [M+Na]+, …)',
      path: `${base}.adduct`,
      visible: (doc) => has(doc, `${base}.formula`),
      get: (doc) => str(doc, `${base}.adduct`),
      set: (doc, value) => {
        setAt(doc, `${base}.adduct`, value.trim() || 'protonated');
        syncChemistryMz(doc, base);
      },
    },
    {
      ...numberAt(`species${i}_mz`, 'ions', 'm/z (Th)', `${base}.mz`, LIMITS.mz, 0.0001, undefined, (doc) => !has(doc, `${base}.formula`)),
      set: (doc: unknown, value: number) => {
        const before = getAt(doc, `${base}.mz`);
        setAt(doc, `${base}.mz`, value);
        followCalibrant(doc, before, value);
      },
    },
    {
      ...numberAt(`species${i}_charge`, 'ions', 'charge state z', `${base}.charge`, LIMITS.charge, 1),
      set: (doc: unknown, value: number) => {
        setAt(doc, `${base}.charge`, value);
        syncChemistryMz(doc, base);
      },
    },
    numberAt(`species${i}_abundance`, 'ions', 'relative abundance', `${base}.abundance`, LIMITS.abundance, 0.01, undefined, undefined, () => 1),
    {
      kind: 'boolean',
      key: `species${i}_calibrant`,
      group: 'ions',
      label: 'mass calibrant',
      path: 'analysis.calibrantMz',
      get: (doc) => {
        const list = getAt(doc, 'analysis.calibrantMz');
        return Array.isArray(list) && list.includes(getAt(doc, `${base}.mz`));
      },
      set: (doc, on) => {
        const mz = getAt(doc, `${base}.mz`);
        const list = getAt(doc, 'analysis.calibrantMz');
        const current = Array.isArray(list) ? (list as unknown[]).filter((m) => m !== mz) : [];
        if (on) current.push(mz);
        if (current.length) setAt(doc, 'analysis.calibrantMz', current);
        else deleteAt(doc, 'analysis.calibrantMz');
      },
    },
  ];
}

/** The species to add after the last one: 10 % heavier, same charge. */
export function nextSpecies(doc: unknown): { label: string; mz: number; charge: number; abundance: number } {
  const list = getAt(doc, 'ions.species');
  const last = Array.isArray(list) && list.length ? (list[list.length - 1] as { mz?: number; charge?: number }) : {};
  const mz = Math.round((typeof last.mz === 'number' ? last.mz * 1.1 : 1000) * 1e4) / 1e4;
  return { label: `species at m/z ${mz}`, mz, charge: typeof last.charge === 'number' ? last.charge : 1, abundance: 1 };
}

/** Slider span for a value: the field's window, widened to include the value (never past the limits). */
export function sliderSpan(field: NumberField, value: number): [number, number] | null {
  if (!field.window) return null;
  let [lo, hi] = field.window;
  if (Number.isFinite(value)) {
    if (value < lo) lo = Math.max(field.limits.min, niceFloor(value));
    if (value > hi) hi = Math.min(field.limits.max, niceCeil(value));
  }
  return [lo, hi];
}

function niceCeil(x: number): number {
  if (x <= 0) return -niceFloor(-x);
  const p = 10 ** Math.floor(Math.log10(x));
  for (const m of [1, 2, 5, 10]) if (m * p >= x) return m * p;
  return 10 * p;
}

function niceFloor(x: number): number {
  if (x >= 0) {
    if (x === 0) return 0;
    const p = 10 ** Math.floor(Math.log10(x));
    for (const m of [5, 2, 1]) if (m * p <= x) return m * p;
    return p;
  }
  return -niceCeil(-x);
}

/** The field that answers for a validation issue path: exact match, else the nearest enclosing one. */
export function fieldForIssue(fields: readonly FieldSpec[], issuePath: string): FieldSpec | undefined {
  let best: FieldSpec | undefined;
  for (const f of fields) {
    if (f.path === issuePath) return f;
    if (issuePath.startsWith(f.path + '.') && (!best || f.path.length > best.path.length)) best = f;
  }
  return best;
}
