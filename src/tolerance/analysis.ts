/**
 * Tolerance and stability analysis of a preset, over a task pool:
 * 1. sensitivities: per parameter and species, central differences with common random numbers
 *    (every point traces the same ions with the same seed, so the difference comes from the
 *    perturbation alone and is smooth in the step); flight time, apparent mass after a fixed
 *    calibration (src/tolerance/calibration.ts) and resolving power, per unit of the parameter,
 *    and the resolving power at the stated tolerance;
 * 2. a budget for a target mass accuracy (src/tolerance/budget.ts);
 * 3. a seeded Monte Carlo (slow terms and the shots' mean of the shot terms on a randomly shifted lattice in the
 *    principal directions of every species' linearised mass error, src/tolerance/latticeDesign.ts; per-shot draws),
 *    each draw a full rerun; a shard runs a deterministic share of the draws.
 * Results depend only on the request, not on the pool size.
 */
import type { Preset } from '../presets/schema';
import { runInOrder, type TaskPool } from '../tuning/pool';
import { TuningInputError } from '../tuning/errors';
import type { Progress } from '../tuning/api';
import { checkIons, checkSeed } from '../tuning/requestChecks';
import { checkShard, shardIndices } from '../tuning/scanPlan';
import { buildBudget, type Budget } from './budget';
import { apparentMz, fixedCalibration, type FixedCalibration } from './calibration';
import { shotCount, type BlockFigures, type TolerancePoint, type ToleranceTask, type ToleranceTaskResult } from './evaluate';
import { toleranceParameters, toleranceSettings, TRIGGER_ID, type ToleranceParameter } from './parameters';
import { latticeNormalDesign, type DrawDesign } from './latticeDesign';
import { histogram, summarise, type Histogram, type Summary } from './statistics';

export const MAX_DRAWS = 100_000;
/** Default target when neither the request nor the preset gives one (common practice, no source). */
export const DEFAULT_TARGET_PPM = 5;

export interface ToleranceRequest {
  readonly preset: Preset;
  readonly ions?: number;
  readonly seed?: number;
  /** Monte-Carlo draws (0: none). */
  readonly draws?: number;
  /** Seed of the tolerance draws (default: the preset's seed). */
  readonly drawSeed?: number;
  /** Target mass accuracy (ppm, 1 sd); default tolerances.target, else DEFAULT_TARGET_PPM. */
  readonly targetAccuracy_ppm?: number;
  readonly range?: readonly [number, number];
  readonly shard?: { readonly index: number; readonly count: number };
}

export interface SpeciesBaseline {
  readonly label: string;
  readonly mz: number;
  /** Centroid of the simulated spectrum's peak (mean arrival time without acquisition settings). */
  readonly flightTime_ns: number | null;
  /** Mean arrival time of the detected ions (ideal detector). */
  readonly flightTimeIons_ns: number | null;
  /** R of the simulated spectrum's peak (null without acquisition settings). */
  readonly resolvingPower: number | null;
  /** R of the ions' arrival times (ideal detector). */
  readonly resolvingPowerIons: number | null;
}

export interface SpeciesSensitivity {
  readonly mz: number;
  /** From the simulated spectrum's peak centroid (the mean arrival time without acquisition settings). */
  readonly flightTime_ns_per_unit: number | null;
  readonly massShift_ppm_per_unit: number | null;
  /** The same from the mean arrival time of the ions (ideal detector). */
  readonly flightTimeIons_ns_per_unit: number | null;
  readonly massShiftIons_ppm_per_unit: number | null;
  readonly resolvingPower_per_unit: number | null;
  readonly resolvingPowerIons_per_unit: number | null;
  /** Mass error (1 sd, ppm) this parameter alone gives at its tolerance; for a shot term, of the summed spectrum (÷ √shots). */
  readonly massError_ppm_atTolerance: number | null;
  /** The same from the mean arrival time (ideal detector). */
  readonly massErrorIons_ppm_atTolerance: number | null;
  /** R with this parameter at its tolerance (spectrum, else ions); null when the tolerance is 0. */
  readonly resolvingPowerAtTolerance: number | null;
  readonly resolvingPowerIonsAtTolerance: number | null;
}

export interface ParameterSensitivity {
  readonly parameter: string;
  readonly label: string;
  readonly kind: 'slow' | 'shot';
  readonly unit: string;
  readonly settingPath: string;
  readonly tolerance: number;
  readonly step: number;
  readonly species: SpeciesSensitivity[];
}

