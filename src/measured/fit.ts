/**
 * Fitting the instrument to a measured spectrum: chosen preset parameters (by their paths, as scans
 * and tunes address them) are adjusted within bounds so that the simulated peak centroids and rms
 * widths match the measured ones, by bounded nonlinear least squares with the Levenberg–Marquardt
 * method of the ml-levenberg-marquardt package.
 *
 * - Observations: per matched peak, the windowed centroid and (optionally) rms width (moments.ts),
 *   in ns. Each residual is weighed by σ² = counting variance of the measured moment (intensities
 *   taken as counts) + Monte-Carlo variance of the simulated one; σ is fixed within a round of
 *   iterations and renewed between rounds.
 * - The model is one simulation per parameter vector, always with the same seed (common random
 *   numbers), so it is a smooth function of the parameters and finite differences are meaningful.
 *   The Jacobian is taken by forward differences during the iterations and by central differences
 *   at the solution.
 * - Standard errors: sqrt of the diagonal of (JᵀWJ)⁻¹ at the solution (J the Jacobian, W = 1/σ²),
 *   valid when the intensities are counts. `standardErrorScaled` multiplies them by the square root
 *   of the reduced χ², for intensities in other units or a model that does not fit.
 * - The library runs a fixed number of iterations; it is called in rounds of a few iterations, and
 *   the rounds stop when χ² and the parameters have settled (changes below 1e-4 relative and 1 %
 *   of a standard error).
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { inverse, Matrix } from 'ml-matrix';
import type { Preset } from '../presets/schema';
import { cloneJson, numberAt, parsePath, withValues } from '../tuning/paramPath';
import { runModelPeaks, type ModelRun, type ModelRunOptions, type PeakTarget } from './modelPeaks';
import { windowedMoments } from './moments';
import type { MeasuredSpectrum } from './measuredSpectrum';
import type { MeasuredPeak, PeakMatch } from './peakMatch';

export interface FitParameterRequest {
  readonly path: string;
  readonly min?: number;
  readonly max?: number;
}

export interface FitOptions extends ModelRunOptions {
  readonly parameters: readonly FitParameterRequest[];
  /** Fit the rms widths as well as the centroids (default true). */
  readonly widths?: boolean;
  /** Most rounds of iterations (default 10). */
  readonly maxRounds?: number;
}

export interface FitParameterResult {
  readonly path: string;
  readonly initial: number;
  readonly value: number;
  readonly standardError: number | null;
  readonly standardErrorScaled: number | null;
  readonly min: number;
  readonly max: number;
  /** The value sits on a bound: its standard error describes the unbounded problem only. */
  readonly atBound: boolean;
}

export interface FitResidual {
  readonly species: number;
  readonly label: string;
  readonly mz: number;
  readonly quantity: 'centroid' | 'rmsWidth';
  readonly measured_ns: number;
  readonly model_ns: number;
  readonly initialModel_ns: number;
  readonly residual_ns: number;
  /** Centroid residual as a mass error, 2·Δt/t (m ∝ t²); null for widths. */
  readonly residual_ppm: number | null;
  readonly sigma_ns: number;
}

export interface MeasuredFit {
  readonly parameters: readonly FitParameterResult[];
  readonly covariance: number[][];
  readonly correlation: number[][];
  readonly residuals: readonly FitResidual[];
  readonly chiSquare: number;
  readonly degreesOfFreedom: number;
  readonly reducedChiSquare: number | null;
  readonly rounds: number;
  readonly iterations: number;
  readonly simulations: number;
  readonly converged: boolean;
  /** The preset with the fitted values written at the fitted paths (a new object). */
  readonly fittedPreset: Preset;
}

/** Thrown for a fit that cannot start or go on; `path` names the parameter or input at fault. */
export class FitError extends Error {
  constructor(
    readonly path: string,
    message: string,
  ) {
    super(message);
    this.name = 'FitError';
  }
}

/** Optional preset fields that a fit may set although the preset omits them, with their default. */
const OPTIONAL_FIT_FIELDS: Readonly<Record<string, number>> = { 'acquisition.timeOffset_ns': 0 };

/** A copy of the preset in which every optional field named by `paths` is present (at its default). */
export function withFitFields(preset: Preset, paths: readonly string[]): Preset {
  const doc = cloneJson(preset) as unknown as Record<string, Record<string, unknown> | undefined>;
  for (const path of paths) {
    if (!(path in OPTIONAL_FIT_FIELDS) || numberAt(doc, path).ok) continue;
    const keys = parsePath(path)!;
    const parent = doc[keys[0] as string];
    if (keys.length === 2 && parent && typeof parent === 'object') parent[keys[1] as string] = OPTIONAL_FIT_FIELDS[path];
  }
  return doc as unknown as Preset;
}

