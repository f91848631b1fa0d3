/**
 * The engine in a Web Worker, exposed with comlink: run / scan / optimise (EngineApi) and the pool
 * tasks that EngineWorkerClient (src/tuning/workerClient.ts) spreads over several of these workers,
 * plus the two steps of a run split over the pool (src/simulation/runChunks.ts): trace a chunk of
 * the run's ions, and finish a run on a concatenated trace; and the extras of a run (runExtras: focus,
 * focus scan, scene), which the page asks for beside the run and draws after its charts.
 * Run results (with the 3D view's scene when asked for) carry typed arrays; their buffers are transferred, not copied.
 * Keeps the last few sampled populations (src/ions/population.ts). Imports nothing that touches the DOM.
 */
import * as Comlink from 'comlink';
import { mapFitTransferables, traceTransferables, type SplitRunTasks } from '../src/simulation/runChunkPlan';
import { fitRunMap, traceRunChunk } from '../src/simulation/runChunks';
import { runExtras, runExtrasTransferables, runOutputTransferables, runRequest } from '../src/simulation/runOutput';
import type { RunExtrasRequest } from '../src/simulation/runContract';
import { createWorkerApi } from '../src/tuning/workerApi';
import { keepSampledPopulations } from '../src/ions/population';

// Successive runs of the page mostly share their ions (a potential or a delay changed), and a run
// split over the pool samples its population again to finish: reuse the last few.
keepSampledPopulations(4);

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

Comlink.expose({ ...api, ...splitTasks, ...extrasTasks });