export interface MonteCarloSpecies {
  readonly label: string;
  readonly mz: number;
  /** Apparent mass error from the simulated spectrum's peak (the headline figure). */
  readonly massError_ppm: Summary;
  /** From the ions' mean arrival time (ideal detector): no counting noise of the peak's centroid. */
  readonly massErrorIons_ppm: Summary;
  readonly resolvingPower: Summary;
  /** The linearised prediction: normal with sd from the sensitivities (5th/95th percentiles ±1.645 sd). */
  readonly linear: { readonly sd_ppm: number | null; readonly p5_ppm: number | null; readonly p95_ppm: number | null };
  readonly linearIons: { readonly sd_ppm: number | null; readonly p5_ppm: number | null; readonly p95_ppm: number | null };
  readonly histograms: { readonly massError_ppm: Histogram; readonly resolvingPower: Histogram };
}

export interface MonteCarloDraw {
  readonly index: number;
  readonly massError_ppm: (number | null)[];
  readonly massErrorIons_ppm: (number | null)[];
  readonly resolvingPower: (number | null)[];
  readonly error?: string;
}

export interface MonteCarloResult {
  readonly draws: number;
  readonly drawSeed: number;
  readonly shard: { readonly index: number; readonly count: number } | null;
  /** Parameters drawn (tolerance > 0): slow ones once per draw, shot ones once per shot. */
  readonly parameters: string[];
  /** How the draws are laid out (latticeNormalDesign). */
  readonly design: DrawDesign;
  readonly drawsRun: number;
  readonly failedDraws: number;
  readonly species: MonteCarloSpecies[];
  readonly perDraw: MonteCarloDraw[];
}

export interface ToleranceResult {
  readonly method: string;
  readonly ions: number;
  readonly seed: number;
  readonly shots: number;
  readonly calibration: FixedCalibration & { readonly coefficients_ns: { t0_ns: number; a_ns_per_sqrtTh: number; b_ns_per_Th: number } };
  readonly species: SpeciesBaseline[];
  readonly sensitivities: ParameterSensitivity[];
  /** R of the reference acquisition: every shot-to-shot term at its tolerance together (shots' mean offset 0), per species. */
  readonly resolvingPowerAllShotTerms: (number | null)[] | null;
  readonly budget: Budget;
  readonly monteCarlo: MonteCarloResult | null;
}

const METHOD =
  'central differences with common random numbers (every point traces the same ions with the same seed); ' +
  "apparent mass from the simulated spectrum's peak centroid (the mean arrival time without acquisition settings; ideal-detector figures beside it) under a calibration fitted once on the unperturbed run; " +
  'shot-to-shot terms applied per shot to the arrival times with the species flight-time derivative (linear)';

/** Points per task: enough tasks to keep every lane busy, few enough to share simulations within one. */
function batches<T>(items: readonly T[], lanes: number): T[][] {
  const size = Math.max(1, Math.min(16, Math.ceil(items.length / (3 * lanes))));
  const out: T[][] = [];
  for (let i = 0; i < items.length; i += size) out.push(items.slice(i, i + size));
  return out;
}

export function checkToleranceRequest(request: ToleranceRequest): void {
  checkIons(request.ions, 'ions');
  checkSeed(request.seed, 'seed');
  checkSeed(request.drawSeed, 'drawSeed');
  const draws = request.draws ?? 0;
  if (!Number.isInteger(draws) || draws < 0 || draws > MAX_DRAWS) throw new TuningInputError('draws', `must be an integer from 0 to ${MAX_DRAWS} (got ${draws})`);
  const target = request.targetAccuracy_ppm;
  if (target !== undefined && !(Number.isFinite(target) && target > 0 && target <= 1e5)) {
    throw new TuningInputError('targetAccuracy_ppm', `must be a number > 0 and ≤ 100000 ppm (got ${target})`);
  }
  if (request.range) {
    const [a, b] = request.range;
    if (!(Number.isFinite(a) && Number.isFinite(b) && a > 0 && b >= a)) throw new TuningInputError('range', `must be two m/z values A:B with 0 < A ≤ B (got ${a}:${b})`);
  }
  if (request.shard) {
    checkShard(request.shard, 'shard');
    if (draws === 0) throw new TuningInputError('shard', 'splits the Monte-Carlo draws: give draws > 0');
  }
}