/** Half-width of a peak's moment window: 2.5 FWHM, at most 45 % of the way to a neighbouring peak. */
export function momentHalfWidth(peaks: readonly MeasuredPeak[], index: number, sampleInterval: number): number {
  const p = peaks[index];
  let w = p.fwhm !== null && p.fwhm > 0 ? 2.5 * p.fwhm : 10 * sampleInterval;
  if (index > 0) w = Math.min(w, 0.45 * (p.position - peaks[index - 1].position));
  if (index + 1 < peaks.length) w = Math.min(w, 0.45 * (peaks[index + 1].position - p.position));
  return Math.max(w, 2 * sampleInterval);
}

/** The typical sample interval of an ascending axis (median of the steps). */
export function medianStep(x: Float64Array): number {
  const steps = Array.from({ length: x.length - 1 }, (_, i) => x[i + 1] - x[i]).sort((a, b) => a - b);
  return steps[steps.length >> 1];
}

interface Observation {
  readonly match: PeakMatch;
  readonly quantity: 'centroid' | 'rmsWidth';
  readonly measured_ns: number;
  readonly variance_ns2: number;
}

export function fitMeasured(
  nominal: Preset,
  spectrum: MeasuredSpectrum,
  peaks: readonly MeasuredPeak[],
  matches: readonly PeakMatch[],
  options: FitOptions,
): MeasuredFit {
  if (spectrum.axis !== 'time') {
    throw new FitError('measured', 'the fit needs a spectrum on a time axis; this one is on m/z (converting it would need the very calibration the fit is for)');
  }
  if (spectrum.centroided) throw new FitError('measured', 'the fit needs a profile spectrum (it compares peak shapes); this file holds a centroided peak list');
  const requests = options.parameters;
  if (requests.length === 0) throw new FitError('fit', 'give at least one parameter path to fit');
  const paths = requests.map((r) => r.path);
  const duplicate = paths.find((p, i) => paths.indexOf(p) !== i);
  if (duplicate) throw new FitError(duplicate, 'is given twice');
  const base = withFitFields(nominal, paths);
  const initial = paths.map((path) => {
    const found = numberAt(base, path);
    if (!found.ok) throw new FitError(path, found.reason);
    return found.value;
  });
  const bounds = requests.map((r, k) => defaultBounds(base, paths, initial, k, r));

  // Observations from the measured peaks.
  const dt = medianStep(spectrum.x);
  const targets: PeakTarget[] = [];
  const observations: Observation[] = [];
  const useWidths = options.widths ?? true;
  for (const match of matches) {
    const halfWidth_s = momentHalfWidth(peaks, match.peak, dt);
    const m = windowedMoments(spectrum.x, spectrum.intensity, match.measured, halfWidth_s);
    if (m === null) continue;
    targets.push({ species: match.species, halfWidth_s });
    observations.push({ match, quantity: 'centroid', measured_ns: m.centroid * 1e9, variance_ns2: m.centroidVariance * 1e18 });
    if (useWidths) observations.push({ match, quantity: 'rmsWidth', measured_ns: m.rmsWidth * 1e9, variance_ns2: m.rmsWidthVariance * 1e18 });
  }
  if (observations.length < paths.length || observations.length < 2) {
    throw new FitError('fit', `${observations.length} measured quantities (from ${targets.length} matched peaks) cannot determine ${paths.length} parameters; match more peaks or fit fewer parameters`);
  }
  const grid = { origin_s: spectrum.x[0], sampleInterval_s: dt };

  // The model, cached per parameter vector (the library asks for the same vector more than once).
  const cache = new Map<string, { values: number[]; variances: number[] }>();
  let simulations = 0;
  const model = (p: readonly number[]): { values: number[]; variances: number[] } => {
    const key = p.join(',');
    const hit = cache.get(key);
    if (hit) return hit;
    const preset = presetAt(base, paths, p);
    const run: ModelRun = runModelPeaks(preset, targets, grid, options);
    simulations++;
    const values: number[] = [];
    const variances: number[] = [];
    run.peaks.forEach((peak, t) => {
      if (!peak.moments) throw new FitError(paths.join(','), `at ${describe(paths, p)} the simulated peak of ${targets[t] && observations.find((o) => o.match.species === targets[t].species)?.match.label} is empty (no ion detected in its window)`);
      values.push(peak.moments.centroid * 1e9);
      variances.push(peak.centroidVariance * 1e18);
      if (useWidths) {
        values.push(peak.moments.rmsWidth * 1e9);
        variances.push(peak.rmsWidthVariance * 1e18);
      }
    });
    const entry = { values, variances };
    if (cache.size > 2000) cache.clear();
    cache.set(key, entry);
    return entry;
  };

  // Parameters in scaled units u = (p − p0)/scale so that one LM damping suits all of them.
  const scale = bounds.map(([lo, hi]) => (hi - lo) / 2);
  const toP = (u: readonly number[]): number[] => u.map((v, k) => initial[k] + v * scale[k]);
  const step = 1e-4;
  // Differences stay inside the bounds (one-sided next to a bound), so every preset stays valid.
  const jacobianAt = (p: readonly number[], sigma: readonly number[], central: boolean): number[][] => {
    const f0 = model(p).values;
    return p.map((_, k) => {
      const [lo, hi] = bounds[k];
      const h = step * scale[k];
      const canUp = p[k] + h <= hi;
      const canDown = p[k] - h >= lo;
      const shifted = (d: number): number[] => {
        const q = [...p];
        q[k] += d;
        return model(q).values;
      };
      if (central && canUp && canDown) {
        const fUp = shifted(h);
        const fDown = shifted(-h);
        return fUp.map((v, j) => (v - fDown[j]) / (2 * h * (sigma[j] ?? 1)));
      }
      const d = canUp ? h : -h;
      const fd = shifted(d);
      return fd.map((v, j) => (v - f0[j]) / (d * (sigma[j] ?? 1)));
    });
  };

  const y = observations.map((o) => o.measured_ns);
  const index = observations.map((_, j) => j);
  const initialModel = model(initial).values;
  let u = initial.map(() => 0);
  let sigma = observations.map((o, j) => Math.sqrt(o.variance_ns2 + model(initial).variances[j]));
  let chi2 = chiSquare(y, initialModel, sigma);
  let rounds = 0;
  let iterations = 0;
  let converged = false;
  const maxRounds = options.maxRounds ?? 10;
  while (rounds < maxRounds && !converged) {
    rounds++;
    // The library's own `weights` option is not used: its weighting is not consistent between its
    // error and its step (checked with a straight-line fit), so the residuals are divided by σ here.
    const roundSigma = sigma;
    const result = levenbergMarquardt(
      { x: index, y: y.map((v, j) => v / roundSigma[j]) },
      (uu) => {
        const f = model(toP(uu)).values;
        return (j) => f[j] / roundSigma[j];
      },
      {
        initialValues: u,
        minValues: bounds.map(([lo], k) => (lo - initial[k]) / scale[k]),
        maxValues: bounds.map(([, hi], k) => (hi - initial[k]) / scale[k]),
        damping: 1e-3,
        maxIterations: 3,
        errorTolerance: 1e-12,
        // The model's partial derivatives with respect to u at each point, as the library expects them.
        jacobianFunction: (uu) => {
          const rows = jacobianAt(toP(uu), roundSigma, false);
          return (j) => rows.map((row, k) => row[j] * scale[k]);
        },
      },
    );
    iterations += result.iterations;
    const next = result.parameterValues;
    const pNext = toP(next);
    const fNext = model(pNext);
    const newSigma = observations.map((o, j) => Math.sqrt(o.variance_ns2 + fNext.variances[j]));
    const chiNext = chiSquare(y, fNext.values, newSigma);
    const se = standardErrors(jacobianAt(pNext, newSigma, false));
    const moved = next.map((v, k) => Math.abs(v - u[k]) * scale[k]);
    const settled = se !== null && moved.every((d, k) => d <= 0.01 * se[k]);
    converged = settled && Math.abs(chiNext - chi2) <= 1e-4 * Math.max(chi2, 1);
    u = next;
    sigma = newSigma;
    chi2 = chiNext;
  }

  const pHat = toP(u);
  const final = model(pHat);
  const J = jacobianAt(pHat, sigma, true);
  const cov = covariance(J);
  if (cov === null) {
    const flat = paths.filter((_, k) => J[k].every((v) => Math.abs(v) < 1e-300));
    throw new FitError(flat[0] ?? paths.join(','), flat.length ? 'does not change any fitted quantity (peak centroid or width): it cannot be fitted from this spectrum' : 'the fitted parameters are not independent (their effects on the peaks cannot be told apart): fit fewer of them');
  }
  const dof = observations.length - paths.length;
  const reduced = dof > 0 ? chi2 / dof : null;
  const parameters = paths.map((path, k): FitParameterResult => {
    const se = Math.sqrt(cov[k][k]);
    const [lo, hi] = bounds[k];
    return {
      path,
      initial: initial[k],
      value: pHat[k],
      standardError: Number.isFinite(se) ? se : null,
      standardErrorScaled: Number.isFinite(se) && reduced !== null ? se * Math.sqrt(reduced) : null,
      min: lo,
      max: hi,
      atBound: Math.abs(pHat[k] - lo) <= 1e-9 * scale[k] || Math.abs(pHat[k] - hi) <= 1e-9 * scale[k],
    };
  });
  const correlation = cov.map((row, a) => row.map((v, b) => v / Math.sqrt(cov[a][a] * cov[b][b])));
  const residuals = observations.map((o, j): FitResidual => {
    const model_ns = final.values[j];
    const residual_ns = o.measured_ns - model_ns;
    return {
      species: o.match.species,
      label: o.match.label,
      mz: o.match.mz,
      quantity: o.quantity,
      measured_ns: o.measured_ns,
      model_ns,
      initialModel_ns: initialModel[j],
      residual_ns,
      residual_ppm: o.quantity === 'centroid' ? (2 * residual_ns * 1e6) / model_ns : null,
      sigma_ns: sigma[j],
    };
  });
  const fitted = presetAt(base, paths, pHat);
  const fittedPreset: Preset = { ...fitted, name: fittedName(nominal.name) };
  return {
    parameters,
    covariance: cov,
    correlation,
    residuals,
    chiSquare: chi2,
    degreesOfFreedom: dof,
    reducedChiSquare: reduced,
    rounds,
    iterations,
    simulations,
    converged,
    fittedPreset,
  };
}

