/**
 * The simulated counterpart of the measured peaks: one run of a preset (the project's simulation,
 * src/simulation/run.ts), then per species block its own spectrum built with the preset's detector
 * settings on the measured time grid, and the same windowed moments as the measured peaks
 * (moments.ts). The run's own Monte-Carlo spread of those moments is estimated from the ions, so
 * that the fit weighs each residual by measured and simulated uncertainty together.
 */
import { applyTriggerJitter, effectivePulseSd_s } from '../analysis/detectorResponse';
import { buildSpectrum, type AcquisitionSettings } from '../analysis/spectrum';
import { Fate } from '../physics/fates';
import type { Preset } from '../presets/schema';
import { simulate } from '../simulation/run';
import { windowedMoments, type WindowedMoments } from './moments';

export interface ModelRunOptions {
  readonly ions?: number;
  readonly seed?: number;
}

export interface PeakTarget {
  readonly species: number;
  /** Window half-width of the moments (s), the same as for the measured peak. */
  readonly halfWidth_s: number;
}

export interface ModelPeak {
  readonly species: number;
  readonly moments: WindowedMoments | null;
  /** Monte-Carlo variances of the simulated centroid and rms width (s²), from the ions in the window. */
  readonly centroidVariance: number;
  readonly rmsWidthVariance: number;
  readonly detectedIons: number;
}

export interface ModelRun {
  readonly peaks: readonly ModelPeak[];
  /** Mean recorded time (s) and label of every species block, for matching. */
  readonly species: readonly { readonly label: string; readonly mz: number; readonly meanTime_s: number | null; readonly detected: number }[];
}

/** Detector settings of the preset on a given time grid (sample interval and grid origin). */
export function detectorSettingsOf(preset: Preset, seed: number, sampleInterval_s: number): Omit<AcquisitionSettings, 'recordStart_s' | 'recordLength_s'> {
  const acq = preset.acquisition;
  return {
    pulseFwhm_s: (acq?.pulseWidth_ns ?? 0) * 1e-9,
    detectorJitterSd_s: (acq?.detectorJitter_ns ?? 0) * 1e-9,
    triggerJitterSd_s: (acq?.triggerJitter_ns ?? 0) * 1e-9,
    shots: acq?.shots ?? 1,
    seed,
    sampleInterval_s,
    timeOffset_s: (acq?.timeOffset_ns ?? 0) * 1e-9,
  };
}

/**
 * Runs the preset and measures the requested species peaks. `gridOrigin_s` and `sampleInterval_s`
 * place the simulated samples on the measured grid.
 */
export function runModelPeaks(
  preset: Preset,
  targets: readonly PeakTarget[],
  grid: { readonly origin_s: number; readonly sampleInterval_s: number },
  options: ModelRunOptions = {},
): ModelRun {
  const result = simulate(preset, { ions: options.ions, seed: options.seed, analysis: false });
  const { ensemble: ens, trace } = result;
  const seed = result.compiled.population.seed;
  const base = detectorSettingsOf(preset, seed, grid.sampleInterval_s);
  const recorded = applyTriggerJitter(trace.flightTime_s, { ...base });
  const offset = base.timeOffset_s ?? 0;
  const pulseSd = effectivePulseSd_s(base);
  const dt = grid.sampleInterval_s;

  const species = ens.species.map((sp, s) => {
    let sum = 0;
    let count = 0;
    for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
      if (trace.fate[i] !== Fate.DETECTED) continue;
      sum += recorded[i] + offset;
      count++;
    }
    return { label: sp.label, mz: sp.mz, meanTime_s: count > 0 ? sum / count : null, detected: count };
  });

  const peaks = targets.map((target): ModelPeak => {
    const s = target.species;
    const from = ens.speciesStart[s];
    const to = ens.speciesStart[s + 1];
    const guess = species[s]?.meanTime_s ?? null;
    const none: ModelPeak = { species: s, moments: null, centroidVariance: Infinity, rmsWidthVariance: Infinity, detectedIons: 0 };
    if (guess === null) return none;
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = from; i < to; i++) {
      if (trace.fate[i] !== Fate.DETECTED) continue;
      const t = recorded[i] + offset;
      if (t < lo) lo = t;
      if (t > hi) hi = t;
    }
    // Record the species' whole arrival range and the window about it, on the measured grid.
    const reach = 8 * pulseSd + 2 * target.halfWidth_s + 4 * dt;
    const k0 = Math.floor((lo - reach - grid.origin_s) / dt);
    const k1 = Math.ceil((hi + reach - grid.origin_s) / dt);
    const spectrum = buildSpectrum(
      { arrival_s: trace.flightTime_s, fate: trace.fate, weight: trace.weight, from, to },
      { ...base, recordStart_s: grid.origin_s + k0 * dt, recordLength_s: (k1 - k0) * dt },
    );
    const moments = windowedMoments(spectrum.time_s, spectrum.intensity, guess, target.halfWidth_s);
    if (moments === null) return { ...none, detectedIons: spectrum.detectedIons };
    // Monte-Carlo spread of the moments: ions are the independent draws, the pulse is deterministic.
    const [wLo, wHi] = moments.window;
    const c = moments.centroid;
    const w2 = moments.rmsWidth * moments.rmsWidth;
    const extra = pulseSd * pulseSd + (dt * dt) / 12;
    let sw = 0;
    let varC = 0;
    let varW2 = 0;
    for (let i = from; i < to; i++) {
      if (trace.fate[i] !== Fate.DETECTED) continue;
      const t = recorded[i] + offset;
      if (t < wLo || t > wHi) continue;
      const w = trace.weight[i];
      const d = t - c;
      sw += w;
      varC += w * w * d * d;
      const e = d * d + extra - w2;
      varW2 += w * w * e * e;
    }
    varC /= sw * sw;
    varW2 /= sw * sw;
    return {
      species: s,
      moments,
      centroidVariance: varC,
      rmsWidthVariance: w2 > 0 ? varW2 / (4 * w2) : Infinity,
      detectedIons: spectrum.detectedIons,
    };
  });
  return { peaks, species };
}
