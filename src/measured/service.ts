/**
 * What the app asks of the engine for a measured spectrum, DOM-free so that the Web Worker
 * (workers/measured.worker.ts) and the tests share it: read a file's text, and analyse the spectrum
 * against a preset (peaks, matches, optional fit, the model profile for the residual strip).
 * Problems come back as values (`ok: false` with one message), never as thrown errors.
 */
import { validatePreset } from '../presets/load';
import type { Preset } from '../presets/schema';
import { analyseMeasured, type MeasuredAnalysisOptions } from './analyse';
import { FitError } from './fit';
import { importMeasuredSpectrum, type ImportOptions, type ImportResult } from './importSpectrum';
import type { MeasuredSpectrum } from './measuredSpectrum';
import { modelProfile, type ModelProfile } from './profile';
import { measuredSection, type MeasuredSection } from './report';

export interface AnalyseRequest {
  readonly preset: unknown;
  readonly spectrum: MeasuredSpectrum;
  readonly fileName: string | null;
  readonly options: MeasuredAnalysisOptions;
}

export type AnalyseOutcome =
  | {
      readonly ok: true;
      readonly section: MeasuredSection;
      /** The fitted preset (a new object; the caller decides whether to use it), or null without a fit. */
      readonly fittedPreset: Preset | null;
      /** The model profile of the fitted preset (or of the given one without a fit), on the measured grid. */
      readonly profile: ModelProfile | null;
    }
  | { readonly ok: false; readonly error: string };

export interface MeasuredService {
  read(text: string, options: ImportOptions): ImportResult;
  analyse(request: AnalyseRequest): AnalyseOutcome;
}

export const measuredService: MeasuredService = {
  read: (text, options) => importMeasuredSpectrum(text, options),
  analyse: (request) => {
    const checked = validatePreset(request.preset);
    if (!checked.ok) return { ok: false, error: `the setup is not valid: ${checked.issues.map((i) => `${i.path}: ${i.message}`).join('; ')}` };
    try {
      const analysis = analyseMeasured(checked.value, request.spectrum, request.options);
      const fittedPreset = analysis.fit?.fittedPreset ?? null;
      const profile = modelProfile(fittedPreset ?? checked.value, request.spectrum, request.options);
      return { ok: true, section: measuredSection(analysis, request.fileName), fittedPreset, profile };
    } catch (err) {
      if (err instanceof FitError) return { ok: false, error: `${err.path}: ${err.message}` };
      throw err;
    }
  },
};

/** The typed arrays of a read result, for a transfer out of the worker. */
export function importTransferables(result: ImportResult): ArrayBuffer[] {
  return result.ok ? [result.spectrum.x.buffer as ArrayBuffer, result.spectrum.intensity.buffer as ArrayBuffer] : [];
}

export function profileTransferables(outcome: AnalyseOutcome): ArrayBuffer[] {
  return outcome.ok && outcome.profile ? [outcome.profile.model.buffer as ArrayBuffer, outcome.profile.residual.buffer as ArrayBuffer] : [];
}
