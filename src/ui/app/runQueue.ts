/**
 * Runs of the working setup: at most one in flight; a newer request replaces a queued one. While a
 * control is dragged the setup runs with few ions and no simulated digitizer ('live'); when the
 * change is finished it runs in full ('final'). A run still in flight when a newer change is
 * finished is stale: its result is dropped, not drawn (live previews during a drag are still drawn,
 * or a long drag would show nothing). A run comes in two parts (EngineClient.runParts): the charts'
 * part, drawn at once, and the 3D view's and focus notes' part, drawn after it unless a newer change
 * has finished by then. The status becomes 'done' once both parts of the last run are drawn.
 * While a headline is due the queue holds the page's deferrable work (`PageWork`: autosave, other
 * views) and releases it once the headline is drawn, dropped or failed; before 'done' it flushes it.
 */
import type { Preset } from '../../presets/schema';
import type { RunExtras, RunOutput } from '../../simulation/runContract';
import { isCancelled, type EngineClient } from '../engine/engineClient';
import type { EditPhase } from '../panel/parameterPanel';
import { currentStatus, setStatus } from './status';

export interface RunJob {
  /** Runs requested before the parameters last became invalid are not drawn. */
  readonly generation: number;
  readonly preset: Preset;
  readonly ions: number;
  readonly kind: EditPhase;
  /** When the change that caused this run was made (performance.now()). */
  readonly requestedAt: number;
  /** Order of the requests (a later request has a larger number). */
  readonly sequence: number;
}

/** While dragging: no simulated digitizer (its spectrum per species costs most of a run). */
export function previewOf(preset: Preset): Preset {
  const { acquisition: _skipped, ...rest } = preset;
  return rest;
}

/** The page's deferrable work as the queue drives it (src/ui/app/deferredWork.ts). */
export interface PageWork {
  hold(): void;
  release(): void;
  flush(): void;
}

const NO_PAGE_WORK: PageWork = { hold: () => undefined, release: () => undefined, flush: () => undefined };

export class RunQueue {
  private inFlight: RunJob | null = null;
  private queued: RunJob | null = null;
  private generation = 0;
  private sequence = 0;
  /** Sequence number of the latest finished change's run: older results are stale. */
  private latestFinal = -1;
  private dropped = 0;
  /** Second parts dropped: their charts were drawn, then a newer change finished before the 3D view's part came. */
  private extrasDropped = 0;

  constructor(
    private readonly engine: EngineClient,
    private readonly render: (job: RunJob, output: RunOutput) => void,
    private readonly renderExtras: (job: RunJob, extras: RunExtras) => void,
    private readonly onFailure: (message: string) => void,
    private readonly pageWork: PageWork = NO_PAGE_WORK,
  ) {}

  /** Queue a run of `working`; `liveIons` caps the ions of a live run. */
  request(working: Preset, kind: EditPhase, liveIons: number): void {
    const ions = kind === 'live' ? Math.min(liveIons, working.run.ions) : working.run.ions;
    const preset = kind === 'live' ? previewOf(working) : working;
    const job: RunJob = { generation: this.generation, preset, ions, kind, requestedAt: performance.now(), sequence: this.sequence++ };
    if (kind === 'final') this.latestFinal = job.sequence;
    setStatus('running');
    this.pageWork.hold();
    if (this.inFlight) {
      this.queued = job;
      return;
    }
    void this.start(job);
  }

  /** The parameters became invalid: drop the queued run and do not draw the one in flight. */
  invalidate(): void {
    this.queued = null;
    this.generation++;
  }

  /** A result of `job` may be drawn: the parameters are still valid and no later change has finished. */
  private current(job: RunJob): boolean {
    return job.generation === this.generation && job.sequence >= this.latestFinal;
  }

  private async start(job: RunJob): Promise<void> {
    this.inFlight = job;
    try {
      // The charts' part first; the 3D view's scene, the focus section and the focus scan (full runs)
      // come apart, from another worker where there is one, and are drawn when they arrive.
      const parts = this.engine.runParts({ preset: job.preset, ions: job.ions, seed: job.preset.run.seed, scene: {}, focusScan: job.kind === 'final' });
      parts.extras.catch(() => undefined); // awaited below only when the headline is drawn
      const output = await parts.headline;
      if (this.current(job)) {
        try {
          this.render(job, output);
        } finally {
          this.headlineSettled();
        }
        const extras = await parts.extras;
        // A change finished since the charts were drawn: its run draws the 3D view; this one would be stale.
        if (this.current(job)) this.renderExtras(job, extras);
        else document.body.dataset.extrasDropped = String(++this.extrasDropped);
      } else {
        document.body.dataset.runsDropped = String(++this.dropped); // read by the browser tests
        this.headlineSettled();
      }
    } catch (err) {
      this.headlineSettled();
      if (!isCancelled(err)) {
        setStatus('error');
        this.onFailure(`Run failed: ${(err as Error).message}`);
        this.inFlight = null;
        this.pageWork.release(); // nothing more runs after a failure: the held work need not wait
        return;
      }
    }
    this.inFlight = null;
    const next = this.queued;
    this.queued = null;
    if (next) void this.start(next);
    else if (currentStatus() === 'running') {
      // Everything this change asked of the page is done before it says so.
      this.pageWork.flush();
      setStatus('done');
    }
  }

  /** This job's headline is drawn, dropped or failed: the page's held work may run unless a newer run waits. */
  private headlineSettled(): void {
    if (this.queued === null) this.pageWork.release();
  }
}
