/**
 * The units of work a pool lane runs: a batch of scan points, one local search (an optimiser
 * restart) and one edge of a flatness interval. Each is a pure function of its task object (plain
 * JSON data, so it crosses a worker boundary unchanged) and every simulation in it uses the same seed,
 * so results do not depend on which lane ran them or on how the work was split.
 */
import type { Preset } from '../presets/schema';
import type { Objective, ResolvingPowerCriterion, ScanPoint, WidthMeasure } from './api';
import { evaluateAt, scanPoint, type PointSettings } from './evaluate';
import { costQuality, resolveCriterion, resolveObjective } from './objective';
import { goldenSection, nelderMead } from './optimiser';
import { evaluateTolerancePoints, type ToleranceTask, type ToleranceTaskResult } from '../tolerance/evaluate';

/** Settings shared by every evaluation of one request. */
export interface TaskContext {
  readonly preset: Preset;
  readonly paths: readonly string[];
  readonly ions?: number;
  readonly seed?: number;
  readonly objective: Objective | null;
  readonly measure: WidthMeasure;
  /** Per-species transmission floors (see ./transmissionConstraint); none: unconstrained. */
  readonly transmissionFloors?: readonly number[];
  /** Which R the objective reads; resolved from the preset when absent (see resolveCriterion). */
  readonly criterion?: ResolvingPowerCriterion;
}

export interface PointsTask extends TaskContext {
  readonly points: readonly { readonly index: number; readonly values: readonly number[] }[];
}

export interface PointsTaskResult {
  readonly points: ScanPoint[];
  /** The optimiser's cost at each point (0 without an objective). */
  readonly costs: number[];
}

export interface SearchTask extends TaskContext {
  readonly method: 'golden' | 'nelder-mead';
  /** Box of the search: for golden section the bracket, for Nelder–Mead the parameter bounds. */
  readonly lower: readonly number[];
  readonly upper: readonly number[];
  readonly start: readonly number[];
  /** Nelder–Mead initial simplex edge (fraction of the box). */
  readonly initialStep?: number;
  /** Golden section: absolute bracket width at which to stop; Nelder–Mead: fraction of the box. */
  readonly tolerance: number;
  readonly maxEvaluations: number;
}

export interface SearchTaskResult {
  readonly x: number[];
  readonly cost: number;
  readonly evaluations: number;
}

export interface FlatnessTask extends TaskContext {
  readonly lower: readonly number[];
  readonly upper: readonly number[];
  readonly best: readonly number[];
  readonly parameter: number;
  readonly direction: -1 | 1;
  /** Quality (R-like, see costQuality) a point needs to count as within the interval. */
  readonly threshold: number;
}

export interface FlatnessTaskResult {
  readonly edge: number;
  readonly evaluations: number;
}

export interface EngineTasks {
  evaluatePoints(task: PointsTask): PointsTaskResult;
  search(task: SearchTask): SearchTaskResult;
  flatnessEdge(task: FlatnessTask): FlatnessTaskResult;
  /** Points of a tolerance analysis (src/tolerance/). */
  evaluateTolerance(task: ToleranceTask): ToleranceTaskResult;
}

function settingsOf(task: TaskContext): PointSettings {
  return {
    preset: task.preset,
    paths: task.paths,
    ions: task.ions,
    seed: task.seed,
    objective: task.objective ? resolveObjective(task.objective, task.preset) : null,
    measure: task.measure,
    transmissionFloors: task.transmissionFloors,
    criterion: resolveCriterion(task.preset, task.criterion),
  };
}

/** Bisection steps that locate a flatness edge once bracketed (to 2^-10 of the bracket). */
const EDGE_BISECTIONS = 10;
/** First probe of a flatness edge, as a fraction of the parameter's bound width; doubled until outside. */
const EDGE_FIRST_STEP = 0.004;

export const engineTasks: EngineTasks = {
  evaluateTolerance: evaluateTolerancePoints,

  evaluatePoints(task) {
    const settings = settingsOf(task);
    const points: ScanPoint[] = [];
    const costs: number[] = [];
    for (const p of task.points) {
      const r = scanPoint(settings, p.index, p.values);
      points.push(r.point);
      costs.push(r.cost);
    }
    return { points, costs };
  },

  search(task) {
    const settings = settingsOf(task);
    const cost = (x: readonly number[]): number => evaluateAt(settings, x).cost;
    if (task.method === 'golden') {
      const r = goldenSection((x) => cost([x]), task.lower[0], task.upper[0], task.tolerance, task.maxEvaluations);
      return { x: r.x, cost: r.f, evaluations: r.evaluations };
    }
    const r = nelderMead(cost, task.start, {
      lower: task.lower,
      upper: task.upper,
      initialStep: task.initialStep,
      xTol: task.tolerance,
      maxEvaluations: task.maxEvaluations,
    });
    return { x: r.x, cost: r.f, evaluations: r.evaluations };
  },

  flatnessEdge(task) {
    const settings = settingsOf(task);
    const k = task.parameter;
    const values = task.best.slice();
    const quality = (x: number): number => {
      values[k] = x;
      return costQuality(settings.objective!, evaluateAt(settings, values).cost);
    };
    const from = task.best[k];
    const bound = task.direction > 0 ? task.upper[k] : task.lower[k];
    let evaluations = 0;
    let inside = from;
    let outside = NaN;
    let step = EDGE_FIRST_STEP * (task.upper[k] - task.lower[k]);
    while (inside !== bound) {
      const x = task.direction > 0 ? Math.min(from + step, bound) : Math.max(from - step, bound);
      evaluations++;
      if (quality(x) >= task.threshold) inside = x;
      else {
        outside = x;
        break;
      }
      step *= 2;
    }
    if (Number.isNaN(outside)) return { edge: inside, evaluations };
    for (let i = 0; i < EDGE_BISECTIONS; i++) {
      const mid = 0.5 * (inside + outside);
      evaluations++;
      if (quality(mid) >= task.threshold) inside = mid;
      else outside = mid;
    }
    return { edge: inside, evaluations };
  },
};
