/**
 * Entry of a Node worker thread of the CLI's engine pool: the same worker API as the browser's
 * workers/engine.worker.ts, exposed with comlink on the thread's parent port.
 * Must not import src/cli.ts: a worker thread inherits process.argv and would start the CLI again.
 */
import { parentPort } from 'node:worker_threads';
import * as Comlink from 'comlink';
import type { Endpoint } from 'comlink';
import { runOutputTransferables, runRequest } from '../simulation/runOutput';
import { createWorkerApi } from '../tuning/workerApi';

if (!parentPort) throw new Error('src/cli/engineThread.ts runs only as a worker thread');

const api = createWorkerApi((request) => {
  const result = runRequest(request);
  return Comlink.transfer(result, runOutputTransferables(result));
});

// Node's MessagePort is an EventTarget delivering MessageEvents, which is what comlink expects.
Comlink.expose(api, parentPort as unknown as Endpoint);
