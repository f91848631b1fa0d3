/**
 * The engine in a Web Worker, exposed with comlink: run / scan / optimise (EngineApi) and the pool
 * tasks that EngineWorkerClient (src/tuning/workerClient.ts) spreads over several of these workers.
 * Run results (with the 3D view's scene when asked for) carry typed arrays; their buffers are transferred, not copied.
 * Imports nothing that touches the DOM.
 */
import * as Comlink from 'comlink';
import { runOutputTransferables, runRequest } from '../src/simulation/runOutput';
import { createWorkerApi } from '../src/tuning/workerApi';

const api = createWorkerApi((request) => {
  const result = runRequest(request);
  return Comlink.transfer(result, runOutputTransferables(result));
});

Comlink.expose(api);