async function runPoints(
  pool: TaskPool,
  base: Omit<ToleranceTask, 'points'>,
  points: readonly TolerancePoint[],
  onDone: (n: number) => void,
): Promise<{ results: Map<number, BlockFigures[] | string>; species: ToleranceTaskResult['species'] }> {
  const groups = batches(points, pool.lanes.length);
  const out = await runInOrder(pool.lanes, groups, async (lane, group) => {
    const r = await lane.evaluateTolerance({ ...base, points: group });
    onDone(group.length);
    return r;
  });
  const results = new Map<number, BlockFigures[] | string>();
  let species: ToleranceTaskResult['species'] = [];
  for (const r of out) {
    if (species.length === 0) species = r.species;
    for (const p of r.points) results.set(p.index, p.ok ? p.blocks : p.error);
  }
  return { results, species };
}

const massPpm = (t: number | null, cal: FixedCalibration, mzTrue: number): number | null => {
  const m = apparentMz(t, cal.coefficients);
  return m === null ? null : (m / mzTrue) * 1e6;
};

const diff = (a: number | null, b: number | null, h: number): number | null => (a === null || b === null ? null : (a - b) / (2 * h));

export async function toleranceWith(pool: TaskPool, request: ToleranceRequest, onProgress?: (p: Progress) => void): Promise<ToleranceResult> {
  checkToleranceRequest(request);
  const preset = request.preset;
  const seed = request.seed ?? preset.run.seed;
  const drawSeed = request.drawSeed ?? preset.run.seed;
  const draws = request.draws ?? 0;
  const params = toleranceParameters(preset);
  const slow = params.filter((p) => p.kind === 'slow');
  const shotTerms = params.filter((p) => p.kind === 'shot');
  const shots = shotCount(preset);
  const hasSpectrum = Boolean(preset.acquisition);
  const headline = (b: BlockFigures): number | null => (hasSpectrum ? b.spectrumResolvingPower : b.ionResolvingPower);
  // Peak times as an instrument measures them: the simulated spectrum's centroid (mean arrival without acquisition settings).
  const peakTime = (b: BlockFigures): number | null => (hasSpectrum ? b.spectrumCentroid_s : b.meanTime_s);

  // Round 1: the unperturbed run, ± steps of every slow parameter, and each at its tolerance.
  const points: TolerancePoint[] = [{ index: 0, slow: {}, shot: {}, shotSeed: seed }];
  const index = new Map<string, number>();
  const add = (key: string, slowValues: Record<string, number>, shot: Record<string, number> = {}, shotSeed = seed): void => {
    index.set(key, points.length);
    points.push({ index: points.length, slow: slowValues, shot, shotSeed });
  };
  for (const p of slow) {
    add(`${p.id}+`, { [p.id]: p.step });
    add(`${p.id}-`, { [p.id]: -p.step });
    if (p.tolerance > 0) add(`${p.id}@tol`, { [p.id]: p.tolerance });
  }
  const shotWithTolerance = shotTerms.filter((p) => p.tolerance > 0);
  const slowWithTolerance = slow.filter((p) => p.tolerance > 0);
  const mcIndices = draws > 0 ? shardIndices(draws, request.shard) : [];
  const total = points.length + shotWithTolerance.length + (shotWithTolerance.length > 0 ? 1 : 0) + mcIndices.length;
  let done = 0;
  const tick = (message: string) => (n: number) => {
    done += n;
    onProgress?.({ done, total, message });
  };
  onProgress?.({ done: 0, total, message: 'sensitivities' });
  const baseTask = { preset, ions: request.ions, seed, shotDerivatives: {} };
  const round1 = await runPoints(pool, baseTask, points, tick('sensitivities'));
  const baseBlocks = round1.results.get(0);
  if (baseBlocks === undefined || typeof baseBlocks === 'string') throw new TuningInputError('preset', `the unperturbed run failed: ${String(baseBlocks)}`);
  const species = round1.species;
  const main = (blocks: BlockFigures[], s: number): BlockFigures => blocks[species[s].mainBlock];
  const blocksAt = (key: string): BlockFigures[] | null => {
    const r = round1.results.get(index.get(key) ?? -1);
    if (typeof r === 'string') throw new TuningInputError(key.replace(/[+-]$|@tol$/, ''), `the perturbed preset is invalid: ${r}`);
    return r ?? null;
  };

  // Flight-time derivatives per ensemble block, for the shot terms.
  const blockCount = baseBlocks.length;
  const timeDerivative = new Map<string, number[]>();
  for (const p of slow) {
    const plus = blocksAt(`${p.id}+`)!;
    const minus = blocksAt(`${p.id}-`)!;
    timeDerivative.set(
      p.id,
      Array.from({ length: blockCount }, (_, b) => diff(plus[b].meanTime_s, minus[b].meanTime_s, p.step) ?? 0),
    );
  }
  const shotDerivatives: Record<string, number[]> = {};
  for (const p of shotTerms) {
    shotDerivatives[p.id] = p.linkedTo ? timeDerivative.get(p.linkedTo)! : new Array<number>(blockCount).fill(1e-9); // trigger: 1 ns per ns
  }

  // Round 2: each shot term alone at its tolerance, and the reference acquisition: every shot term
  // at its tolerance with the shots' mean offset held at 0. The instrument is calibrated as it runs,
  // with its shot-to-shot noise: the broadening moves the centroid of an asymmetric peak, and that
  // shift is part of the calibration, not an error.
  const shotPoints: TolerancePoint[] = shotWithTolerance.map((p, k) => ({ index: k, slow: {}, shot: { [p.id]: p.tolerance }, shotSeed: seed }));
  const referenceIndex = shotPoints.length;
  if (shotWithTolerance.length > 0) {
    shotPoints.push({
      index: referenceIndex,
      slow: {},
      shot: Object.fromEntries(shotWithTolerance.map((p) => [p.id, p.tolerance])),
      shotMean: Object.fromEntries(shotWithTolerance.map((p) => [p.id, 0])),
      shotSeed: seed,
    });
  }
  const round2 = shotPoints.length > 0 ? await runPoints(pool, { ...baseTask, shotDerivatives }, shotPoints, tick('shot-to-shot terms')) : null;
  const shotBlocks = (k: number): BlockFigures[] | null => {
    const r = round2?.results.get(k);
    return r === undefined || typeof r === 'string' ? null : r;
  };
  const referenceBlocks = shotWithTolerance.length > 0 ? shotBlocks(referenceIndex) : baseBlocks;
  if (referenceBlocks === null) throw new TuningInputError('preset', 'the reference acquisition (shot-to-shot terms at their tolerances) failed');
  const calResult = fixedCalibration(
    preset,
    species.map((sp, s) => ({ mz: sp.mz, time_s: peakTime(main(referenceBlocks, s)) })),
  );
  if (!calResult.ok) throw new TuningInputError('preset', `cannot calibrate the unperturbed run: ${calResult.error}`);
  const cal = calResult.value;
  const baseMassPpm = species.map((sp, s) => massPpm(peakTime(main(referenceBlocks, s)), cal, sp.mz));
  const baseMassIonsPpm = species.map((sp, s) => massPpm(main(referenceBlocks, s).meanTime_s, cal, sp.mz));

  const sensitivities: ParameterSensitivity[] = params.map((p) => {
    const perSpecies = species.map((sp, s): SpeciesSensitivity => {
      const linked = p.kind === 'slow' ? p.id : p.linkedTo;
      let dt: number | null = null;
      let dm: number | null = null;
      let dtIons: number | null = null;
      let dmIons: number | null = null;
      let dR: number | null = null;
      let dRi: number | null = null;
      if (linked) {
        const plus = main(blocksAt(`${linked}+`)!, s);
        const minus = main(blocksAt(`${linked}-`)!, s);
        const step = slow.find((q) => q.id === linked)!.step;
        dt = diff(peakTime(plus), peakTime(minus), step);
        dm = diff(massPpm(peakTime(plus), cal, sp.mz), massPpm(peakTime(minus), cal, sp.mz), step);
        dtIons = diff(plus.meanTime_s, minus.meanTime_s, step);
        dmIons = diff(massPpm(plus.meanTime_s, cal, sp.mz), massPpm(minus.meanTime_s, cal, sp.mz), step);
        if (p.kind === 'slow') {
          dR = diff(headline(plus), headline(minus), step);
          dRi = diff(plus.ionResolvingPower, minus.ionResolvingPower, step);
        }
      } else if (p.id === TRIGGER_ID) {
        const t = peakTime(main(baseBlocks, s));
        dt = 1e-9;
        dm = t === null ? null : diff(massPpm(t + 1e-10, cal, sp.mz), massPpm(t - 1e-10, cal, sp.mz), 1e-10);
        dm = dm === null ? null : dm * 1e-9;
        dtIons = dt;
        dmIons = dm;
      }
      let atTol: BlockFigures | null = null;
      if (p.tolerance > 0) {
        if (p.kind === 'slow') atTol = main(blocksAt(`${p.id}@tol`)!, s);
        else {
          const b = shotBlocks(shotWithTolerance.indexOf(p));
          atTol = b ? main(b, s) : null;
        }
      }
      const scale = p.kind === 'shot' ? 1 / Math.sqrt(shots) : 1;
      return {
        mz: sp.mz,
        flightTime_ns_per_unit: dt === null ? null : dt * 1e9,
        massShift_ppm_per_unit: dm,
        flightTimeIons_ns_per_unit: dtIons === null ? null : dtIons * 1e9,
        massShiftIons_ppm_per_unit: dmIons,
        resolvingPower_per_unit: dR,
        resolvingPowerIons_per_unit: dRi,
        massError_ppm_atTolerance: dm === null ? null : Math.abs(dm) * p.tolerance * scale,
        massErrorIons_ppm_atTolerance: dmIons === null ? null : Math.abs(dmIons) * p.tolerance * scale,
        resolvingPowerAtTolerance: atTol ? headline(atTol) : null,
        resolvingPowerIonsAtTolerance: atTol ? atTol.ionResolvingPower : null,
      };
    });
    return { parameter: p.id, label: p.label, kind: p.kind, unit: p.unit, settingPath: p.settingPath, tolerance: p.tolerance, step: p.step, species: perSpecies };
  });

  const tol = toleranceSettings(preset);
  const target = request.targetAccuracy_ppm ?? tol.target?.massAccuracy_ppm ?? DEFAULT_TARGET_PPM;
  const range = request.range ?? (tol.target?.fromMz !== undefined || tol.target?.toMz !== undefined ? ([tol.target?.fromMz ?? 0, tol.target?.toMz ?? 10_000_000] as const) : null);
  const budget = buildBudget(params, sensitivities, species, shots, target, range);

  let monteCarlo: MonteCarloResult | null = null;
  if (draws > 0) {
    const { z: design, design: layout } = monteCarloDesign(sensitivities, species.length, shots, params, draws, drawSeed);
    const rootShots = Math.sqrt(shots);
    const nSlow = slowWithTolerance.length;
    const mcPoints: TolerancePoint[] = mcIndices.map((d) => ({
      index: d,
      slow: Object.fromEntries(slowWithTolerance.map((p, k) => [p.id, p.tolerance * design[d][k]])),
      shot: Object.fromEntries(shotWithTolerance.map((p) => [p.id, p.tolerance])),
      shotMean: Object.fromEntries(shotWithTolerance.map((p, k) => [p.id, (p.tolerance * design[d][nSlow + k]) / rootShots])),
      shotSeed: (Math.imul(drawSeed + 1, 0x9e3779b1) ^ d) >>> 0,
    }));
    const round3 = await runPoints(pool, { ...baseTask, shotDerivatives }, mcPoints, tick('Monte Carlo'));
    const perDraw: MonteCarloDraw[] = mcIndices.map((d) => {
      const r = round3.results.get(d);
      if (r === undefined || typeof r === 'string') {
        const none = species.map(() => null);
        return { index: d, massError_ppm: none, massErrorIons_ppm: none, resolvingPower: none, error: r ?? 'no result' };
      }
      return {
        index: d,
        massError_ppm: species.map((sp, s) => {
          const m = massPpm(peakTime(main(r, s)), cal, sp.mz);
          return m === null || baseMassPpm[s] === null ? null : m - baseMassPpm[s]!;
        }),
        massErrorIons_ppm: species.map((sp, s) => {
          const m = massPpm(main(r, s).meanTime_s, cal, sp.mz);
          return m === null || baseMassIonsPpm[s] === null ? null : m - baseMassIonsPpm[s]!;
        }),
        resolvingPower: species.map((_, s) => headline(main(r, s))),
      };
    });
    monteCarlo = summariseDraws(perDraw, species, sensitivities, params, draws, drawSeed, request.shard ?? null, layout);
  }

  const c = cal.coefficients;
  return {
    method: METHOD,
    ions: request.ions ?? preset.run.ions,
    seed,
    shots,
    calibration: { ...cal, coefficients_ns: { t0_ns: c.t0_s * 1e9, a_ns_per_sqrtTh: c.a_s_per_sqrtTh * 1e9, b_ns_per_Th: c.b_s_per_Th * 1e9 } },
    species: species.map((sp, s) => {
      const b = main(baseBlocks, s);
      const t = peakTime(b);
      return {
        label: sp.label,
        mz: sp.mz,
        flightTime_ns: t === null ? null : t * 1e9,
        flightTimeIons_ns: b.meanTime_s === null ? null : b.meanTime_s * 1e9,
        resolvingPower: b.spectrumResolvingPower,
        resolvingPowerIons: b.ionResolvingPower,
      };
    }),
    sensitivities,
    resolvingPowerAllShotTerms: shotWithTolerance.length > 0 ? species.map((_, s) => headline(main(referenceBlocks, s))) : null,
    budget,
    monteCarlo,
  };
}

