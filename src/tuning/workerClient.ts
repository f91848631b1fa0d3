/**
 * Client of a pool of engine workers (browser Web Workers running workers/engine.worker.ts, or Node
 * worker threads through an adapter): `run` goes to one worker, `scan` and `optimise` are spread over
 * all of them by the same scheduler the CLI uses, so the app and the CLI give identical numbers.
 *
 * Cancellation really stops the work: every worker is terminated and a fresh one spawned, every
 * pending call is rejected with CancelledError (a terminated worker never answers, so its promises
 * would otherwise hang), and a run counter drops any result that belongs to an earlier generation.
 * DOM-free apart from the worker object it is given.
 */
import * as Comlink from 'comlink';
import type { Endpoint } from 'comlink';
import type { RunOutput, RunRequest } from '../simulation/runContract';
import type { Progress, ScanRequest, ScanResult, TuneRequest, TuneResult } from './api';
import { CancelledError } from './errors';
import type { TaskLane, TaskPool } from './pool';
import { scanWith } from './scan';
import { optimiseWith } from './tune';
import { toleranceWith, type ToleranceRequest, type ToleranceResult } from '../tolerance/analysis';
import type { EngineWorkerApi } from './workerApi';

/** What the client reads from a worker's events: `data` of a message, `message` of an error. */
export interface WorkerEventLike {
  readonly data?: unknown;
  readonly message?: string;
}

/** The parts of a Worker the client uses (a browser `Worker` fits; so does a Node adapter). */
export interface WorkerLike {
  postMessage(message: unknown, transfer?: unknown[]): void;
  addEventListener(type: 'message' | 'error', listener: (event: WorkerEventLike) => void): void;
  removeEventListener(type: 'message' | 'error', listener: (event: WorkerEventLike) => void): void;
  terminate(): void | Promise<unknown>;
}

export interface EngineWorkerClientOptions {
  /** Make one worker, e.g. `() => new Worker(new URL('./engine.worker.ts', import.meta.url), { type: 'module' })`. */
  readonly createWorker: () => WorkerLike;
  /** Number of workers (default 1). Results do not depend on it. */
  readonly size?: number;
}

interface Slot {
  readonly worker: WorkerLike;
  readonly remote: Comlink.Remote<EngineWorkerApi>;
}

export class EngineWorkerClient {
  /** Progress of the current scan or tune; reports of cancelled work are not passed on. */
  onProgress: ((progress: Progress) => void) | null = null;

  private slots: Slot[] = [];
  private generation = 0;
  private readonly pending = new Set<(error: Error) => void>();
  private disposed = false;

  constructor(private readonly options: EngineWorkerClientOptions) {
    this.spawn();
  }

  get size(): number {
    return this.slots.length;
  }

  /** Increases with every cancel; results of an earlier generation are dropped. */
  get runCounter(): number {
    return this.generation;
  }

  run(request: RunRequest): Promise<RunOutput> {
    return this.guard(() => this.slots[0].remote.run(request) as Promise<RunOutput>);
  }

  /**
   * `work` on every worker's endpoint, wrapped as T, with calls guarded as run's are (rejected on
   * cancel, results of an earlier generation dropped): for a run split over the pool (src/ui/engine/splitRun.ts).
   */
  onLanes<T, R>(work: (lanes: readonly Comlink.Remote<T>[], guard: <V>(call: () => Promise<V>) => Promise<V>) => Promise<R>): Promise<R> {
    const generation = this.generation;
    const lanes = this.slots.map((slot) => slot.remote as unknown as Comlink.Remote<T>);
    return this.guardResult(
      work(lanes, (call) => this.guard(call, generation)),
      generation,
    );
  }

  scan(request: ScanRequest): Promise<ScanResult> {
    const generation = this.generation;
    return this.guardResult(scanWith(this.pool(), request, (p) => this.progress(generation, p)), generation);
  }

