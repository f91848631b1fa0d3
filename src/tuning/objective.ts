/**
 * Objectives of a scan or a tune: which species they look at, the value reported to the user
 * (R and FWHM from the histogram, as the run report gives them) and the smooth cost the optimiser
 * minimises (see `WidthMeasure` in ./api).
 */
import type { Preset } from '../presets/schema';
import type { RunReport, SpeciesReport } from '../simulation/report';
import type { Objective, ObjectiveName, ResolvingPowerCriterion, WidthMeasure } from './api';
import { CRITERIA } from '../simulation/headline';
import { TuningInputError } from './errors';
import { transmissionShortfall } from './transmissionConstraint';

export const OBJECTIVE_NAMES: readonly ObjectiveName[] = ['max-r-at-mz', 'max-min-r-over-range', 'min-fwhm'];
export const WIDTH_MEASURES: readonly WidthMeasure[] = ['sd', 'shortest', 'fwhm'];

/** FWHM / sd of a gaussian: 2·sqrt(2·ln 2). */
export const GAUSSIAN_FWHM_PER_SD = 2 * Math.sqrt(2 * Math.LN2);

/** Cost of a point that cannot be scored (nothing detected, invalid settings); above any real cost. */
export const INFEASIBLE_COST = 1e12;

export interface ResolvedObjective {
  readonly objective: Objective;
  /** Species indices the objective looks at (one for a target m/z). */
  readonly species: readonly number[];
  /** True when larger is better in the reported value (resolving power); false for widths. */
  readonly maximise: boolean;
}

/** Labels of the arguments in messages: the CLI passes its flag names, the service its field names. */
export interface ObjectiveLabels {
  readonly name: string;
  readonly targetMz: string;
  readonly range: string;
}

export const REQUEST_LABELS: ObjectiveLabels = { name: 'objective.name', targetMz: 'objective.targetMz', range: 'objective.range' };

/** Largest distance between a target m/z and the species it picks (Th). */
export function targetTolerance(mz: number): number {
  return Math.max(0.5, 1e-4 * mz);
}

export function resolveObjective(objective: Objective, preset: Preset, labels: ObjectiveLabels = REQUEST_LABELS): ResolvedObjective {
  const species = preset.ions.species;
  const list = species.map((s) => s.mz).join(', ');
  if (!OBJECTIVE_NAMES.includes(objective.name)) {
    throw new TuningInputError(labels.name, `unknown objective "${String(objective.name)}" (choose ${OBJECTIVE_NAMES.join(', ')})`);
  }
  if (objective.name === 'max-min-r-over-range') {
    const range = objective.range;
    if (!range) throw new TuningInputError(labels.range, `is required by the objective ${objective.name} (give the m/z range as A:B)`);
    const [a, b] = range;
    if (!Number.isFinite(a) || !Number.isFinite(b) || !(a < b)) {
      throw new TuningInputError(labels.range, `must be two finite m/z values A < B (got ${a}:${b})`);
    }
    const inside: number[] = [];
    species.forEach((s, i) => {
      if (s.mz >= a && s.mz <= b && s.abundance > 0) inside.push(i);
    });
    if (inside.length === 0) throw new TuningInputError(labels.range, `holds no species of the preset (m/z ${list})`);
    return { objective, species: inside, maximise: true };
  }
  const target = objective.targetMz;
  if (target === undefined) {
    throw new TuningInputError(labels.targetMz, `is required by the objective ${objective.name} (give the m/z of a species of the preset: ${list})`);
  }
  if (!Number.isFinite(target) || target <= 0) throw new TuningInputError(labels.targetMz, `must be a positive m/z (got ${target})`);
  let best = -1;
  species.forEach((s, i) => {
    if (s.abundance > 0 && (best < 0 || Math.abs(s.mz - target) < Math.abs(species[best].mz - target))) best = i;
  });
  if (best < 0 || Math.abs(species[best].mz - target) > targetTolerance(target)) {
    throw new TuningInputError(labels.targetMz, `matches no species of the preset within ±${targetTolerance(target)} Th (m/z ${list})`);
  }
  return { objective, species: [best], maximise: objective.name !== 'min-fwhm' };
}

/**
 * The criterion a request reads: as given, else 'spectrum' when the preset has acquisition settings
 * (the R an instrument would measure), else 'ideal'. Throws naming `label` when it cannot apply.
 */