/**
 * The Monte Carlo's draws: one dimension per slow parameter with a tolerance, then one per shot term
 * with a tolerance (its mean over the shots, sd = tolerance/√shots), laid out along every species'
 * linearised mass error (headline figure) at once.
 */
export function monteCarloDesign(
  sensitivities: readonly ParameterSensitivity[],
  speciesCount: number,
  shots: number,
  params: readonly ToleranceParameter[],
  draws: number,
  drawSeed: number,
): { z: Float64Array[]; design: DrawDesign } {
  const drawn = [...params.filter((p) => p.kind === 'slow' && p.tolerance > 0), ...params.filter((p) => p.kind === 'shot' && p.tolerance > 0)];
  const rootShots = Math.sqrt(shots);
  const directions = Array.from({ length: speciesCount }, (_, s) =>
    drawn.map((p) => {
      const perUnit = sensitivities.find((x) => x.parameter === p.id)?.species[s].massShift_ppm_per_unit ?? 0;
      return (perUnit * p.tolerance) / (p.kind === 'shot' ? rootShots : 1);
    }),
  );
  const { z, design } = latticeNormalDesign(draws, directions, drawn.length, drawSeed);
  return { z, design };
}

/** The linearised prediction of the mass error's sd per species: root-sum-square of the contributions at the tolerances. */
export function linearMassSd_ppm(sensitivities: readonly ParameterSensitivity[], s: number, ions = false): number | null {
  let sum = 0;
  for (const p of sensitivities) {
    const e = ions ? p.species[s].massErrorIons_ppm_atTolerance : p.species[s].massError_ppm_atTolerance;
    if (e === null) {
      if (p.tolerance > 0) return null;
      continue;
    }
    sum += e * e;
  }
  return Math.sqrt(sum);
}

