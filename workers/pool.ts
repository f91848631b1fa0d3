/**
 * The browser's engine pool: one Web Worker per core (capped), each running engine.worker.ts.
 * The `new Worker(new URL(...), { type: 'module' })` expression is written out literally so that
 * Vite recognises it and bundles the worker.
 */
import { EngineWorkerClient } from '../src/tuning/workerClient';

/** Most workers worth starting: beyond this, scans are limited by the page, not by cores. */
const MAX_WORKERS = 8;

export function defaultPoolSize(): number {
  const cores = typeof navigator !== 'undefined' && navigator.hardwareConcurrency ? navigator.hardwareConcurrency : 2;
  return Math.max(1, Math.min(cores, MAX_WORKERS));
}

export function createEngineWorkerPool(size = defaultPoolSize()): EngineWorkerClient {
  return new EngineWorkerClient({
    size,
    createWorker: () => new Worker(new URL('./engine.worker.ts', import.meta.url), { type: 'module' }),
  });
}
