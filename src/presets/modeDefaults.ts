/**
 * What a setup gets when one of its modes is switched on in an editor (a second source stage, a
 * delayed pulse, a mirror type, a start distribution, a digitizer …), and the values the compiler
 * assumes where a preset omits an optional one. The values are our invented demo scenario's
 * orders of magnitude, scaled to the setup where a potential or length depends on it. Editors take
 * them from here so that they own no physics; a test checks the omitted-value rules against
 * compilePreset.
 */
import type { Preset } from './schema';

type Mirror = Preset['mirror'];
type StartVelocity = Preset['ions']['startVelocity'];
type StartPosition = Preset['ions']['startPosition'];
type Extraction = Preset['source']['extraction'];
type Delayed = Extract<Extraction, { mode: 'delayed' }>;
type Rise = NonNullable<Delayed['rise']>;
type Transverse = NonNullable<Preset['ions']['transverse']>['velocity'];
type ProfileMirror = Extract<Mirror, { type: 'profile' }>;

const round = (x: number, step: number): number => Math.round(x / step) * step;

/** Repeller potential assumed while a draft has none (the demos' 20 kV). */
export const NOMINAL_REPELLER_V = 20_000;
/** Drift length assumed while a draft has none (mm). */
export const NOMINAL_DRIFT_mm = 1000;

// ---- omitted optional values, as compilePreset reads them -----------------------------------------
/** An omitted grid transmission (source, mirror or detector grid): an ideal, fully open grid. */
export const OMITTED_GRID_TRANSMISSION = 1;
/** An omitted pulse edge is an ideal step. */
export const OMITTED_RISE_SHAPE = 'step';
/** An omitted transverse velocity law: none. */
export const OMITTED_TRANSVERSE_KIND = 'none';

/** The extraction grid's potential during the delay when the preset omits it: its potential after the pulse. */
export function extractionGridHoldDefault_V(gridPotential_V: number): number {
  return gridPotential_V;
}

/**
 * The repeller's potential during the delay when the preset omits it: that of the next plane, so
 * that the first stage is field-free while the ions wait (the grid's hold potential in a two-stage
 * source, else the drift tube's).
 */
export function repellerHoldDefault_V(grid: { readonly potential_V: number; readonly hold_V?: number } | null, driftPotential_V: number): number {
  return grid ? (grid.hold_V ?? extractionGridHoldDefault_V(grid.potential_V)) : driftPotential_V;
}

// ---- a mode switched on -------------------------------------------------------------------------
/** A second source stage: 3 mm, at 94 % of the repeller potential. */
export function extractionGridFor(repeller_V: number): { gap_mm: number; potential_V: number } {
  return { gap_mm: 3, potential_V: round(0.94 * repeller_V, 10) };
}

export function extractionFor(mode: Extraction['mode']): Extraction {
  return mode === 'delayed' ? { mode: 'delayed', delay_ns: 150 } : { mode: 'static' };
}

/** A pulse edge of this shape; undefined for the ideal step (the field is omitted). A table has no default. */
export function riseFor(shape: 'step' | 'linear' | 'exponential'): Rise | undefined {
  if (shape === 'linear') return { shape: 'linear', riseTime_ns: 20 };
  if (shape === 'exponential') return { shape: 'exponential', timeConstant_ns: 10 };
  return undefined;
}

export function harmonicProfileFor(repeller_V: number): ProfileMirror['profile'] {
  return { kind: 'harmonic', backPlate_V: round(1.3 * repeller_V, 10) };
}

export interface MirrorScale {
  readonly repeller_V: number;
  readonly driftLength_mm: number;
  readonly driftPotential_V: number;
}

/**
 * A mirror of this type sized to the source: back plate some 6–30 % above the repeller, return leg
 * 0.8 × the drift. A gridless mirror takes its ring-stack geometry from `solvedTemplate` (an
 * invented demo's), its back plate 1.12 × the repeller's potential above the drift tube.
 */
export function mirrorFor(type: Mirror['type'], scale: MirrorScale, solvedTemplate?: Mirror): Mirror {
  const rep = scale.repeller_V;
  const returnLength_mm = round(0.8 * scale.driftLength_mm, 1);
  switch (type) {
    case 'single':
      return { type: 'single', depth_mm: 300, backPlate_V: round(1.12 * rep, 10), returnLength_mm };
    case 'dual':
      return { type: 'dual', deceleratingLength_mm: 30, intermediateGrid_V: round(0.69 * rep, 10), reflectingLength_mm: 100, backPlate_V: round(1.06 * rep, 10), returnLength_mm };
    case 'profile':
      return { type: 'profile', depth_mm: 300, profile: harmonicProfileFor(rep), returnLength_mm };
    case 'solved': {
      if (!solvedTemplate || solvedTemplate.type !== 'solved') throw new Error('a gridless mirror needs a ring-stack template');
      const m = structuredClone(solvedTemplate);
      m.backPlate.potential_V = round(scale.driftPotential_V + 1.12 * (rep - scale.driftPotential_V), 10);
      m.returnLength_mm = returnLength_mm;
      return m;
    }
    default:
      return { type: 'none' };
  }
}

/** A start-position law scaled to the first source gap (mm). */
export function startPositionFor(kind: StartPosition['kind'], firstGap_mm: number): StartPosition {
  if (kind === 'uniform') return { kind: 'uniform', from_mm: 0, to_mm: round(0.2 * firstGap_mm, 0.01) };
  if (kind === 'gaussian') return { kind: 'gaussian', mean_mm: round(0.5 * firstGap_mm, 0.01), sd_mm: round(0.05 * firstGap_mm, 0.01) };
  return { kind: 'surface', position_mm: 0 };
}

/** A start-velocity law: a desorption plume (400 ± 150 m/s), an energy spread (1 ± 0.5 eV) or a 300 K gas. */
export function startVelocityFor(kind: StartVelocity['kind']): StartVelocity {
  if (kind === 'energy') return { kind: 'energy', mean_eV: 1, sd_eV: 0.5 };
  if (kind === 'thermal') return { kind: 'thermal', temperature_K: 300 };
  return { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 150, minimum_m_per_s: 0 };
}

export function transverseVelocityFor(kind: Transverse['kind']): Transverse {
  if (kind === 'normal') return { kind: 'normal', sd_m_per_s: 100 };
  if (kind === 'angular') return { kind: 'angular', sd_mrad: 5 };
  if (kind === 'thermal') return { kind: 'thermal', temperature_K: 300 };
  return { kind: 'none' };
}

/** A post-acceleration gap: 5 mm, 5 kV towards the ions' polarity. */
export function postAccelerationFor(polarity: Preset['polarity']): NonNullable<Preset['detector']['postAcceleration']> {
  return { gap_mm: 5, potential_V: polarity === 'negative' ? 5000 : -5000 };
}

/** A limited detector face (mm). */
export const ACTIVE_DIAMETER_DEFAULT_mm = 40;

/** A simulated digitizer: 1 ns pulses, 0.1 ns jitters, 200 shots, 0.25 ns samples. */
export function acquisitionDefaults(): NonNullable<Preset['acquisition']> {
  return { pulseWidth_ns: 1, detectorJitter_ns: 0.1, triggerJitter_ns: 0.1, shots: 200, sampleInterval_ns: 0.25 };
}
