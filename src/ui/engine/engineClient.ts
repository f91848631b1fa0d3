/**
 * What the app needs from the engine service: the EngineApi calls with a progress callback, plus
 * a cancel that works at once. Backed by the worker pool client (src/tuning/workerClient.ts,
 * workers/pool.ts), which terminates and respawns its workers on cancel and rejects what was pending.
 */
import type { RunExtras, RunExtrasRequest, RunOutput, RunRequest } from '../../simulation/runContract';
import type { SpectrumPeakReport } from '../../simulation/analysisReport';
import type { Progress, ScanRequest, ScanResult, TuneRequest, TuneResult } from '../../tuning/api';
import { CancelledError } from '../../tuning/errors';
import type { EngineWorkerClient } from '../../tuning/workerClient';
import type { ToleranceRequest, ToleranceResult } from '../../tolerance/analysis';
import { createEngineWorkerPool, defaultPoolSize } from '../../../workers/pool';
import { shouldSplit, splitRun, type SplitRunLane } from './splitRun';

/** A run asked for in two parts: the headline (report without focus, per-ion arrays) and the extras (focus, focus scan, scene). */
export interface RunParts {
  readonly headline: Promise<RunOutput>;
  readonly extras: Promise<RunExtras>;
}

export interface EngineClient {
  run(request: RunRequest): Promise<RunOutput>;
  /**
   * The run of `request` with its focus section, focus scan and scene computed apart (on another
   * worker where there is one), so the charts can be drawn before them. Both parts together hold
   * what `run(request)` returns, with the same numbers.
   */
  runParts(request: RunRequest): RunParts;
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

/** A worker as runParts calls it to share an exact run's species peaks (workers/engine.worker.ts). */
interface PeaksLane {
  speciesPeaksPart(request: RunRequest, part: number, parts: number): Promise<(SpectrumPeakReport | null)[]>;
  finishWithPeaks(request: RunRequest): Promise<RunOutput>;
}

/**
 * True when a run's species peaks may be shared over workers: spectra to measure, and a trace that
 * depends on nothing but the preset, the ion count and the seed (no ion load, no decay in flight,
 * no solved region, whose transfer maps report per run).
 */
export function sharesPeaks(request: RunRequest): boolean {
  const p = request.preset;
  return request.analysis !== false && p.acquisition !== undefined && p.ionLoad === undefined && !p.source.solved && p.mirror.type !== 'solved' && !p.ions.species.some((s) => s.decay);
}

/** A worker as runParts calls it for the extras (workers/engine.worker.ts). */
interface ExtrasLane {
  runExtras(request: RunExtrasRequest): Promise<RunExtras>;
}

/** `lane` with `onChunk` called when a chunk is posted to it. */
function afterChunk(lane: SplitRunLane, onChunk: () => void): SplitRunLane {
  return {
    traceRunChunk: (...args) => {
      const chunk = lane.traceRunChunk(...args);
      onChunk();
      return chunk;
    },
    fitRunMap: (...args) => lane.fitRunMap(...args),
    finishRun: (...args) => lane.finishRun(...args),
  };
}

class PoolEngineClient implements EngineClient {
  constructor(
    private readonly client: EngineWorkerClient,
    /** Share an exact run's species peaks over two workers where it may (`?sharePeaks=0` turns it off, to compare). */
    private readonly sharePeaks = true,
  ) {}

  run(request: RunRequest): Promise<RunOutput> {
    // Split over the pool where that keeps the numbers (no solved field) and is worth it.
    if (shouldSplit(request, this.client.size)) return this.client.onLanes<SplitRunLane, RunOutput>((lanes, guard) => splitRun(lanes as unknown as SplitRunLane[], request, guard));
    return this.client.run(request);
  }

  runParts(request: RunRequest): RunParts {
    const { scene, focusScan, focus, ...rest } = request;
    const headlineRequest: RunRequest = { ...rest, focus: false };
    const extrasRequest: RunExtrasRequest = { preset: request.preset, ions: request.ions, seed: request.seed, focus: request.analysis !== false && focus !== false, focusScan, scene };
    // The extras follow the headline's messages. An unsplit run's go to its own worker, to run while
    // the page draws the charts: on another worker they would take a core from the headline when the
    // machine is busy (measured, 2 cores). A split run finishes on the first worker; its extras go to
    // the last, behind that one's chunk, and run while the first finishes.
    let posted!: () => void;
    let lane = 0;
    let failed!: (error: unknown) => void;
    const headlinePosted = new Promise<void>((resolve, reject) => ((posted = resolve), (failed = reject)));
    let headline: Promise<RunOutput>;
    if (this.sharePeaks && !shouldSplit(headlineRequest, this.client.size) && this.client.size > 1 && sharesPeaks(headlineRequest)) {
      // Unsplit, and the simulated digitizer's spectra are most of the run: both workers trace and
      // measure a share of the species' peaks each (by estimated cost, src/simulation/peaksShare.ts);
      // the first, which has the smaller share, finishes the run with all of them. The
      // extras go to the second, which is free while the first finishes.
      lane = 1;
      const start = performance.now();
      headline = this.client.onLanes<PeaksLane, RunOutput>(async (lanes, guard) => {
        const halves = Promise.all([0, 1].map((part) => guard(() => lanes[part].speciesPeaksPart(headlineRequest, part, 2))));
        posted();
        const [first, second] = await halves;
        const givenPeaks = first.map((p, s) => p ?? second[s] ?? null);
        const output = await guard(() => lanes[0].finishWithPeaks({ ...headlineRequest, givenPeaks }));
        return { ...output, elapsed_ms: performance.now() - start };
      });
    } else if (shouldSplit(headlineRequest, this.client.size)) {
      lane = this.client.size - 1;
      headline = this.client.onLanes<SplitRunLane, RunOutput>((lanes, guard) =>
        // Every chunk is posted in one synchronous pass: the extras follow them, not the map fits before them.
        splitRun(lanes.map((lane) => afterChunk(lane as unknown as SplitRunLane, () => queueMicrotask(posted))), headlineRequest, guard),
      );
    } else {
      headline = this.client.run(headlineRequest);
      posted();
    }
    // A headline that fails before its chunks were posted (a map fit) takes its extras with it.
    headline.catch(failed);
    const extras = headlinePosted.then(() => this.client.onLanes<ExtrasLane, RunExtras>((lanes, guard) => guard(() => lanes[Math.min(lane, lanes.length - 1)].runExtras(extrasRequest))));
    return { headline, extras };
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
export function createRunEngine(workers = defaultPoolSize(), sharePeaks = true): EngineClient {
  return new PoolEngineClient(createEngineWorkerPool(Math.max(1, Math.floor(workers))), sharePeaks);
}

/** False when the page address asks not to share exact runs' species peaks over workers (`?sharePeaks=0`). */
export function sharePeaksFromQuery(search: string): boolean {
  return new URLSearchParams(search).get('sharePeaks') !== '0';
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
