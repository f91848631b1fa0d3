/**
 * One run split over several workers with the numbers of one worker. Every worker samples the whole
 * population with the run's seed (sampling is cheap next to tracing, and a species' ions come from
 * its own stream, so every worker sees the same ions), traces one contiguous chunk of them in ion
 * order, and the chunks are concatenated in ion order; one worker then finishes the run on the
 * concatenated trace (detector plane, ion load, fragments, report, analysis: runRequest with
 * `traced`). Each ion's trace depends on that ion only, so the result is bit-identical to an
 * unsplit run (tests/simulation/runChunks.test.ts and the browser test check it).
 *
 * Runs through a solved field are not split: the mirror's transfer map learns from the run's first
 * ions in order (src/physics/solvedMirrorMap.ts), so chunks would each fit a map of their own and
 * give other numbers. Those runs go to one worker.
 */
import { allocateTraceResult, type TraceResult } from '../ions/ensemble';
import { samplePopulation } from '../ions/population';
import { needsIntegrator } from '../physics/analyser';
import { traceEnsemble } from '../physics/regions/driver';
import { legacyTally } from '../physics/regions/legacyTally';
import { compilePreset } from '../presets/compile';
import type { Preset } from '../presets/schema';
import type { RunOutput, RunRequest } from './runContract';

/** Fewest ions per chunk worth a worker: below this the messages cost more than the tracing saves. */
export const MIN_CHUNK_IONS = 2_000;

/** One worker's share of a split run: ions [from, to), trace arrays of length to − from. */
export interface TraceChunk {
  readonly from: number;
  readonly to: number;
  readonly flightTime_s: Float64Array;
  readonly fate: Uint8Array;
  readonly finalSpeed_m_per_s: Float64Array;
  readonly weight: Float64Array;
  readonly detectorX_m: Float64Array;
  readonly detectorY_m: Float64Array;
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

/** Sample the run's whole population and trace ions [from, to), as simulate() traces them. */
export function traceRunChunk(request: RunRequest, from: number, to: number, now: () => number = () => performance.now()): TraceChunk {
  const start = now();
  if (!splitsOverWorkers(request.preset)) throw new Error('a run through a solved field is not split over workers');
  const compiled = compilePreset(request.preset);
  const population = {
    ...compiled.population,
    totalIons: request.ions ?? compiled.population.totalIons,
    seed: request.seed ?? compiled.population.seed,
  };
  const ensemble = samplePopulation(population);
  if (!(from >= 0 && from <= to && to <= ensemble.count)) throw new Error(`chunk [${from}, ${to}) is outside the run's ${ensemble.count} ions`);
  const trace = allocateTraceResult(ensemble.count);
  // The same choices as traceMixed and traceExact (src/physics/tracer.ts, exactEngine.ts), for a range.
  if (needsIntegrator(compiled.model)) traceEnsemble(compiled.model, ensemble, trace, { engine: 'mixed', counters: legacyTally, from, to });
  else traceEnsemble(compiled.model, ensemble, trace, { counters: legacyTally, transferMap: false, from, to });
  return {
    from,
    to,
    flightTime_s: trace.flightTime_s.slice(from, to),
    fate: trace.fate.slice(from, to),
    finalSpeed_m_per_s: trace.finalSpeed_m_per_s.slice(from, to),
    weight: trace.weight.slice(from, to),
    detectorX_m: trace.detectorX_m.slice(from, to),
    detectorY_m: trace.detectorY_m.slice(from, to),
    elapsed_ms: now() - start,
  };
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
  const out = allocateTraceResult(count);
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
