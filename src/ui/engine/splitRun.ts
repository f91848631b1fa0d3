/**
 * A run split over a pool of workers (the steps are in src/simulation/runChunks.ts, the plan in runChunkPlan.ts): each worker
 * traces one contiguous chunk of the run's ions, the chunks are joined in ion order here (a few
 * hundred kB at interactive sizes: cheaper than another round trip), and the first worker finishes
 * the run on the joined trace. The trace buffers are transferred both ways, never cloned.
 * DOM-free, so Node tests drive it over MessageChannel ports.
 */
import * as Comlink from 'comlink';
import {
  balancedBounds,
  chunkBounds,
  chunkCount,
  concatChunks,
  hasSolvedMirror,
  mapShare,
  mergeMapFits,
  mergeMirrorMapReports,
  overlayFitted,
  splitsOverWorkers,
  traceTransferables,
  type RunMapFit,
  type RunMapShare,
  type TraceChunk,
} from '../../simulation/runChunkPlan';
import type { MirrorMapReport } from '../../physics/solvedMirrorMap';
import type { RunOutput, RunRequest } from '../../simulation/runContract';
import type { TraceResult } from '../../ions/ensemble';
import type { Preset } from '../../presets/schema';

/** One worker as the split run calls it. */
export interface SplitRunLane {
  traceRunChunk(request: RunRequest, from: number, to: number, map?: RunMapShare): Promise<TraceChunk>;
  fitRunMap(request: RunRequest, part?: number, parts?: number): Promise<RunMapFit | null>;
  finishRun(request: RunRequest, traced: TraceResult, mirrorMap?: MirrorMapReport): Promise<RunOutput>;
}

/** The ions of a run: the request's override or the preset's count. */
export function runIons(request: RunRequest): number {
  return request.ions ?? request.preset.run.ions;
}

/**
 * True when tracing is most of the run: a rising pulse edge (closed form, but ion by ion), the
 * integrator asked for (such runs are then refused by splitsOverWorkers: the integrator carries its
 * first step from ion to ion), or a solved mirror is crossed (tracing ~0.5 s of 2·10^4 ions even
 * with the transfer map). Closed-form runs trace 2·10^4 ions in about 3 ms of a 40 ms run (Node
 * profile; the simulated digitizer's spectrum is most of the rest, and it is built once, after the
 * join), so splitting them would only add a second sampling and a round trip.
 */
export function tracingDominates(preset: Preset): boolean {
  const extraction = preset.source.extraction;
  const rising = extraction.mode === 'delayed' && extraction.rise !== undefined && extraction.rise.shape !== 'step';
  return rising || preset.run.engine === 'integrator' || hasSolvedMirror(preset);
}

/** True when the run is worth splitting over `workers` workers (and may be split at all). */
export function shouldSplit(request: RunRequest, workers: number): boolean {
  return workers > 1 && splitsOverWorkers(request.preset) && tracingDominates(request.preset) && chunkCount(runIons(request), workers) > 1;
}

/**
 * The run over `lanes` (calls passed through `guard`, which drops stale results); elapsed_ms
 * becomes the whole split run's wall time, chunks and finishing included. Through a solved mirror
 * the lanes first fit the transfer map (each its share of the species, on their first ions in
 * order), and every lane's chunk crosses by those maps (src/simulation/runChunks.ts). A lane whose
 * fit is done while another still fits traces its own species' later ions meanwhile, by its own
 * snapshot, in REST_GRANULES pieces (each ion's crossing depends on that ion alone once its map is
 * decided, so where an ion is traced changes no number); the chunks then share what is left. Why:
 * far below the tuned back plate one species' fit took 132–218 ms against the other's 53–69 ms
 * (Node, the gridless demo at 5620 V), and the first lane waited.
 */
export async function splitRun(lanes: readonly SplitRunLane[], request: RunRequest, guard: <V>(call: () => Promise<V>) => Promise<V> = (c) => c(), now: () => number = () => performance.now()): Promise<RunOutput> {
  const start = now();
  const ions = runIons(request);
  // Each lane fits the maps of its share of the species (they are independent), then all trace their chunks by all of them.
  const early: TraceChunk[] = [];
  const fits = hasSolvedMirror(request.preset) ? await fitWhileTracing(lanes, request, guard, early) : [];
  const merged = fits.length > 0 && fits.every((f) => f !== null) ? mergeMapFits(fits as RunMapFit[]) : null;
  // The ions traced early count as fitted: the chunks skip them and the join writes them in.
  const fit = merged && { ...merged, fitted: [...merged.fitted, ...early].sort((a, b) => a.from - b.from) };
  const share = fit ? mapShare(fit) : undefined;
  // Chunks of equal expected tracing work under the map (the fitted ions are skipped, mapped ones cost little), else of equal size.
  const parts = chunkCount(ions, lanes.length);
  const bounds = fit ? balancedBounds(ions, parts, fit) : chunkBounds(ions, parts);
  const chunks = await Promise.all(bounds.slice(1).map((to, k) => guard(() => lanes[k].traceRunChunk(request, bounds[k], to, share))));
  const trace = concatChunks(ions, chunks);
  if (fit) overlayFitted(trace, fit.fitted);
  const mirrorMap = fit ? mergeMirrorMapReports(fit.report, [...early, ...chunks].map((c) => c.mirrorMap ?? noChunkReport)) : undefined;
  const output = await guard(() => lanes[0].finishRun(request, Comlink.transfer(trace, traceTransferables(trace)), mirrorMap));
  return { ...output, elapsed_ms: now() - start };
}

/** Pieces into which a lane cuts its species' later ions while it waits for the other fits. */
const REST_GRANULES = 6;

/**
 * Every lane fits its share of the species' maps; a lane done while others still fit traces its
 * own species' later ions (RunMapFit.rest) granule by granule into `early` until the last fit is in.
 */
async function fitWhileTracing(lanes: readonly SplitRunLane[], request: RunRequest, guard: <V>(call: () => Promise<V>) => Promise<V>, early: TraceChunk[]): Promise<Array<RunMapFit | null>> {
  let pending = lanes.length;
  return Promise.all(
    lanes.map(async (lane, k) => {
      const fit = await guard(() => lane.fitRunMap(request, k, lanes.length));
      pending--;
      if (fit === null) return fit;
      const share = mapShare(fit);
      for (let r = 0; r + 1 < fit.rest.length && pending > 0; r += 2) {
        const end = fit.rest[r + 1];
        const step = Math.max(1, Math.ceil((end - fit.rest[r]) / REST_GRANULES));
        for (let at = fit.rest[r]; at < end && pending > 0; at += step) {
          const from = at;
          early.push(await guard(() => lane.traceRunChunk(request, from, Math.min(end, from + step), share)));
        }
      }
      return fit;
    }),
  );
}

/** A chunk that had none of its own ions to cross the mirror by the map (all fitted elsewhere). */
const noChunkReport: MirrorMapReport = { mapped: 0, traced: 0, struckByMap: 0, struckBackByMap: 0, note: '', species: [] };
