/**
 * The tolerance parameters of one preset and how each perturbs it.
 *
 * A perturbation is applied to the validated preset (a modified copy, validated again), so every
 * engine — closed form, integrator, solved fields — sees it through its ordinary run path:
 * - a supply drift scales every potential that supply sets by (1 + value·1e-6) (a pulsed
 *   electrode's hold and extraction values together: one supply feeds the pulser);
 * - a delay offset adds to source.extraction.delay_ns;
 * - a temperature change scales lengths by (1 + α·ΔT): the flight tube's drift and return lengths,
 *   the mirror's stage lengths;
 * - a grid or detector position error moves that plane along the axis (the gaps on both sides
 *   change, the other planes stay);
 * - a detector tilt is applied to the arrival times after the trace (see tiltArrivalTimes).
 * Geometry inside a solved-field region is not perturbed: a micrometre change is far below the
 * mesh spacing, so a re-solve would not see it; those parameters are left out of the list.
 * Shot-to-shot terms (ripple, delay and trigger jitter) share the flight-time derivative of their
 * slow counterpart; they are applied per shot to the arrival times (src/tolerance/evaluate.ts).
 */
import { validatePreset } from '../presets/load';
import type { PresetResult } from '../presets/issues';
import type { Preset } from '../presets/schema';
import type { ToleranceSettings } from '../presets/toleranceSchema';
import { tolerancesSchema } from '../presets/toleranceSchema';
import { materialExpansion_per_K } from './materials';

export type ToleranceUnit = 'ppm' | 'ns' | 'K' | 'µm' | 'mrad';

export interface ToleranceParameter {
  /** Stable identifier, e.g. `supply.repeller.drift`. */
  readonly id: string;
  readonly label: string;
  readonly unit: ToleranceUnit;
  /** 'slow': differs between acquisitions (moves the peak); 'shot': differs between the shots of one acquisition (broadens it). */
  readonly kind: 'slow' | 'shot';
  /** The preset key the tolerance is read from. */
  readonly settingPath: string;
  /** Standard uncertainty (1 sd) from the preset's tolerances section, 0 when not given. */
  readonly tolerance: number;
  /** Central-difference step, in the parameter's unit. */
  readonly step: number;
  /** Shot terms: the slow parameter whose flight-time derivative they share (null: the trigger, dt = 1 per unit). */
  readonly linkedTo?: string | null;
}

type Doc = Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any

interface SlowAction {
  readonly apply: (doc: Doc, value: number, preset: Preset) => void;
}

type SupplyName = keyof ToleranceSettings['supplies'];

const SUPPLY_LABELS: Record<SupplyName, string> = {
  repeller: 'repeller supply',
  extractionGrid: 'extraction-grid supply',
  driftTube: 'drift-tube supply',
  mirrorIntermediateGrid: 'mirror intermediate-grid supply',
  mirrorBackPlate: 'mirror back-plate supply',
  postAcceleration: 'post-acceleration supply',
};

/** Steps of the central differences: small enough to stay linear, large enough to dwarf rounding (measured in the tests). */
const STEP = { ppm: 10, ns: 0.5, K: 1, µm: 10, mrad: 1 } as const;

/** The tolerances section with defaults (a preset without one is perfectly stable). */
export function toleranceSettings(preset: Preset): ToleranceSettings {
  return preset.tolerances ?? tolerancesSchema.parse({});
}

function scaleAt(node: Doc | undefined, key: string | number, factor: number): void {
  if (node && typeof node[key] === 'number') node[key] *= factor;
}

/** Multiply every potential the supply sets by `factor`. */
function scaleSupply(doc: Doc, supply: SupplyName, factor: number): void {
  const src = doc.source;
  const rise = src.extraction?.rise;
  switch (supply) {
    case 'repeller':
      scaleAt(src.repeller, 'potential_V', factor);
      scaleAt(src.repeller, 'hold_V', factor);
      if (rise?.shape === 'table' && rise.repeller) for (const p of rise.repeller) p[1] *= factor;
      return;
    case 'extractionGrid':
      scaleAt(src.extractionGrid, 'potential_V', factor);
      scaleAt(src.extractionGrid, 'hold_V', factor);
      if (rise?.shape === 'table' && rise.extractionGrid) for (const p of rise.extractionGrid) p[1] *= factor;
      return;
    case 'driftTube':
      scaleAt(doc.drift, 'potential_V', factor);
      return;
    case 'mirrorIntermediateGrid':
      scaleAt(doc.mirror, 'intermediateGrid_V', factor);
      return;
    case 'mirrorBackPlate': {
      const m = doc.mirror;
      if (m.type === 'single' || m.type === 'dual') scaleAt(m, 'backPlate_V', factor);
      else if (m.type === 'solved') scaleAt(m.backPlate, 'potential_V', factor);
      else if (m.type === 'profile') {
        const p = m.profile;
        if (p.kind === 'harmonic') scaleAt(p, 'backPlate_V', factor);
        else if (p.kind === 'polynomial') p.coefficients_V = p.coefficients_V.map((c: number) => c * factor);
        else for (const pt of p.points) pt[1] *= factor;
      }
      return;
    }
    case 'postAcceleration':
      scaleAt(doc.detector.postAcceleration, 'potential_V', factor);
      return;
  }
}

