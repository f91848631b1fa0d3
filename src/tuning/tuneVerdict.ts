/**
 * What a tune reports and recommends. The reported figure is the objective's own figure: the value
 * whose cost the optimiser minimised (so the search and the report use one width definition), and
 * the recommendation is never a setting that scores worse than the preset's own settings unless the
 * caller asked for the search's result regardless (then the result says so).
 */
import type { Objective, WidthMeasure } from './api';
import { INFEASIBLE_COST, type ResolvedObjective } from './objective';

/** The objective's own figure at a cost (R, or a width in ns for min-fwhm); null where the point cannot be scored. */
export function figureOfCost(resolved: ResolvedObjective, cost: number): number | null {
  if (!(cost < INFEASIBLE_COST)) return null;
  return resolved.maximise ? -cost : cost;
}

export interface TuneVerdict {
  /** The preset's own settings are recommended (they scored at least as well as the search's best). */
  readonly keepPreset: boolean;
  /** The recommended setting scores worse than the preset's own (only when `allowWorse` was asked). */
  readonly worseThanPreset: boolean;
}

/**
 * Costs are lower-is-better and include the transmission constraint, so an infeasible preset never
 * wins against a feasible search result. A tie keeps the preset: a change must earn its place.
 */
export function chooseRecommendation(presetCost: number, searchCost: number, allowWorse = false): TuneVerdict {
  const presetBetter = presetCost <= searchCost;
  if (!presetBetter) return { keepPreset: false, worseThanPreset: false };
  if (allowWorse) return { keepPreset: false, worseThanPreset: presetCost < searchCost };
  return { keepPreset: true, worseThanPreset: false };
}

const WIDTH_WORDS: Record<WidthMeasure, string> = {
  sd: 'width = 2.355 × standard deviation of the arrival times',
  shortest: 'width = shortest interval holding 76.1 % of the ions',
  fwhm: 'width = FWHM of the arrival-time histogram',
};

/** One line naming the figure a tune optimised and reports, in the words of both the CLI and the app. */
export function describeFigure(objective: Objective, measure: WidthMeasure): string {
  const width = WIDTH_WORDS[measure];
  // m/z in words to 4 decimals at most (a computed m/z carries 13 digits; the request keeps them).
  const mz = (x: number | undefined): string => (x === undefined ? '?' : String(Number(x.toFixed(4))));
  if (objective.name === 'min-fwhm') return `peak width (ns) at m/z ${mz(objective.targetMz)}, ${width}`;
  if (objective.name === 'max-min-r-over-range') return `least R = t/(2·width) over m/z ${mz(objective.range?.[0])}–${mz(objective.range?.[1])}, ${width}`;
  return `R = t/(2·width) at m/z ${mz(objective.targetMz)}, ${width}`;
}
