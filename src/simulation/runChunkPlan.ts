/**
 * The plan of a run split over workers (see src/simulation/runChunks.ts): which runs may be split,
 * the chunk boundaries, joining the chunks in ion order, and the messages' types. No engine code,
 * so the page (src/ui/engine/splitRun.ts) can use it.
 */
import type { TraceResult } from '../ions/ensemble';
import type { Preset } from '../presets/schema';
import type { RunOutput, RunRequest } from './runContract';

/** Fewest ions per chunk worth a worker: below this the messages cost more than the tracing saves. */
export const MIN_CHUNK_IONS = 2_000;

/** One worker's share of a split run: ions [from, to), trace arrays of length to − from. */
export interface TraceChunk extends TraceResult {
  readonly from: number;
  readonly to: number;
  /** Time this worker took to sample and trace its chunk (ms). */
  readonly elapsed_ms: number;
}

/**
 * True when a run of `preset` may be split: no solved field (read from the preset, so the page can
 * decide without compiling; tests check it agrees with the compiled model).
 */
export function splitsOverWorkers(preset: Preset): boolean {
  return preset.mirror.type !== 'solved' && !preset.source.solved;
}

/** Boundaries of `parts` contiguous chunks of `count` ions (length parts + 1, sizes differ by at most one). */
export function chunkBounds(count: number, parts: number): number[] {
  const n = Math.max(1, Math.min(Math.floor(parts), count));
  const bounds = [0];
  for (let k = 1; k <= n; k++) bounds.push(Math.floor((k * count) / n));
  return bounds;
}

/** How many chunks a run of `ions` gets on `workers` workers. */
export function chunkCount(ions: number, workers: number): number {
  return Math.max(1, Math.min(workers, Math.floor(ions / MIN_CHUNK_IONS)));
}

/** The chunks of one run, in any order, as one trace in ion order; they must tile [0, count) exactly. */
export function concatChunks(count: number, chunks: readonly TraceChunk[]): TraceResult {
  const ordered = [...chunks].sort((a, b) => a.from - b.from);
  let next = 0;
  for (const c of ordered) {
    if (c.from !== next || c.to < c.from || c.flightTime_s.length !== c.to - c.from) throw new Error(`trace chunks do not tile the run: expected one from ${next}, got [${c.from}, ${c.to})`);
    next = c.to;
  }
  if (next !== count) throw new Error(`trace chunks cover ${next} of ${count} ions`);
  const out: TraceResult = {
    flightTime_s: new Float64Array(count),
    fate: new Uint8Array(count),
    finalSpeed_m_per_s: new Float64Array(count),
    weight: new Float64Array(count),
    detectorX_m: new Float64Array(count),
    detectorY_m: new Float64Array(count),
  };
  for (const c of ordered) {
    out.flightTime_s.set(c.flightTime_s, c.from);
    out.fate.set(c.fate, c.from);
    out.finalSpeed_m_per_s.set(c.finalSpeed_m_per_s, c.from);
    out.weight.set(c.weight, c.from);
    out.detectorX_m.set(c.detectorX_m, c.from);
    out.detectorY_m.set(c.detectorY_m, c.from);
  }
  return out;
}

/** Buffers of a chunk or a trace, for transfer between threads. */
export function traceTransferables(t: TraceResult | TraceChunk): ArrayBuffer[] {
  return [t.flightTime_s.buffer, t.fate.buffer, t.finalSpeed_m_per_s.buffer, t.weight.buffer, t.detectorX_m.buffer, t.detectorY_m.buffer] as ArrayBuffer[];
}

/** What a worker offers for split runs (workers/engine.worker.ts); results come back transferred. */
export interface SplitRunTasks {
  traceRunChunk(request: RunRequest, from: number, to: number): TraceChunk | Promise<TraceChunk>;
  /** The whole run finished on a trace computed elsewhere (runRequest with `traced`). */
  finishRun(request: RunRequest, traced: TraceResult): RunOutput | Promise<RunOutput>;
}