function fittedName(name: string): string {
  const suffix = ' (fitted)';
  return name.endsWith(suffix) ? name : name.slice(0, 120 - suffix.length) + suffix;
}

function presetAt(base: Preset, paths: readonly string[], p: readonly number[]): Preset {
  const r = withValues(base, paths, p);
  if (!r.ok) {
    const issue = r.issues[0];
    throw new FitError(issue.path, `${issue.message} (at ${describe(paths, p)})`);
  }
  return r.value;
}

const describe = (paths: readonly string[], p: readonly number[]): string => paths.map((path, k) => `${path} = ${p[k]}`).join(', ');

/** Given bounds, or the value ± 50 % (± 100 for a value of 0), narrowed to where the preset stays valid. */
function defaultBounds(base: Preset, paths: readonly string[], initial: readonly number[], k: number, r: FitParameterRequest): [number, number] {
  const v = initial[k];
  const span = v === 0 ? 100 : 0.5 * Math.abs(v);
  let lo = r.min ?? v - span;
  const hi = r.max ?? v + span;
  if (!(Number.isFinite(lo) && Number.isFinite(hi) && lo < hi)) throw new FitError(r.path, `bounds must be two numbers min < max (got ${lo}:${hi})`);
  if (v < lo || v > hi) throw new FitError(r.path, `the preset's value ${v} lies outside the bounds ${lo}:${hi}`);
  const validAt = (x: number): string | null => {
    const p = [...initial];
    p[k] = x;
    const res = withValues(base, paths, p);
    return res.ok ? null : res.issues[0].message;
  };
  // A default bound beyond the schema's range is pulled in to the nearest valid value (0 for a non-negative field).
  if (validAt(lo) !== null && r.min === undefined && v >= 0 && validAt(0) === null) lo = 0;
  if (validAt(lo) !== null && r.min === undefined) lo = v;
  const loIssue = validAt(lo);
  if (loIssue !== null) throw new FitError(r.path, `lower bound ${lo}: ${loIssue}`);
  const hiIssue = validAt(hi);
  if (hiIssue !== null) throw new FitError(r.path, `upper bound ${hi}: ${hiIssue}`);
  if (!(lo < hi)) throw new FitError(r.path, `no room to fit: give bounds (min:max)`);
  return [lo, hi];
}

