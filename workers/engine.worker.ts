/**
 * The engine in a Web Worker, exposed with comlink: run / scan / optimise (EngineApi) and the pool
 * tasks that EngineWorkerClient (src/tuning/workerClient.ts) spreads over several of these workers,
 * plus the two steps of a run split over the pool (src/simulation/runChunks.ts): trace a chunk of
 * the run's ions, and finish a run on a concatenated trace; and the extras of a run (runExtras: focus,
 * focus scan, scene), which the page asks for beside the run and draws after its charts; and the
 * species peaks of an exact run shared over two workers (speciesPeaksPart, then finishWithPeaks).
 * Run results (with the 3D view's scene when asked for) carry typed arrays; their buffers are transferred, not copied.
 * Keeps the last few sampled populations (src/ions/population.ts). Imports nothing that touches the DOM.
 */
import * as Comlink from 'comlink';
import { mapFitTransferables, traceTransferables, type SplitRunTasks } from '../src/simulation/runChunkPlan';
import { fitRunMap, traceRunChunk } from '../src/simulation/runChunks';
import { runExtras, runExtrasTransferables, runOutputTransferables, runRequest, speciesPeaksPart } from '../src/simulation/runOutput';
import type { RunExtrasRequest, RunRequest } from '../src/simulation/runContract';
import type { TraceResult } from '../src/ions/ensemble';
import { createWorkerApi } from '../src/tuning/workerApi';
import { keepSampledPopulations } from '../src/ions/population';
import { keepCompiledPresets } from '../src/presets/compileCache';

// Successive runs of the page mostly share their ions (a potential or a delay changed), and a run
// split over the pool samples its population again to finish: reuse the last few.
keepSampledPopulations(4);
// Likewise the compiled presets: every step of a split run (fit, chunk, finish, extras) compiles the same one.
keepCompiledPresets(4);

const api = createWorkerApi((request) => {
  const result = runRequest(request);
  return Comlink.transfer(result, runOutputTransferables(result));
});

const splitTasks: SplitRunTasks = {
  traceRunChunk: (request, from, to, map) => {
    const chunk = traceRunChunk(request, from, to, map);
    return Comlink.transfer(chunk, traceTransferables(chunk));
  },
  fitRunMap: (request, part, parts) => {
    const fit = fitRunMap(request, part, parts);
    return fit && Comlink.transfer(fit, mapFitTransferables(fit));
  },
  finishRun: (request, traced, mirrorMap) => {
    const result = runRequest(request, undefined, traced, mirrorMap);
    return Comlink.transfer(result, runOutputTransferables(result));
  },
};

// What the page draws beside the charts (3D view, focus notes), asked for apart from the run so it can be drawn second.
const extrasTasks = {
  runExtras: (request: RunExtrasRequest) => {
    const extras = runExtras(request);
    return Comlink.transfer(extras, runExtrasTransferables(extras));
  },
};

// A run whose species peaks the page shares over two workers: part 0's trace is kept for the
// finish, which then need not trace again (same preset, ions and seed; anything else traces anew).
let partTrace: { readonly key: string; readonly trace: TraceResult } | null = null;
const traceKey = (r: RunRequest): string => JSON.stringify([r.preset, r.ions ?? null, r.seed ?? null]);
const peakTasks = {
  speciesPeaksPart: (request: RunRequest, part: number, parts: number) => {
    const { peaks, trace } = speciesPeaksPart(request, part, parts);
    partTrace = part === 0 ? { key: traceKey(request), trace } : null;
    return peaks;
  },
  finishWithPeaks: (request: RunRequest) => {
    const kept = partTrace !== null && partTrace.key === traceKey(request) ? partTrace.trace : undefined;
    partTrace = null;
    const result = runRequest(request, undefined, kept);
    return Comlink.transfer(result, runOutputTransferables(result));
  },
};

Comlink.expose({ ...api, ...splitTasks, ...extrasTasks, ...peakTasks });