/** The potential setting that tells whether a supply exists and is not at 0 V. */
function supplySetting(preset: Preset, supply: SupplyName): number {
  const m = preset.mirror;
  switch (supply) {
    case 'repeller':
      return Math.abs(preset.source.repeller.potential_V) + Math.abs(preset.source.repeller.hold_V ?? 0);
    case 'extractionGrid':
      return preset.source.extractionGrid ? Math.abs(preset.source.extractionGrid.potential_V) + Math.abs(preset.source.extractionGrid.hold_V ?? 0) : 0;
    case 'driftTube':
      return Math.abs(preset.drift.potential_V);
    case 'mirrorIntermediateGrid':
      return m.type === 'dual' ? Math.abs(m.intermediateGrid_V) : 0;
    case 'mirrorBackPlate':
      return m.type === 'none' ? 0 : 1;
    case 'postAcceleration':
      return preset.detector.postAcceleration ? Math.abs(preset.detector.postAcceleration.potential_V) : 0;
  }
}

function tubeExpansion(t: ToleranceSettings['temperature']): number {
  return t.tubeExpansion_per_K ?? materialExpansion_per_K(t.tubeMaterial);
}

function mirrorExpansion(t: ToleranceSettings['temperature']): number {
  return t.mirrorExpansion_per_K ?? materialExpansion_per_K(t.mirrorMaterial);
}

interface Entry {
  readonly parameter: ToleranceParameter;
  readonly action: SlowAction | null;
}

