/**
 * The CLI's engine pool: Node worker threads running src/cli/engineThread.ts, driven by the same
 * EngineWorkerClient as the browser's Web Workers. Under tsx the thread must load TypeScript too:
 * Node 20 does not apply `--import tsx` to a worker's entry module, so the thread starts from a
 * small bootstrap that registers tsx's loader and then imports the entry.
 */
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { EngineWorkerClient, type WorkerEventLike, type WorkerLike } from '../tuning/workerClient';

/** Adapt a worker_threads Worker (an EventEmitter) to the EventTarget shape comlink and the client use. */
export function nodeWorkerLike(worker: Worker): WorkerLike {
  const wrapped = new Map<(event: WorkerEventLike) => void, (value: unknown) => void>();
  return {
    postMessage: (message, transfer) => worker.postMessage(message, transfer as never),
    addEventListener: (type, listener) => {
      const handler = type === 'message' ? (data: unknown) => listener({ data }) : (error: unknown) => listener({ message: (error as Error)?.message ?? String(error) });
      wrapped.set(listener, handler);
      worker.on(type, handler);
    },
    removeEventListener: (type, listener) => {
      const handler = wrapped.get(listener);
      if (handler) worker.off(type, handler);
      wrapped.delete(listener);
    },
    terminate: () => worker.terminate(),
  };
}

const ENTRY = new URL('./engineThread' + (import.meta.url.endsWith('.ts') ? '.ts' : '.js'), import.meta.url);

export function spawnEngineThread(): Worker {
  if (!ENTRY.pathname.endsWith('.ts')) return new Worker(ENTRY);
  // The ES-module build of tsx's API (its exports map sends `require` to a CommonJS build that cannot register ESM hooks here).
  const tsxRoot = dirname(createRequire(import.meta.url).resolve('tsx/package.json'));
  const tsxApi = pathToFileURL(join(tsxRoot, 'dist/esm/api/index.mjs')).href;
  const bootstrap = `import(${JSON.stringify(tsxApi)}).then((m) => { (m.register ?? m.default.register)(); return import(${JSON.stringify(ENTRY.href)}); });`;
  return new Worker(bootstrap, { eval: true });
}

export function defaultThreadCount(): number {
  return Math.max(1, availableParallelism());
}

/** A pool of `size` engine threads (default: one per core). Call `dispose()` when done, or the process stays alive. */
export function createThreadPoolClient(size = defaultThreadCount()): EngineWorkerClient {
  return new EngineWorkerClient({ size, createWorker: () => nodeWorkerLike(spawnEngineThread()) });
}
