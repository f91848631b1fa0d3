/**
 * A measured spectrum against a preset: its peaks, their pairing with the preset's species, and,
 * when parameters are named, the fit (fit.ts). Pure: the CLI, the worker and the tests share it.
 */
import type { Preset } from '../presets/schema';
import { fitMeasured, medianStep, type FitOptions, type FitParameterRequest, type MeasuredFit } from './fit';
import type { MeasuredSpectrum } from './measuredSpectrum';
import { runModelPeaks, type ModelRunOptions } from './modelPeaks';
import { matchPeaks, pickMeasuredPeaks, type MeasuredPeak, type PeakMatch, type PredictedPeak } from './peakMatch';

/** Default match window: 0.5 % of the predicted flight time (≈ 1 % in mass), or 1 % of m/z. */
export const DEFAULT_TIME_WINDOW_FRACTION = 0.005;
export const DEFAULT_MZ_WINDOW_FRACTION = 0.01;

export interface MeasuredAnalysisOptions extends ModelRunOptions {
  readonly fit?: readonly FitParameterRequest[];
  readonly widths?: boolean;
  /** Match window: ns for a time axis, Th for an m/z axis; default as above. */
  readonly matchWindow?: number;
  readonly maxRounds?: number;
}

export interface MeasuredAnalysis {
  readonly spectrum: MeasuredSpectrum;
  readonly peaks: readonly MeasuredPeak[];
  readonly predicted: readonly PredictedPeak[];
  readonly matches: readonly PeakMatch[];
  readonly fit: MeasuredFit | null;
}

export function analyseMeasured(preset: Preset, spectrum: MeasuredSpectrum, options: MeasuredAnalysisOptions = {}): MeasuredAnalysis {
  const peaks = pickMeasuredPeaks(spectrum);
  let predicted: PredictedPeak[];
  if (spectrum.axis === 'time') {
    const run = runModelPeaks(preset, [], { origin_s: spectrum.x[0], sampleInterval_s: medianStep(spectrum.x) }, options);
    predicted = run.species.flatMap((s, i) => (s.meanTime_s === null ? [] : [{ species: i, label: s.label, mz: s.mz, position: s.meanTime_s }]));
  } else {
    const run = runModelPeaks(preset, [], { origin_s: 0, sampleInterval_s: 1e-9 }, { ...options, ions: Math.min(options.ions ?? preset.run.ions, 1000) });
    predicted = run.species.map((s, i) => ({ species: i, label: s.label, mz: s.mz, position: s.mz }));
  }
  const fraction = spectrum.axis === 'time' ? DEFAULT_TIME_WINDOW_FRACTION : DEFAULT_MZ_WINDOW_FRACTION;
  const fixed = options.matchWindow === undefined ? null : spectrum.axis === 'time' ? options.matchWindow * 1e-9 : options.matchWindow;
  const matches = matchPeaks(peaks, predicted, (position) => fixed ?? fraction * position);
  let fit: MeasuredFit | null = null;
  if (options.fit && options.fit.length > 0) {
    const fitOptions: FitOptions = { parameters: options.fit, widths: options.widths, ions: options.ions, seed: options.seed, maxRounds: options.maxRounds };
    fit = fitMeasured(preset, spectrum, peaks, matches, fitOptions);
  }
  return { spectrum, peaks, predicted, matches, fit };
}
