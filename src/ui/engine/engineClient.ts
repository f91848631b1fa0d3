/**
 * What the app needs from the engine service: the EngineApi calls with a progress callback, plus
 * a cancel that works at once. Backed by the worker pool client (src/tuning/workerClient.ts,
 * workers/pool.ts), which terminates and respawns its workers on cancel and rejects what was pending.
 */
import type { RunOutput, RunRequest } from '../../simulation/runContract';
import type { Progress, ScanRequest, ScanResult, TuneRequest, TuneResult } from '../../tuning/api';
import { CancelledError } from '../../tuning/errors';
import type { EngineWorkerClient } from '../../tuning/workerClient';
import type { ToleranceRequest, ToleranceResult } from '../../tolerance/analysis';
import { createEngineWorkerPool, defaultPoolSize } from '../../../workers/pool';

export interface EngineClient {
  run(request: RunRequest): Promise<RunOutput>;
  scan(request: ScanRequest, onProgress?: (p: Progress) => void): Promise<ScanResult>;
  optimise(request: TuneRequest, onProgress?: (p: Progress) => void): Promise<TuneResult>;
  /** The stability analysis (src/tolerance/); optional so that other engines need not offer it. */
  tolerance?(request: ToleranceRequest, onProgress?: (p: Progress) => void): Promise<ToleranceResult>;
  /** Stop everything in flight now; the pending promises reject with CancelledError. */
  cancel(): void;
  dispose(): void;
}

export function isCancelled(err: unknown): boolean {
  return err instanceof CancelledError || (err instanceof Error && err.name === 'CancelledError');
}

class PoolEngineClient implements EngineClient {
  constructor(private readonly client: EngineWorkerClient) {}

  run(request: RunRequest): Promise<RunOutput> {
    return this.client.run(request);
  }

  scan(request: ScanRequest, onProgress?: (p: Progress) => void): Promise<ScanResult> {
    this.client.onProgress = onProgress ?? null;
    return this.client.scan(request);
  }

  optimise(request: TuneRequest, onProgress?: (p: Progress) => void): Promise<TuneResult> {
    this.client.onProgress = onProgress ?? null;
    return this.client.optimise(request);
  }

  tolerance(request: ToleranceRequest, onProgress?: (p: Progress) => void): Promise<ToleranceResult> {
    this.client.onProgress = onProgress ?? null;
    return this.client.tolerance(request);
  }

  cancel(): void {
    this.client.cancel();
  }

  dispose(): void {
    this.client.dispose();
  }
}

/** One worker for the interactive runs. */
export function createRunEngine(): EngineClient {
  return new PoolEngineClient(createEngineWorkerPool(1));
}

/** A pool for scans and tunes, leaving one core to the page and the run worker where there are enough. */
export function createTuningEngine(): EngineClient {
  const cores = defaultPoolSize();
  return new PoolEngineClient(createEngineWorkerPool(Math.max(1, cores > 2 ? cores - 1 : cores)));
}
