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
import { shouldSplit, splitRun, type SplitRunLane } from './splitRun';

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
    // Split over the pool where that keeps the numbers (no solved field) and is worth it.
    if (shouldSplit(request, this.client.size)) return this.client.onLanes<SplitRunLane, RunOutput>((lanes, guard) => splitRun(lanes as unknown as SplitRunLane[], request, guard));
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

/**
 * The interactive runs' pool: one worker per core (a run is split over them, src/ui/engine/splitRun.ts).
 * `workers` overrides the size (the browser tests compare a pooled run with a one-worker run).
 */
export function createRunEngine(workers = defaultPoolSize()): EngineClient {
  return new PoolEngineClient(createEngineWorkerPool(Math.max(1, Math.floor(workers))));
}

/** A pool for scans and tunes, leaving one core to the page and the run worker where there are enough. */
export function createTuningEngine(): EngineClient {
  const cores = defaultPoolSize();
  return new PoolEngineClient(createEngineWorkerPool(Math.max(1, cores > 2 ? cores - 1 : cores)));
}

/** The run pool's size asked for by the page address (`?runWorkers=N`, 1–8), else undefined (one per core). */
export function runWorkersFromQuery(search: string): number | undefined {
  const n = Number(new URLSearchParams(search).get('runWorkers'));
  return Number.isInteger(n) && n >= 1 && n <= 8 ? n : undefined;
}
