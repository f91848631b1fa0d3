/**
 * One tolerance point: the preset with its slow perturbations applied, simulated with the request's
 * seed (the same ions at every point: common random numbers, so differences between points come
 * from the perturbation, not from the draw), then the arrival times changed by the detector tilt
 * and by the shot-to-shot terms, and reduced to per-block figures (mean arrival time, R from the
 * ions, R and centroid of the simulated spectrum).
 *
 * Shot-to-shot terms: ion i belongs to shot i mod shots (as the spectrum builder assigns the
 * trigger jitter, src/analysis/detectorResponse.ts); each shot draws one value of every term, and
 * every ion of the shot moves by Σ_k (dt/dp_k)·δp_k, with dt/dp_k the species' flight-time
 * derivative from the sensitivity run (linear in the term, which holds for ppm-level ripple and
 * sub-ns jitter; a rerun per shot would cost shots × more).
 */
import { arrivalStats } from '../analysis/arrivalStats';
import { SeededRandom } from '../ions/random';
import { Fate } from '../physics/fates';
import type { Preset } from '../presets/schema';
import { buildAnalysisSections } from '../simulation/analysisReport';
import { simulate, type SimulationResult } from '../simulation/run';
import { perturbedPreset, TILT_ID } from './parameters';

export interface TolerancePoint {
  readonly index: number;
  /** Slow perturbations by parameter id (unit of the parameter); the tilt included. */
  readonly slow: Readonly<Record<string, number>>;
  /** Shot-to-shot terms: sd by parameter id, drawn once per shot. */
  readonly shot: Readonly<Record<string, number>>;
  /** Seed of the per-shot draws (the ions' seed stays the request's). */
  readonly shotSeed: number;
  /**
   * Optional mean over the shots of a shot term's values (by id, in its unit). For normal draws
   * the sample mean is independent of the deviations from it (Cochran's theorem), so replacing it
   * by an independently drawn N(0, sd²/shots) value keeps the joint distribution; the Monte Carlo
   * uses this to stratify what the shot terms do to the summed spectrum's centroid.
   */
  readonly shotMean?: Readonly<Record<string, number>>;
}

export interface ToleranceTask {
  readonly preset: Preset;
  readonly ions?: number;
  readonly seed?: number;
  /** Per shot term id: dt/dp (s per unit) for each ensemble block. */
  readonly shotDerivatives: Readonly<Record<string, readonly number[]>>;
  readonly points: readonly TolerancePoint[];
}

export interface BlockFigures {
  readonly detected: number;
  /** Mean recorded arrival time of the detected ions (s). */
  readonly meanTime_s: number | null;
  /** t/(2·FWHM) of the ions' arrival-time histogram (ideal detector). */
  readonly ionResolvingPower: number | null;
  /** The peak in the simulated spectrum (null without acquisition settings). */
  readonly spectrumResolvingPower: number | null;
  readonly spectrumCentroid_s: number | null;
}

export type TolerancePointResult =
  | { readonly index: number; readonly ok: true; readonly blocks: BlockFigures[] }
  | { readonly index: number; readonly ok: false; readonly error: string };

export interface ToleranceTaskResult {
  readonly points: TolerancePointResult[];
  /** The reported species of the task's first simulation: label, m/z and the ensemble block that speaks for it. */
  readonly species: { readonly label: string; readonly mz: number; readonly mainBlock: number }[];
}

/** Stream of the shot draws in SeededRandom, apart from the ions' and the trigger's streams. */
const SHOT_STREAM = 0x5107;

/** Ions whose arrival time the tilt changes: t += x·tan θ / v_z (the tilted plane lies x·tan θ further on). */
export function tiltArrivalTimes(times: Float64Array, x_m: Float64Array, speed_m_per_s: Float64Array, fate: Uint8Array, tilt_rad: number): void {
  const k = Math.tan(tilt_rad);
  for (let i = 0; i < times.length; i++) {
    if (fate[i] === Fate.DETECTED && speed_m_per_s[i] > 0) times[i] += (x_m[i] * k) / speed_m_per_s[i];
  }
}

/**
 * Adds the shot-to-shot shifts to `times` in place. `derivative[k][b]` is term k's dt/dp for
 * block b, `sd[k]` its sd; `blockStart` the ensemble block boundaries.
 */
