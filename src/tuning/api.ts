/**
 * The engine's service contract, as the comlink worker (workers/engine.worker.ts) exposes it and as
 * the CLI calls it in-process. Presets cross this boundary as validated `Preset` objects (plain
 * JSON data); results carry typed arrays that the worker transfers rather than copies.
 */
import type { Preset } from '../presets/schema';
import type { RunReport } from '../simulation/report';

export interface RunRequest {
  readonly preset: Preset;
  /** Override of the preset's ion count (e.g. a light rerun while a slider is dragged). */
  readonly ions?: number;
  readonly seed?: number;
  /** Number of ions per species whose start conditions and fates are returned for drawing. */
  readonly sampleTrajectories?: number;
}

export interface RunOutput {
  readonly report: RunReport;
  /** Per-ion flight times (s) and fate codes, same order as the ensemble (species blocks). */
  readonly flightTime_s: Float64Array;
  readonly fate: Uint8Array;
  /** Species block boundaries, length species + 1. */
  readonly speciesStart: Int32Array;
  /** Wall-clock time the run took inside the engine (ms), for the app's status line. */
  readonly elapsed_ms: number;
}

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
  /** Deterministic share of the points: shard i of n (0-based i). */
  readonly shard?: { readonly index: number; readonly count: number };
}

export interface ScanSpeciesPoint {
  readonly mz: number;
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  readonly transmission: number;
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
}

export interface TuneParameter {
  readonly path: string;
  readonly min: number;
  readonly max: number;
}

export interface TuneRequest {
  readonly preset: Preset;
  readonly parameters: readonly TuneParameter[];
  readonly objective: Objective;
  /** Optional constraint: minimum transmission (0..1) of the objective's species. */
  readonly minTransmission?: number;
  readonly ions?: number;
}

export interface TuneResult {
  readonly start: readonly number[];
  readonly best: readonly number[];
  readonly objective: number | null;
  /** For each parameter, the interval over which the objective stays within 10 % of the best. */
  readonly flatness: readonly { readonly path: string; readonly low: number; readonly high: number }[];
  readonly evaluations: number;
  /** The preset with the tuned values applied (validated). */
  readonly tunedPreset: Preset;
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
