/**
 * Auto-tune over a pool. The start comes from the published focusing conditions where they apply
 * (./analyticStarts). In 1-D a coarse grid over the bounds finds the basins, and golden-section
 * searches refine the best few in parallel; in n-D bounded Nelder–Mead runs from the analytic start
 * and from a fixed number of Halton-spread restarts in parallel, then once more from the best with a
 * small simplex; the preset's own settings are searched from as well. The optimiser minimises the
 * objective's cost (by default on a smooth width, see WidthMeasure), and the same figure is reported
 * at the preset's settings, at the start and at the result (./tuneVerdict); a result that scores
 * worse than the preset is not recommended unless `allowWorse` asks for it. The flatness interval is
 * where that figure stays within 10 % of its best. The number of starts does not depend on the pool size, so neither does the result.
 */
import type { Progress, TuneParameter, TuneRequest, TuneResult } from './api';
import { analyticStart } from './analyticStarts';
import { TuningInputError } from './errors';
import { costQuality, INFEASIBLE_COST, resolveCriterion, resolveObjective, REQUEST_LABELS, type ObjectiveLabels, type ResolvedObjective } from './objective';
import { haltonPoint } from './optimiser';
import { withValues } from './paramPath';
import { formatIssues } from '../presets/issues';
import { chooseRecommendation, figureOfCost } from './tuneVerdict';
import { runInOrder, type TaskPool } from './pool';
import { checkIons, checkMeasure, checkSeed } from './requestChecks';
import { checkPath, checkValue } from './scanPlan';
import type { FlatnessTask, SearchTask, SearchTaskResult, TaskContext } from './tasks';
import { checkTransmission, constraintOf, describeConstraint, transmissionFloors, type TransmissionConstraint } from './transmissionConstraint';

export const MAX_TUNE_PARAMETERS = 8;
const DEFAULT_RESTARTS = 3;
/** n-D: rounds of Nelder–Mead restarted from the best point, until one does not improve. */
const MAX_POLISH_ROUNDS = 4;
/** 1-D: grid intervals over the bounds before the golden-section refinements. */
const GRID_INTERVALS = 16;
/** Fraction of the best R a point must keep to lie in the flatness interval. */
export const FLATNESS_FRACTION = 0.9;
export { DEFAULT_TRANSMISSION_SHARE } from './transmissionConstraint';

export interface TuneLabels {
  readonly parameter: (i: number) => string;
  readonly objective: ObjectiveLabels;
  readonly minTransmission: string;
  readonly keepTransmission: string;
  readonly ions: string;
  readonly seed: string;
  readonly measure: string;
  readonly restarts: string;
}

export const TUNE_REQUEST_LABELS: TuneLabels = {
  parameter: (i) => `parameters[${i}]`,
  objective: REQUEST_LABELS,
  minTransmission: 'minTransmission',
  keepTransmission: 'keepTransmission',
  ions: 'ions',
  seed: 'seed',
  measure: 'measure',
  restarts: 'restarts',
};

export interface CheckedTune {
  readonly objective: ResolvedObjective;
  readonly current: number[];
  readonly transmission: TransmissionConstraint;
}

/** Every check of a tune request, before any work: throws TuningInputError naming the argument. */
export function checkTuneRequest(request: TuneRequest, labels: TuneLabels = TUNE_REQUEST_LABELS): CheckedTune {
  const { preset, parameters } = request;
  if (parameters.length === 0) throw new TuningInputError(labels.parameter(0), 'give at least one parameter to tune');
  if (parameters.length > MAX_TUNE_PARAMETERS) throw new TuningInputError(labels.parameter(MAX_TUNE_PARAMETERS), `at most ${MAX_TUNE_PARAMETERS} parameters`);
  const current = parameters.map((p, i) => {
    const label = labels.parameter(i);
    if (parameters.findIndex((q) => q.path === p.path) !== i) throw new TuningInputError(label, `${p.path} is listed twice`);
    const value = checkPath(preset, p.path, label);
    if (!Number.isFinite(p.min) || !Number.isFinite(p.max) || !(p.min < p.max)) {
      throw new TuningInputError(label, `bounds must be finite numbers with min < max (got ${p.min}:${p.max})`);
    }
    checkValue(preset, p.path, p.min, label);
    checkValue(preset, p.path, p.max, label);
    return value;
  });
  const objective = resolveObjective(request.objective, preset, labels.objective);
  const transmission = constraintOf(request, labels);
  checkIons(request.ions, labels.ions);
  checkSeed(request.seed, labels.seed);
  checkMeasure(request.measure, labels.measure);
  resolveCriterion(preset, request.criterion);
  const restarts = request.restarts;
  if (restarts !== undefined && !(Number.isInteger(restarts) && restarts >= 0 && restarts <= 64)) {
    throw new TuningInputError(labels.restarts, `must be a whole number from 0 to 64 (got ${restarts})`);
  }
  return { objective, current, transmission };
}