export function resolveCriterion(preset: Preset, criterion: ResolvingPowerCriterion | undefined, label = 'criterion'): ResolvingPowerCriterion {
  if (criterion === undefined) return preset.acquisition ? 'spectrum' : 'ideal';
  if (!CRITERIA.includes(criterion)) throw new TuningInputError(label, `unknown criterion "${String(criterion)}" (choose ${CRITERIA.join(', ')})`);
  if (criterion === 'spectrum' && !preset.acquisition) {
    throw new TuningInputError(label, 'the spectrum R needs the preset\'s "acquisition" settings (detector and digitizer); use the ideal-detector R instead');
  }
  return criterion;
}

/** FWHM (ns) of a species by criterion: its spectrum peak's, or its ions' histogram FWHM. */
function fwhmBy(s: SpeciesReport, criterion: ResolvingPowerCriterion): number | null {
  return criterion === 'spectrum' ? (s.peak?.fwhm_ns ?? null) : s.fwhm_ns;
}

/** R (FWHM) of a species by criterion. */
export function resolvingPowerByCriterion(s: SpeciesReport, criterion: ResolvingPowerCriterion): number | null {
  return criterion === 'spectrum' ? (s.peak?.resolvingPower ?? null) : s.resolvingPower;
}

/** The objective as reported: R (FWHM) at the target, the least R over the range, or the FWHM (ns); by criterion. */
export function reportedObjective(resolved: ResolvedObjective, report: RunReport, criterion: ResolvingPowerCriterion = 'ideal'): number | null {
  if (resolved.objective.name === 'min-fwhm') return fwhmBy(report.species[resolved.species[0]], criterion);
  let least: number | null = null;
  for (const s of resolved.species) {
    const r = resolvingPowerByCriterion(report.species[s], criterion);
    if (r === null) return null;
    if (least === null || r < least) least = r;
  }
  return least;
}

/** Peak width of one species by `measure` (ns), null when undefined. */
export function widthOf(s: SpeciesReport, measure: WidthMeasure): number | null {
  if (measure === 'fwhm') return s.fwhm_ns;
  if (measure === 'shortest') return s.fwhmShortest_ns;
  return s.sdFlightTime_ns === null ? null : s.sdFlightTime_ns * GAUSSIAN_FWHM_PER_SD;
}

/** R = t/(2w) of one species by `measure`; null when nothing was detected. */
export function resolvingPowerBy(s: SpeciesReport, measure: WidthMeasure): number | null {
  const w = widthOf(s, measure);
  const t = s.flightTime_ns;
  if (w === null || t === null || s.detected < 2) return null;
  // A zero width (perfect focus of identical ions) is capped rather than infinite.
  return t / (2 * Math.max(w, t * 1e-12));
}

/**
 * The cost the optimiser minimises (lower is better): −R or the width by `measure`. Points that
 * detect nothing, or where any species' transmission is below its floor (`transmissionFloors`,
 * indexed as the report's species; see ./transmissionConstraint), cost more than any real point,
 * more so the further they are from feasible, so a search is led back.
 */
export function objectiveCost(
  resolved: ResolvedObjective,
  report: RunReport,
  measure: WidthMeasure,
  transmissionFloors?: readonly number[],
  criterion: ResolvingPowerCriterion = 'ideal',
): number {
  const shortfall = transmissionShortfall(transmissionFloors, (i) => report.species[i].transmission);
  if (shortfall > 0) return INFEASIBLE_COST * (1 + shortfall);
  if (criterion === 'spectrum') {
    // The spectrum is a sum of smooth single-ion pulses, so its peak width is smooth in the settings
    // (with common random numbers) and needs no smoothed stand-in.
    const value = reportedObjective(resolved, report, 'spectrum');
    if (value === null || value <= 0) return INFEASIBLE_COST * 2;
    return resolved.objective.name === 'min-fwhm' ? value : -value;
  }
  if (resolved.objective.name === 'min-fwhm') {
    const s = report.species[resolved.species[0]];
    const w = widthOf(s, measure);
    return w === null || s.detected < 2 ? INFEASIBLE_COST * 2 : w;
  }
  let least = Infinity;
  for (const s of resolved.species) {
    const r = resolvingPowerBy(report.species[s], measure);
    if (r === null) return INFEASIBLE_COST * 2;
    least = Math.min(least, r);
  }
  return -least;
}

/**
 * How good a cost is, on a scale where "within 10 % of the best" means quality ≥ 0.9·best:
 * R for the resolving-power objectives, 1/width for min-fwhm (i.e. also R-like). 0 when infeasible.
 */
export function costQuality(resolved: ResolvedObjective, cost: number): number {
  if (!(cost < INFEASIBLE_COST)) return 0;
  return resolved.objective.name === 'min-fwhm' ? 1 / cost : -cost;
}