/** Every tolerance parameter that applies to this preset's geometry, in a fixed order, with how it is applied. */
function entries(preset: Preset): Entry[] {
  const tol = toleranceSettings(preset);
  const out: Entry[] = [];
  const slow = (p: Omit<ToleranceParameter, 'kind' | 'step'>, apply: SlowAction['apply']): void => {
    out.push({ parameter: { ...p, kind: 'slow', step: STEP[p.unit] }, action: { apply } });
  };
  const shot = (p: Omit<ToleranceParameter, 'kind' | 'step'>): void => {
    out.push({ parameter: { ...p, kind: 'shot', step: STEP[p.unit] }, action: null });
  };
  const mirror = preset.mirror;
  const solvedSource = Boolean(preset.source.solved);
  const gridded = mirror.type === 'single' || mirror.type === 'dual';

  for (const supply of Object.keys(SUPPLY_LABELS) as SupplyName[]) {
    if (!(supplySetting(preset, supply) > 0)) continue;
    const s = tol.supplies[supply];
    const base = `tolerances.supplies.${supply}`;
    slow({ id: `supply.${supply}.drift`, label: `${SUPPLY_LABELS[supply]} drift`, unit: 'ppm', settingPath: `${base}.drift_ppm`, tolerance: s?.drift_ppm ?? 0 }, (doc, v) =>
      scaleSupply(doc, supply, 1 + v * 1e-6),
    );
    shot({ id: `supply.${supply}.ripple`, label: `${SUPPLY_LABELS[supply]} ripple`, unit: 'ppm', settingPath: `${base}.ripple_ppm`, tolerance: s?.ripple_ppm ?? 0, linkedTo: `supply.${supply}.drift` });
  }
  if (preset.source.extraction.mode === 'delayed') {
    slow({ id: 'timing.delayOffset', label: 'extraction delay offset', unit: 'ns', settingPath: 'tolerances.timing.delayOffset_ns', tolerance: tol.timing.delayOffset_ns }, (doc, v) => {
      doc.source.extraction.delay_ns += v;
    });
    shot({ id: 'timing.delayJitter', label: 'extraction delay jitter', unit: 'ns', settingPath: 'tolerances.timing.delayJitter_ns', tolerance: tol.timing.delayJitter_ns, linkedTo: 'timing.delayOffset' });
  }
  shot({ id: 'timing.triggerJitter', label: 'start (trigger) jitter', unit: 'ns', settingPath: 'tolerances.timing.triggerJitter_ns', tolerance: tol.timing.triggerJitter_ns, linkedTo: null });

  const alphaTube = tubeExpansion(tol.temperature);
  slow(
    { id: 'temperature.flightTube', label: `flight-tube temperature (α = ${alphaTube.toExponential(2)}/K)`, unit: 'K', settingPath: 'tolerances.temperature.flightTube_K', tolerance: tol.temperature.flightTube_K },
    (doc, v) => {
      const f = 1 + alphaTube * v;
      doc.drift.length_mm *= f;
      if (doc.mirror.type !== 'none') doc.mirror.returnLength_mm *= f;
    },
  );
  if (mirror.type === 'single' || mirror.type === 'dual' || mirror.type === 'profile') {
    const alphaMirror = mirrorExpansion(tol.temperature);
    slow(
      { id: 'temperature.mirror', label: `mirror temperature (α = ${alphaMirror.toExponential(2)}/K)`, unit: 'K', settingPath: 'tolerances.temperature.mirror_K', tolerance: tol.temperature.mirror_K },
      (doc, v) => {
        const f = 1 + alphaMirror * v;
        const m = doc.mirror;
        if (m.type === 'dual') {
          m.deceleratingLength_mm *= f;
          m.reflectingLength_mm *= f;
        } else {
          m.depth_mm *= f;
          if (m.type === 'profile' && m.profile.kind === 'table') for (const pt of m.profile.points) pt[0] *= f;
        }
      },
    );
  }

  const um = (v: number): number => v * 1e-3; // µm → mm
  if (preset.source.extractionGrid && !solvedSource) {
    slow({ id: 'position.extractionGrid', label: 'extraction-grid position', unit: 'µm', settingPath: 'tolerances.positions.extractionGrid_um', tolerance: tol.positions.extractionGrid_um }, (doc, v) => {
      doc.source.extractionGrid.gap_mm += um(v);
      doc.source.groundGrid.gap_mm -= um(v);
    });
  }
  if (!solvedSource) {
    slow({ id: 'position.groundGrid', label: 'ground-grid position', unit: 'µm', settingPath: 'tolerances.positions.groundGrid_um', tolerance: tol.positions.groundGrid_um }, (doc, v) => {
      doc.source.groundGrid.gap_mm += um(v);
      doc.drift.length_mm -= um(v);
    });
  }
  if (gridded) {
    slow({ id: 'position.mirrorEntranceGrid', label: 'mirror entrance-grid position', unit: 'µm', settingPath: 'tolerances.positions.mirrorEntranceGrid_um', tolerance: tol.positions.mirrorEntranceGrid_um }, (doc, v) => {
      const m = doc.mirror;
      doc.drift.length_mm += um(v);
      m.returnLength_mm += um(v);
      if (m.type === 'dual') m.deceleratingLength_mm -= um(v);
      else m.depth_mm -= um(v);
    });
  }
  if (mirror.type === 'dual') {
    slow(
      { id: 'position.mirrorIntermediateGrid', label: 'mirror intermediate-grid position', unit: 'µm', settingPath: 'tolerances.positions.mirrorIntermediateGrid_um', tolerance: tol.positions.mirrorIntermediateGrid_um },
      (doc, v) => {
        doc.mirror.deceleratingLength_mm += um(v);
        doc.mirror.reflectingLength_mm -= um(v);
      },
    );
  }
  slow({ id: 'position.detector', label: 'detector position', unit: 'µm', settingPath: 'tolerances.positions.detector_um', tolerance: tol.positions.detector_um }, (doc, v) => {
    if (doc.detector.postAcceleration) doc.detector.postAcceleration.gap_mm += um(v);
    else if (doc.mirror.type === 'none') doc.drift.length_mm += um(v);
    else doc.mirror.returnLength_mm += um(v);
  });
  // The tilt acts on the arrival times (tiltArrivalTimes), not on the preset.
  out.push({
    parameter: { id: TILT_ID, label: 'detector-plane tilt', unit: 'mrad', kind: 'slow', settingPath: 'tolerances.detectorTilt_mrad', tolerance: tol.detectorTilt_mrad, step: STEP.mrad },
    action: null,
  });
  return out;
}

export const TILT_ID = 'detector.tilt';
export const TRIGGER_ID = 'timing.triggerJitter';

export function toleranceParameters(preset: Preset): ToleranceParameter[] {
  return entries(preset).map((e) => e.parameter);
}

/**
 * A copy of the preset with the slow perturbations applied (values by parameter id, in their
 * units), validated like a loaded file. The tilt and the shot terms are not part of the preset and
 * are ignored here.
 */
export function perturbedPreset(preset: Preset, values: Readonly<Record<string, number>>): PresetResult<Preset> {
  const list = entries(preset);
  const doc = JSON.parse(JSON.stringify(preset)) as Doc;
  for (const [id, value] of Object.entries(values)) {
    const entry = list.find((e) => e.parameter.id === id);
    if (!entry) throw new Error(`unknown tolerance parameter ${id}`);
    if (value !== 0 && entry.action) entry.action.apply(doc, value, preset);
  }
  return validatePreset(doc);
}