function chiSquare(y: readonly number[], f: readonly number[], sigma: readonly number[]): number {
  let s = 0;
  for (let j = 0; j < y.length; j++) s += ((y[j] - f[j]) / sigma[j]) ** 2;
  return s;
}

/** (JᵀJ)⁻¹ for rows J[k][j] = ∂r_j/∂p_k (residuals already divided by σ); null when singular. */
function covariance(J: readonly number[][]): number[][] | null {
  const p = J.length;
  const normal = new Matrix(p, p);
  for (let a = 0; a < p; a++) {
    for (let b = 0; b < p; b++) {
      let s = 0;
      for (let j = 0; j < J[a].length; j++) s += J[a][j] * J[b][j];
      normal.set(a, b, s);
    }
  }
  for (let a = 0; a < p; a++) if (!(normal.get(a, a) > 0)) return null;
  let inv: Matrix;
  try {
    inv = inverse(normal);
  } catch {
    return null;
  }
  const out = inv.to2DArray();
  for (let a = 0; a < p; a++) if (!(out[a][a] > 0) || !Number.isFinite(out[a][a])) return null;
  return out;
}

function standardErrors(J: readonly number[][]): number[] | null {
  const cov = covariance(J);
  return cov ? cov.map((row, k) => Math.sqrt(row[k])) : null;
}