  optimise(request: TuneRequest): Promise<TuneResult> {
    const generation = this.generation;
    return this.guardResult(optimiseWith(this.pool(), request, (p) => this.progress(generation, p)), generation);
  }

  /** A tolerance analysis (src/tolerance/analysis.ts) spread over every worker. */
  tolerance(request: ToleranceRequest): Promise<ToleranceResult> {
    const generation = this.generation;
    return this.guardResult(toleranceWith(this.pool(), request, (p) => this.progress(generation, p)), generation);
  }

  /** Stop everything in flight: terminate and respawn the workers, reject every pending call. */
  cancel(): void {
    this.generation++;
    this.rejectPending();
    this.terminateAll();
    if (!this.disposed) this.spawn();
  }

  /** Terminate the workers for good (pending calls are rejected). */
  dispose(): void {
    this.disposed = true;
    this.generation++;
    this.rejectPending();
    this.terminateAll();
  }

  private spawn(): void {
    const size = Math.max(1, Math.floor(this.options.size ?? 1));
    const generation = this.generation;
    this.slots = Array.from({ length: size }, () => {
      const worker = this.options.createWorker();
      // A worker that dies (failed to load, out of memory) never answers: fail its calls, start afresh.
      worker.addEventListener('error', (event) => {
        if (generation !== this.generation) return;
        this.generation++;
        this.rejectPending(new Error(`engine worker failed: ${event.message ?? 'unknown error'}`));
        this.terminateAll();
        if (!this.disposed) this.spawn();
      });
      return { worker, remote: Comlink.wrap<EngineWorkerApi>(worker as unknown as Endpoint) };
    });
  }

  private terminateAll(): void {
    for (const slot of this.slots) void slot.worker.terminate();
    this.slots = [];
  }

  private rejectPending(error: Error = new CancelledError()): void {
    const rejecters = [...this.pending];
    this.pending.clear();
    for (const reject of rejecters) reject(error);
  }

  private progress(generation: number, p: Progress): void {
    if (generation === this.generation) this.onProgress?.(p);
  }

  /**
   * A call to a worker: rejected on cancel, and its result dropped if it belongs to an earlier
   * generation. Calls made for an earlier generation (a scan still scheduling after a cancel) are
   * refused at once: their worker has been terminated and would never answer.
   */
  private guard<T>(call: () => Promise<T>, generation = this.generation): Promise<T> {
    if (this.disposed) return Promise.reject(new CancelledError('the engine client has been disposed'));
    if (generation !== this.generation) return Promise.reject(new CancelledError());
    return new Promise<T>((resolve, reject) => {
      const rejecter = (error: Error): void => reject(error);
      this.pending.add(rejecter);
      call().then(
        (value) => {
          this.pending.delete(rejecter);
          if (generation === this.generation) resolve(value);
          else reject(new CancelledError('stale result dropped'));
        },
        (error: unknown) => {
          this.pending.delete(rejecter);
          reject(generation === this.generation ? error : new CancelledError());
        },
      );
    });
  }

  private guardResult<T>(work: Promise<T>, generation: number): Promise<T> {
    return work.then(
      (value) => {
        if (generation !== this.generation) throw new CancelledError('stale result dropped');
        return value;
      },
      (error: unknown) => {
        throw generation === this.generation ? error : new CancelledError();
      },
    );
  }

  /** The current workers as pool lanes (calls bound to this generation). */
  private pool(): TaskPool {
    const generation = this.generation;
    const lanes: TaskLane[] = this.slots.map(({ remote }) => ({
      evaluatePoints: (task) => this.guard(() => remote.evaluatePoints(task), generation),
      search: (task) => this.guard(() => remote.search(task), generation),
      flatnessEdge: (task) => this.guard(() => remote.flatnessEdge(task), generation),
      evaluateTolerance: (task) => this.guard(() => remote.evaluateTolerance(task), generation),
    }));
    return { lanes };
  }
}
