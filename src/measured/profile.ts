/**
 * Whole-profile comparison of a measured spectrum with the simulated one, for display: the
 * simulated spectrum of a preset (detector response, time offset) on the measured time grid,
 * scaled to the measured area, and the residual measured − model per point; and the rebinning of
 * a measured spectrum into the chart's bins. The fit itself uses peak moments (fit.ts), not this.
 */
import { buildSpectrum } from '../analysis/spectrum';
import type { Preset } from '../presets/schema';
import { simulate } from '../simulation/run';
import type { MeasuredSpectrum } from './measuredSpectrum';
import { detectorSettingsOf, type ModelRunOptions } from './modelPeaks';

export interface ModelProfile {
  /** Scaled model intensity at each measured point (same units as the measured intensity). */
  readonly model: Float64Array;
  /** measured − model at each point. */
  readonly residual: Float64Array;
  /** Factor applied to the simulated intensity (measured area / simulated area). */
  readonly scale: number;
}

/**
 * The simulated spectrum sampled on the measured grid (its median step; the measured points are
 * taken as bin centres), scaled so that both have the same area. Null for an m/z axis.
 */
export function modelProfile(preset: Preset, spectrum: MeasuredSpectrum, options: ModelRunOptions = {}): ModelProfile | null {
  if (spectrum.axis !== 'time') return null;
  const x = spectrum.x;
  const n = x.length;
  const dt = (x[n - 1] - x[0]) / (n - 1);
  const result = simulate(preset, { ions: options.ions, seed: options.seed, analysis: false });
  const settings = { ...detectorSettingsOf(preset, result.compiled.population.seed, dt), recordStart_s: x[0] - dt / 2, recordLength_s: n * dt };
  const sim = buildSpectrum({ arrival_s: result.trace.flightTime_s, fate: result.trace.fate, weight: result.trace.weight }, settings);
  // Nearest simulated sample for each measured point (the grids agree when the file is uniformly sampled).
  const model = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const j = Math.min(sim.intensity.length - 1, Math.max(0, Math.round((x[k] - sim.time_s[0]) / dt)));
    model[k] = sim.intensity[j];
  }
  let measuredArea = 0;
  let modelArea = 0;
  for (let k = 0; k < n; k++) {
    measuredArea += spectrum.intensity[k];
    modelArea += model[k];
  }
  const scale = modelArea > 0 ? measuredArea / modelArea : 0;
  const residual = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    model[k] *= scale;
    residual[k] = spectrum.intensity[k] - model[k];
  }
  return { model, residual, scale };
}

/**
 * Sums the points of (x, y) that fall in each of `bins` equal bins over [lo, hi) (x shifted by
 * `shift` first), for drawing a measured spectrum over the simulated histogram. Points outside are
 * skipped. `out` is filled and returned.
 */
export function rebinPoints(x: Float64Array, y: Float64Array, shift: number, lo: number, hi: number, out: Float64Array): Float64Array {
  out.fill(0);
  const bins = out.length;
  const scale = bins / (hi - lo);
  for (let k = 0; k < x.length; k++) {
    const b = Math.floor((x[k] + shift - lo) * scale);
    if (b >= 0 && b < bins) out[b] += y[k];
  }
  return out;
}
