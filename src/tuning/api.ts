/**
 * The engine's service contract, as the comlink worker (workers/engine.worker.ts) exposes it and as
 * the CLI calls it in-process: runs (contract in src/simulation/runContract.ts), scans and tunes. Presets cross this boundary as validated `Preset` objects (plain
 * JSON data); results carry typed arrays that the worker transfers rather than copies.
 */
import type { Preset } from '../presets/schema';
import type { RunOutput, RunRequest } from '../simulation/runContract';
import type { ResolvingPowerCriterion } from '../simulation/headline';
import type { SpeciesMargin } from './transmissionConstraint';

export type { ResolvingPowerCriterion } from '../simulation/headline';

// The run contract lives with the simulation; re-exported here so that code written against the
// old place (branches in flight) still compiles. New code imports src/simulation/runContract.ts.
export type { RunOutput, RunRequest } from '../simulation/runContract';

/** One scanned parameter, addressed by its dotted path in the preset (e.g. `source.extraction.delay_ns`). */
export interface ScanAxis {
  readonly path: string;
  /** Either an inclusive range with a number of points, or an explicit list of values. */
  readonly from?: number;
  readonly to?: number;
  readonly steps?: number;
  readonly values?: readonly number[];
}

export type ObjectiveName = 'max-r-at-mz' | 'max-min-r-over-range' | 'min-fwhm';

export interface Objective {
  readonly name: ObjectiveName;
  /** m/z of the target species (for max-r-at-mz and min-fwhm). */
  readonly targetMz?: number;
  /** m/z range (for max-min-r-over-range). */
  readonly range?: readonly [number, number];
}

export interface ScanRequest {
  readonly preset: Preset;
  /** One axis for a 1-D scan, two for a 2-D scan (first axis varies slowest). */
  readonly axes: readonly ScanAxis[];
  readonly objective?: Objective;
  readonly ions?: number;
  /** Override of the preset's seed; every point uses the same seed (common random numbers). */
  readonly seed?: number;
  /** Deterministic share of the points: shard i of n (0-based i). */
  readonly shard?: { readonly index: number; readonly count: number };
  /**
   * Which R the objective reads: 'spectrum' (the simulated spectrum peak, what the instrument would
   * measure; the default when the preset has acquisition settings) or 'ideal' (ion arrival times only).
   */
  readonly criterion?: ResolvingPowerCriterion;
}

export interface ScanSpeciesPoint {
  readonly mz: number;
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  readonly transmission: number;
  readonly label?: string;
  /** Arrival-time standard deviation and the binning-free width (shortest 76 % interval). */
  readonly sdFlightTime_ns?: number | null;
  readonly fwhmShortest_ns?: number | null;
  readonly resolvingPowerShortest?: number | null;
  /** FWHM and R of the species' peak in the simulated spectrum (with acquisition settings). */
  readonly spectrumFwhm_ns?: number | null;
  readonly spectrumResolvingPower?: number | null;
}

export interface ScanPoint {
  /** Global index of the point in the full scan (stable across shards). */
  readonly index: number;
  readonly values: readonly number[];
  readonly species: readonly ScanSpeciesPoint[];
  readonly objective: number | null;
}

export interface ScanResult {
  readonly axes: readonly ScanAxis[];
  readonly totalPoints: number;
  readonly points: readonly ScanPoint[];
  /** Ions per point and the seed every point used. */
  readonly ions?: number;
  readonly seed?: number;
  readonly objective?: Objective | null;
  readonly shard?: { readonly index: number; readonly count: number } | null;
  /** Which R the objective read (see ScanRequest.criterion). */
  readonly criterion?: ResolvingPowerCriterion;
}

export interface TuneParameter {
  readonly path: string;
  readonly min: number;
  readonly max: number;
}

/**
 * Peak width the optimiser works on. The reported objective always uses the histogram FWHM, but that
 * is a step function of the parameters at finite ion counts; these are smooth (with common random
 * numbers): 'sd' = 2·sqrt(2 ln 2)·standard deviation (the FWHM of a gaussian of that spread),
 * 'shortest' = the shortest interval holding 76.1 % of the ions, 'fwhm' = the histogram FWHM itself.
 */