const labelsFor = (parameters: readonly TuneParameter[]): string => parameters.map((_, i) => TUNE_REQUEST_LABELS.parameter(i)).join(', ');

function clampTo(p: TuneParameter, x: number): number {
  return Math.min(Math.max(x, p.min), p.max);
}

export async function optimiseWith(pool: TaskPool, request: TuneRequest, onProgress?: (p: Progress) => void): Promise<TuneResult> {
  const checked = checkTuneRequest(request);
  const { preset, parameters } = request;
  const n = parameters.length;
  const lower = parameters.map((p) => p.min);
  const upper = parameters.map((p) => p.max);
  const measure = checkMeasure(request.measure);
  const restarts = request.restarts ?? DEFAULT_RESTARTS;
  const budget = request.maxEvaluations ?? Math.max(40, 60 * n);
  const lanes = pool.lanes;
  let evaluations = 0;
  const report = (message: string, done: number, total: number): void => onProgress?.({ done, total, message });
  const paths = parameters.map((p) => p.path);
  const criterion = resolveCriterion(preset, request.criterion);

  // A tune may not buy width by losing ions (a narrow peak of a few survivors) of any species: each
  // species has a floor, by default a share of its transmission at the preset's settings.
  let current: readonly number[] = preset.ions.species.map(() => 0);
  if (checked.transmission.kind === 'share') {
    const [now] = await runInOrder(lanes, [{ preset, paths, ions: request.ions, seed: request.seed, objective: null, measure, criterion, points: [{ index: 0, values: checked.current }] }], (lane, task) =>
      lane.evaluatePoints(task),
    );
    evaluations++;
    current = now.points[0].species.map((s) => s.transmission);
  }
  const floors = transmissionFloors(checked.transmission, current, preset.ions.species.map((s) => s.abundance));
  const context: TaskContext = { preset, paths, ions: request.ions, seed: request.seed, objective: request.objective, measure, transmissionFloors: floors, criterion };

  const start =
    request.useAnalyticStart === false
      ? { values: parameters.map((p, i) => clampTo(p, checked.current[i])), sources: [] }
      : analyticStart(preset, parameters, request.objective, checked.current);
  // The preset's own settings (inside the bounds) are searched from too, unless they are the start.
  const own = parameters.map((p, i) => clampTo(p, checked.current[i]));
  const ownStart = own.some((x, i) => x !== start.values[i]) ? [own] : [];
  let best: SearchTaskResult;

  if (n === 1) {
    // Coarse grid (plus the analytic start) to find the basins; golden section inside the best few.
    const p = parameters[0];
    const grid = Array.from({ length: GRID_INTERVALS + 1 }, (_, i) => (i === GRID_INTERVALS ? p.max : p.min + ((p.max - p.min) * i) / GRID_INTERVALS));
    const xs = [...new Set([...grid, start.values[0], ...ownStart.map((o) => o[0])])].sort((a, b) => a - b);
    report('coarse grid', 0, xs.length);
    const gridResults = await runInOrder(
      lanes,
      xs.map((x, index) => ({ ...context, points: [{ index, values: [x] }] })),
      (lane, task) => lane.evaluatePoints(task),
      (done, total) => report('coarse grid', done, total),
    );
    const costs = gridResults.map((r) => r.costs[0]);
    evaluations += xs.length;
    const minima: number[] = [];
    for (let i = 0; i < xs.length; i++) {
      if ((i === 0 || costs[i] <= costs[i - 1]) && (i === xs.length - 1 || costs[i] <= costs[i + 1])) minima.push(i);
    }
    minima.sort((a, b) => costs[a] - costs[b] || a - b);
    const chosen = minima.slice(0, 1 + restarts);
    const searches: SearchTask[] = chosen.map((i) => ({
      ...context,
      method: 'golden',
      lower: [xs[Math.max(i - 1, 0)]],
      upper: [xs[Math.min(i + 1, xs.length - 1)]],
      start: [xs[i]],
      tolerance: 1e-5 * (p.max - p.min),
      maxEvaluations: budget,
    }));
    const found = await runInOrder(lanes, searches, (lane, task) => lane.search(task), (d, t) => report('golden-section search', d, t));
    best = { x: [xs[chosen[0]]], cost: costs[chosen[0]], evaluations: 0 };
    for (const r of found) {
      evaluations += r.evaluations;
      if (r.cost < best.cost) best = r;
    }
  } else {
    const starts = [start.values, ...ownStart, ...Array.from({ length: restarts }, (_, k) => haltonPoint(k, n).map((u, i) => lower[i] + u * (upper[i] - lower[i])))];
    const searches: SearchTask[] = starts.map((s) => ({
      ...context,
      method: 'nelder-mead',
      lower,
      upper,
      start: s,
      initialStep: 0.1,
      tolerance: 1e-4,
      maxEvaluations: budget,
    }));
    const found = await runInOrder(lanes, searches, (lane, task) => lane.search(task), (d, t) => report('Nelder–Mead restarts', d, t));
    best = found[0];
    for (const r of found) {
      evaluations += r.evaluations;
      if (r.cost < best.cost) best = r;
    }
    // Polish from the best with fresh small simplices until a round no longer improves: Nelder–Mead
    // stalls in narrow curved valleys (a second-order focus is one), and a restart unsticks it.
    for (let round = 0; round < MAX_POLISH_ROUNDS; round++) {
      const [polished] = await runInOrder(
        lanes,
        [{ ...searches[0], start: best.x, initialStep: round === 0 ? 0.02 : 0.005, tolerance: 1e-6, maxEvaluations: Math.ceil(budget / 2) }],
        (lane, task) => lane.search(task),
        () => report('polishing the best', round + 1, MAX_POLISH_ROUNDS),
      );
      evaluations += polished.evaluations;
      const improved = polished.cost < best.cost - 1e-9 * Math.abs(best.cost);
      if (polished.cost < best.cost) best = polished;
      if (!improved) break;
    }
  }
  const searchX = best.x.map((x, i) => clampTo(parameters[i], x));

  // The objective's own figure and the per-species figures at the preset's settings, at the start and
  // at the search's best, computed on a lane like every other evaluation (in a browser, never on the
  // page's thread). The recommendation is the best of the search unless the preset scores better.
  const [final] = await runInOrder(
    lanes,
    [{ ...context, points: [{ index: 0, values: checked.current }, { index: 1, values: start.values }, { index: 2, values: searchX }] }],
    (lane, task) => lane.evaluatePoints(task),
  );
  evaluations += 3;
  const [atPreset, atStart, atSearch] = final.points;
  const [presetCost, startCost, searchCost] = final.costs;
  const verdict = chooseRecommendation(presetCost, searchCost, request.allowWorse);
  const bestX = verdict.keepPreset ? [...checked.current] : searchX;
  const bestCost = verdict.keepPreset ? presetCost : searchCost;
  const tuned = verdict.keepPreset ? ({ ok: true, value: preset } as const) : withValues(preset, paths, bestX);
  if (!tuned.ok) {
    // Only possible when no combination tried inside the bounds gave a valid preset (rules tying two tuned values together).
    throw new TuningInputError(labelsFor(parameters), `no combination of values tried inside the bounds gives a valid preset: ${formatIssues(tuned.issues).replace(/\n/g, '; ')}`);
  }

  // Flatness around the recommended setting: both edges of every parameter, in parallel.
  const threshold = FLATNESS_FRACTION * costQuality(checked.objective, bestCost);
  // A kept preset may lie outside the bounds: its interval is then searched in the bounds extended past
  // it by their own width on that side (values that give no valid preset count as outside the interval).
  const flatLower = lower.map((x, k) => (bestX[k] < x ? bestX[k] - (upper[k] - x) : x));
  const flatUpper = upper.map((x, k) => (bestX[k] > x ? bestX[k] + (x - lower[k]) : x));
  const edges: FlatnessTask[] = [];
  for (let k = 0; k < n; k++) for (const direction of [-1, 1] as const) edges.push({ ...context, lower: flatLower, upper: flatUpper, best: bestX, parameter: k, direction, threshold });
  const edgeResults = await runInOrder(lanes, edges, (lane, task) => lane.flatnessEdge(task), (d, t) => report('flatness interval', d, t));
  for (const e of edgeResults) evaluations += e.evaluations;

  const figure = (cost: number): number | null => figureOfCost(checked.objective, cost);
  const recommendedSpecies = verdict.keepPreset ? atPreset.species : atSearch.species;
  const transmissionCheck = checkTransmission(floors, recommendedSpecies);
  report('done', 1, 1);
  return {
    start: start.values,
    best: bestX,
    objective: figure(bestCost),
    flatness: parameters.map((p, k) => ({ path: p.path, low: edgeResults[2 * k].edge, high: edgeResults[2 * k + 1].edge })),
    evaluations,
    tunedPreset: tuned.value,
    startObjective: figure(startCost),
    startSource: start.sources,
    measure,
    feasible: bestCost < INFEASIBLE_COST,
    transmissionConstraint: describeConstraint(checked.transmission),
    transmissionFloors: floors,
    transmissionViolated: transmissionCheck.violated,
    transmissionBinding: transmissionCheck.binding,
    species: recommendedSpecies,
    presetValues: [...checked.current],
    presetObjective: figure(presetCost),
    presetSpecies: atPreset.species,
    startSpecies: atStart.species,
    recommendation: verdict.keepPreset ? 'preset' : 'tuned',
    searchBest: searchX,
    searchObjective: figure(searchCost),
    worseThanPreset: verdict.worseThanPreset,
    criterion,
  };
}