function summariseDraws(
  perDraw: MonteCarloDraw[],
  species: ToleranceTaskResult['species'],
  sensitivities: ParameterSensitivity[],
  params: ToleranceParameter[],
  draws: number,
  drawSeed: number,
  shard: { index: number; count: number } | null,
  design: DrawDesign,
): MonteCarloResult {
  return {
    draws,
    drawSeed,
    shard,
    parameters: params.filter((p) => p.tolerance > 0).map((p) => p.id),
    design,
    drawsRun: perDraw.length,
    failedDraws: perDraw.filter((d) => d.error !== undefined).length,
    species: monteCarloSpecies(perDraw, species, sensitivities),
    perDraw,
  };
}

/** Φ⁻¹(0.95): the 5th/95th percentiles of a normal distribution lie at ∓1.6449 sd. */
const Z95 = 1.6448536269514722;

/** Per-species summaries and histograms of a set of draws (also used to join shards). */
export function monteCarloSpecies(
  perDraw: readonly MonteCarloDraw[],
  species: readonly { readonly label: string; readonly mz: number }[],
  sensitivities: readonly ParameterSensitivity[],
): MonteCarloSpecies[] {
  return species.map((sp, s) => {
    const mass = perDraw.map((d) => d.massError_ppm[s]);
    const r = perDraw.map((d) => d.resolvingPower[s]);
    const band = (sd: number | null) => ({ sd_ppm: sd, p5_ppm: sd === null ? null : -Z95 * sd, p95_ppm: sd === null ? null : Z95 * sd });
    return {
      label: sp.label,
      mz: sp.mz,
      massError_ppm: summarise(mass),
      massErrorIons_ppm: summarise(perDraw.map((d) => d.massErrorIons_ppm[s])),
      resolvingPower: summarise(r),
      linear: band(linearMassSd_ppm(sensitivities, s)),
      linearIons: band(linearMassSd_ppm(sensitivities, s, true)),
      histograms: { massError_ppm: histogram(mass), resolvingPower: histogram(r) },
    };
  });
}
