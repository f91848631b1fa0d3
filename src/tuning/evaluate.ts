/**
 * One point of a scan or a search: the preset with the parameter values applied, simulated with the
 * same seed at every point (common random numbers, so differences between points come from the
 * parameters, not from the draw), reduced to per-species figures, the reported objective and the
 * optimiser's cost.
 */
import type { Preset } from '../presets/schema';
import type { RunReport } from '../simulation/report';
import { simulate } from '../simulation/run';
import type { ResolvingPowerCriterion, ScanPoint, ScanSpeciesPoint, WidthMeasure } from './api';
import { INFEASIBLE_COST, objectiveCost, reportedObjective, type ResolvedObjective } from './objective';
import { withValues } from './paramPath';

export interface PointSettings {
  readonly preset: Preset;
  readonly paths: readonly string[];
  readonly ions?: number;
  readonly seed?: number;
  readonly objective: ResolvedObjective | null;
  readonly measure: WidthMeasure;
  /** Per-species transmission floors (see ./transmissionConstraint); none: unconstrained. */
  readonly transmissionFloors?: readonly number[];
  /** Which R the objective reads (resolved: never undefined here). */
  readonly criterion: ResolvingPowerCriterion;
}

export interface Evaluation {
  readonly report: RunReport | null;
  readonly cost: number;
}

/** Simulate at `values`; an invalid combination (possible inside a multi-parameter box) is infeasible, not an error. */
export function evaluateAt(settings: PointSettings, values: readonly number[]): Evaluation {
  const modified = withValues(settings.preset, settings.paths, values);
  if (!modified.ok) return { report: null, cost: INFEASIBLE_COST * 3 };
  // Objectives read the ion statistics and, with acquisition settings, the per-species spectrum
  // peaks; the calibration and focus sections are skipped.
  const analysis = modified.value.acquisition ? 'peaks' : false;
  const { report } = simulate(modified.value, { ions: settings.ions, seed: settings.seed, analysis });
  const cost = settings.objective ? objectiveCost(settings.objective, report, settings.measure, settings.transmissionFloors, settings.criterion) : 0;
  return { report, cost };
}

export function speciesPoints(report: RunReport): ScanSpeciesPoint[] {
  return report.species.map((s) => ({
    label: s.label,
    mz: s.mz,
    flightTime_ns: s.flightTime_ns,
    fwhm_ns: s.fwhm_ns,
    resolvingPower: s.resolvingPower,
    transmission: s.transmission,
    sdFlightTime_ns: s.sdFlightTime_ns,
    fwhmShortest_ns: s.fwhmShortest_ns,
    resolvingPowerShortest: s.resolvingPowerShortest,
    spectrumFwhm_ns: s.peak?.fwhm_ns ?? null,
    spectrumResolvingPower: s.peak?.resolvingPower ?? null,
  }));
}

/** A full scan point (per-species figures and the reported objective). */
export function scanPoint(settings: PointSettings, index: number, values: readonly number[]): { point: ScanPoint; cost: number } {
  const { report, cost } = evaluateAt(settings, values);
  if (!report) throw new Error(`scan point ${index} (${values.join(', ')}) gives an invalid preset`);
  return {
    point: {
      index,
      values: [...values],
      species: speciesPoints(report),
      objective: settings.objective ? reportedObjective(settings.objective, report, settings.criterion) : null,
    },
    cost,
  };
}
