/**
 * The transmission constraint of a tune, per species: a tune may not buy a narrow peak by losing
 * ions of any species. One default everywhere (tuning API, CLI, app): every species keeps at least
 * 99 % of the transmission it has at the preset's own settings (so the preset itself is always
 * feasible, and a setting that lets part of one species strike the repeller is refused, naming it).
 * An absolute floor per species (the same fraction for every species) may be asked instead.
 */
import type { ScanSpeciesPoint } from './api';
import { TuningInputError } from './errors';

/** Default: this share of each species' transmission at the preset's current settings. */
export const DEFAULT_TRANSMISSION_SHARE = 0.99;

/** A species is reported as binding when its transmission is within this much (absolute) of its floor. */
export const BINDING_MARGIN = 0.01;

export type TransmissionConstraint =
  | { readonly kind: 'share'; readonly share: number }
  | { readonly kind: 'floor'; readonly floor: number };

export const DEFAULT_TRANSMISSION_CONSTRAINT: TransmissionConstraint = { kind: 'share', share: DEFAULT_TRANSMISSION_SHARE };

/** The constraint a request asks for: an absolute floor, a share of the current transmission, or the default. */
export function constraintOf(
  request: { readonly minTransmission?: number; readonly keepTransmission?: number },
  labels: { readonly minTransmission: string; readonly keepTransmission: string } = { minTransmission: 'minTransmission', keepTransmission: 'keepTransmission' },
): TransmissionConstraint {
  const { minTransmission: floor, keepTransmission: share } = request;
  if (floor !== undefined && share !== undefined) {
    throw new TuningInputError(labels.keepTransmission, `give either ${labels.minTransmission} (an absolute floor) or ${labels.keepTransmission} (a share of the current transmission), not both`);
  }
  if (floor !== undefined) {
    if (!(floor >= 0 && floor <= 1)) throw new TuningInputError(labels.minTransmission, `must be a fraction from 0 to 1 (got ${floor})`);
    return { kind: 'floor', floor };
  }
  if (share !== undefined) {
    if (!(share >= 0 && share <= 1)) throw new TuningInputError(labels.keepTransmission, `must be a fraction from 0 to 1 (got ${share})`);
    return { kind: 'share', share };
  }
  return DEFAULT_TRANSMISSION_CONSTRAINT;
}

/**
 * The floor of every species (index as in the preset and the report). Species with no abundance are
 * not constrained (floor 0). `current` is each species' transmission at the preset's own settings.
 */
export function transmissionFloors(constraint: TransmissionConstraint, current: readonly number[], abundance: readonly number[]): number[] {
  return current.map((t, i) => (abundance[i] > 0 ? (constraint.kind === 'share' ? constraint.share * t : constraint.floor) : 0));
}

/** Sum over species of how far each falls below its floor (0 when every species meets it). */
export function transmissionShortfall(floors: readonly number[] | undefined, transmission: (i: number) => number): number {
  if (!floors) return 0;
  let short = 0;
  for (let i = 0; i < floors.length; i++) short += Math.max(0, floors[i] - transmission(i));
  return short;
}

export interface SpeciesMargin {
  readonly index: number;
  readonly label: string;
  readonly mz: number;
  readonly transmission: number;
  readonly floor: number;
}

export interface TransmissionCheck {
  /** Species below their floor at the recommended setting (empty when the constraint is met). */
  readonly violated: readonly SpeciesMargin[];
  /** The species closest to its floor, when it is within BINDING_MARGIN (the constraint is then what limits the tune). */
  readonly binding: SpeciesMargin | null;
}

/** Which species break or bind the constraint at a setting's per-species figures. */
export function checkTransmission(floors: readonly number[], species: readonly ScanSpeciesPoint[]): TransmissionCheck {
  const margins: SpeciesMargin[] = [];
  species.forEach((s, index) => {
    const floor = floors[index] ?? 0;
    if (floor > 0) margins.push({ index, label: s.label ?? `m/z ${s.mz}`, mz: s.mz, transmission: s.transmission, floor });
  });
  const violated = margins.filter((m) => m.transmission < m.floor);
  let closest: SpeciesMargin | null = null;
  for (const m of margins) if (m.transmission >= m.floor && (!closest || m.transmission - m.floor < closest.transmission - closest.floor)) closest = m;
  return { violated, binding: closest && closest.transmission - closest.floor < BINDING_MARGIN ? closest : null };
}

const pct = (x: number): string => `${(x * 100).toFixed(1)} %`;

/** The constraint in words, the same in the CLI, the app and the report. */
export function describeConstraint(constraint: TransmissionConstraint): string {
  return constraint.kind === 'share'
    ? `every species keeps at least ${pct(constraint.share)} of its transmission at the preset's settings`
    : `every species keeps a transmission of at least ${pct(constraint.floor)}`;
}

const speciesWords = (m: SpeciesMargin): string => `${m.label} (m/z ${m.mz.toFixed(4)})`;

/** One line per finding: a refused constraint names each species below its floor; a binding one names the species. */
export function transmissionFindings(check: TransmissionCheck): string[] {
  if (check.violated.length) {
    return [
      `REFUSED: no setting tried meets the transmission constraint; ${check.violated
        .map((m) => `${speciesWords(m)} keeps ${pct(m.transmission)} against its floor ${pct(m.floor)}`)
        .join('; ')}. The values shown only come closest to it.`,
    ];
  }
  if (check.binding) {
    return [`The transmission constraint binds: ${speciesWords(check.binding)} keeps ${pct(check.binding.transmission)}, its floor is ${pct(check.binding.floor)}; a looser constraint may give a narrower peak by losing its ions.`];
  }
  return [];
}