export type WidthMeasure = 'sd' | 'shortest' | 'fwhm';

export interface TuneRequest {
  readonly preset: Preset;
  readonly parameters: readonly TuneParameter[];
  readonly objective: Objective;
  /**
   * Transmission constraint, per species (./transmissionConstraint): `minTransmission` is an absolute
   * floor (0..1) every species must keep; `keepTransmission` the share (0..1) of its transmission at the
   * preset's settings every species must keep. At most one; when both are omitted, every species keeps
   * 99 % of its current transmission (so a tune cannot narrow a peak by losing ions of any species).
   */
  readonly minTransmission?: number;
  readonly keepTransmission?: number;
  readonly ions?: number;
  readonly seed?: number;
  /** Width the optimiser minimises (default 'sd'). */
  readonly measure?: WidthMeasure;
  /** Independent optimiser starts besides the analytic one (default 3); results do not depend on the pool size. */
  readonly restarts?: number;
  /** Evaluation budget of each local search (default 60 per parameter, at least 40). */
  readonly maxEvaluations?: number;
  /** Start from the published focusing conditions where they apply (default true); false starts from the preset's values. */
  readonly useAnalyticStart?: boolean;
  /** Return the search's best even when the preset's own settings score better (default false: keep the preset's). */
  readonly allowWorse?: boolean;
  /** Which R the objective reads (see ScanRequest.criterion); 'spectrum' by default with acquisition settings. */
  readonly criterion?: ResolvingPowerCriterion;
}

export interface TuneResult {
  readonly start: readonly number[];
  /** The recommended values: the search's best, or the preset's own when they score better (see `recommendation`). */
  readonly best: readonly number[];
  /** The objective's own figure (the one the optimiser minimised, by `measure`) at `best`. */
  readonly objective: number | null;
  /** For each parameter, the interval over which the objective stays within 10 % of the best. */
  readonly flatness: readonly { readonly path: string; readonly low: number; readonly high: number }[];
  readonly evaluations: number;
  /** The preset with the tuned values applied (validated). */
  readonly tunedPreset: Preset;
  /** Objective at the start point, and where the start came from (e.g. the published focus condition used). */
  readonly startObjective?: number | null;
  readonly startSource?: readonly string[];
  readonly measure?: WidthMeasure;
  /** False when no evaluated setting met the constraints (the values shown then only reduce the violation). */
  readonly feasible?: boolean;
  /** The transmission constraint the tune respected (given, or the default), in words and as a floor per species. */
  readonly transmissionConstraint?: string;
  readonly transmissionFloors?: readonly number[];
  /** Species below their floor at the recommended setting (only when no setting met the constraint). */
  readonly transmissionViolated?: readonly SpeciesMargin[];
  /** The species closest to its floor when within 1 percentage point of it: the constraint then limits the tune. */
  readonly transmissionBinding?: SpeciesMargin | null;
  /** Per-species figures at the recommended setting. */
  readonly species?: readonly ScanSpeciesPoint[];
  /** The preset's own values of the tuned parameters, the objective's figure and the per-species figures there. */
  readonly presetValues?: readonly number[];
  readonly presetObjective?: number | null;
  readonly presetSpecies?: readonly ScanSpeciesPoint[];
  /** Per-species figures at the start. */
  readonly startSpecies?: readonly ScanSpeciesPoint[];
  /** 'preset' when the preset's own settings scored at least as well as anything found and were kept. */
  readonly recommendation?: 'tuned' | 'preset';
  /** The search's best values and figure (the same as best and objective unless the preset was kept). */
  readonly searchBest?: readonly number[];
  readonly searchObjective?: number | null;
  /** True when `allowWorse` was asked and the result scores worse than the preset's own settings. */
  readonly worseThanPreset?: boolean;
  /** Which R the objective read. */
  readonly criterion?: ResolvingPowerCriterion;
}

export interface Progress {
  readonly done: number;
  readonly total: number;
  readonly message?: string;
}

export interface EngineApi {
  run(request: RunRequest): Promise<RunOutput>;
  scan(request: ScanRequest, onProgress?: (p: Progress) => void): Promise<ScanResult>;
  optimise(request: TuneRequest, onProgress?: (p: Progress) => void): Promise<TuneResult>;
}