export function applyShotTerms(
  times: Float64Array,
  blockStart: Int32Array,
  shots: number,
  derivative: readonly (readonly number[])[],
  sd: readonly number[],
  seed: number,
  mean: readonly (number | undefined)[] = [],
): void {
  const terms = sd.length;
  if (terms === 0) return;
  const rng = new SeededRandom(seed, SHOT_STREAM);
  const draws = new Float64Array(shots * terms);
  for (let j = 0; j < shots; j++) for (let k = 0; k < terms; k++) draws[j * terms + k] = sd[k] * rng.normal();
  for (let k = 0; k < terms; k++) {
    const wanted = mean[k];
    if (wanted === undefined) continue;
    let sum = 0;
    for (let j = 0; j < shots; j++) sum += draws[j * terms + k];
    const shift = wanted - sum / shots;
    for (let j = 0; j < shots; j++) draws[j * terms + k] += shift;
  }
  const blocks = blockStart.length - 1;
  const perShot = new Float64Array(shots);
  for (let b = 0; b < blocks; b++) {
    for (let j = 0; j < shots; j++) {
      let shift = 0;
      for (let k = 0; k < terms; k++) shift += derivative[k][b] * draws[j * terms + k];
      perShot[j] = shift;
    }
    for (let i = blockStart[b]; i < blockStart[b + 1]; i++) times[i] += perShot[i % shots];
  }
}

function blockFigures(sim: SimulationResult, preset: Preset, times: Float64Array): BlockFigures[] {
  const { ensemble: ens, trace } = sim;
  const shifted = { ...trace, flightTime_s: times };
  const means: (number | null)[] = [];
  const out: { detected: number; meanTime_s: number | null; ionResolvingPower: number | null }[] = [];
  for (let b = 0; b < ens.species.length; b++) {
    const from = ens.speciesStart[b];
    const to = ens.speciesStart[b + 1];
    let n = 0;
    for (let i = from; i < to; i++) if (trace.fate[i] === Fate.DETECTED) n++;
    const sorted = new Float64Array(n);
    for (let i = from, k = 0; i < to; i++) if (trace.fate[i] === Fate.DETECTED) sorted[k++] = times[i];
    sorted.sort();
    const stats = arrivalStats(sorted);
    means.push(stats.mean_s);
    out.push({ detected: n, meanTime_s: stats.mean_s, ionResolvingPower: stats.resolvingPower });
  }
  // The spectrum peaks through the run path the report uses (detector response, sampling, peak measure).
  const sections = preset.acquisition
    ? buildAnalysisSections(preset, sim.compiled.model, sim.compiled.population, ens, shifted, means)
    : null;
  return out.map((b, i) => {
    const peak = sections?.speciesPeaks[i] ?? null;
    return { ...b, spectrumResolvingPower: peak?.resolvingPower ?? null, spectrumCentroid_s: peak ? peak.centroid_ns * 1e-9 : null };
  });
}

/** Shots the ions are spread over (one without acquisition settings). */
export function shotCount(preset: Preset): number {
  return preset.acquisition?.shots ?? 1;
}

/** Evaluates the task's points in order; consecutive points with the same slow values share one simulation. */
export function evaluateTolerancePoints(task: ToleranceTask): ToleranceTaskResult {
  let cachedKey = '';
  let cached: { sim: SimulationResult; preset: Preset } | null = null;
  const results: TolerancePointResult[] = [];
  let species: ToleranceTaskResult['species'] = [];
  for (const point of task.points) {
    const { [TILT_ID]: tilt_mrad = 0, ...presetValues } = point.slow;
    const key = JSON.stringify(presetValues);
    if (!cached || key !== cachedKey) {
      const modified = perturbedPreset(task.preset, presetValues);
      if (!modified.ok) {
        results.push({ index: point.index, ok: false, error: modified.issues.map((i) => `${i.path}: ${i.message}`).join('; ') });
        continue;
      }
      cached = { preset: modified.value, sim: simulate(modified.value, { ions: task.ions, seed: task.seed, analysis: false }) };
      cachedKey = key;
      if (species.length === 0) species = cached.sim.report.species.map((s) => ({ label: s.label, mz: s.mz, mainBlock: s.mainBlock }));
    }
    const { sim, preset } = cached;
    const times = Float64Array.from(sim.trace.flightTime_s);
    if (tilt_mrad !== 0) tiltArrivalTimes(times, sim.trace.detectorX_m, sim.trace.finalSpeed_m_per_s, sim.trace.fate, tilt_mrad * 1e-3);
    const ids = Object.keys(point.shot).filter((id) => point.shot[id] > 0);
    if (ids.length > 0) {
      for (const id of ids) if (!task.shotDerivatives[id]) throw new Error(`no flight-time derivative for shot term ${id}`);
      applyShotTerms(
        times,
        sim.ensemble.speciesStart,
        shotCount(preset),
        ids.map((id) => task.shotDerivatives[id]),
        ids.map((id) => point.shot[id]),
        point.shotSeed,
        ids.map((id) => point.shotMean?.[id]),
      );
    }
    results.push({ index: point.index, ok: true, blocks: blockFigures(sim, preset, times) });
  }
  return { points: results, species };
}
