/**
 * Page work held while a run's headline is due (src/ui/app/deferredWork.ts), and the autosave that
 * goes through it (src/ui/app/autosave.ts) with the run queue holding and releasing it: the save
 * waits for the headline, yet it happens when the run is drawn, fails or is dropped, and it saves
 * the latest setup. Behaviour checks of our own scheduling (common practice, no source).
 */
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { DeferredWork, MAX_HOLD_MS, type Scheduling } from '../../src/ui/app/deferredWork';
import { AUTOSAVE_DELAY_MS, createAutosave } from '../../src/ui/app/autosave';
import { RunQueue } from '../../src/ui/app/runQueue';
import type { EngineClient, RunParts } from '../../src/ui/engine/engineClient';
import type { RunExtras, RunOutput, RunRequest } from '../../src/simulation/runContract';
import type { SessionStore, WorkingSnapshot } from '../../src/ui/storage/presetStore';
import type { Preset } from '../../src/presets/schema';
import { demoPreset } from './helpers';

/** Idle callbacks the test runs by hand; timers are vitest's fake ones. */
class ManualScheduling implements Scheduling {
  readonly idleTasks: (() => void)[] = [];
  idle(task: () => void): void {
    this.idleTasks.push(task);
  }
  after(task: () => void, ms: number): number {
    return setTimeout(task, ms) as unknown as number;
  }
  cancel(handle: number): void {
    clearTimeout(handle);
  }
  runIdle(): void {
    for (const task of this.idleTasks.splice(0)) task();
  }
}

describe('deferred page work', () => {
  beforeEach(() => vi.useFakeTimers());
  afterEach(() => vi.useRealTimers());

  it('runs at the next idle time when no headline is due', () => {
    const s = new ManualScheduling();
    const work = new DeferredWork(s);
    const ran: string[] = [];
    work.defer('a', () => ran.push('a'));
    expect(ran).toEqual([]);
    s.runIdle();
    expect(ran).toEqual(['a']);
    expect(work.pending).toBe(0);
  });

  it('waits while a headline is due and runs after its release; a later task of a key replaces the earlier', () => {
    const s = new ManualScheduling();
    const work = new DeferredWork(s);
    const ran: string[] = [];
    work.hold();
    work.defer('save', () => ran.push('save 1'));
    work.defer('views', () => ran.push('views'));
    work.defer('save', () => ran.push('save 2'));
    s.runIdle();
    expect(ran).toEqual([]);
    work.release();
    s.runIdle();
    expect(ran).toEqual(['views', 'save 2']);
  });

  it('an idle time that comes after a new hold does not run the tasks; the next release does', () => {
    const s = new ManualScheduling();
    const work = new DeferredWork(s);
    const ran: string[] = [];
    work.defer('a', () => ran.push('a'));
    work.hold();
    s.runIdle();
    expect(ran).toEqual([]);
    work.release();
    s.runIdle();
    expect(ran).toEqual(['a']);
  });

  it('runs a task held too long anyway (a headline that never comes)', () => {
    const s = new ManualScheduling();
    const work = new DeferredWork(s);
    const ran: string[] = [];
    work.hold();
    work.defer('a', () => ran.push('a'));
    vi.advanceTimersByTime(MAX_HOLD_MS - 1);
    expect(ran).toEqual([]);
    vi.advanceTimersByTime(1);
    expect(ran).toEqual(['a']);
  });

  it('flush runs every task now, and one failing task does not stop the others (it is reported)', () => {
    const errors: unknown[] = [];
    const work = new DeferredWork(new ManualScheduling(), (err) => errors.push(err));
    const ran: string[] = [];
    work.hold();
    work.defer('bad', () => {
      throw new Error('broken view');
    });
    work.defer('save', () => ran.push('save'));
    work.flush();
    expect(ran).toEqual(['save']);
    expect(errors.map((e) => (e as Error).message)).toEqual(['broken view']);
    expect(work.pending).toBe(0);
  });
});

/** An engine whose headlines the test settles or fails by hand. */
class ManualEngine {
  readonly calls: { request: RunRequest; headline: (o: RunOutput) => void; fail: (e: Error) => void; extras: (e: RunExtras) => void }[] = [];
  runParts(request: RunRequest): RunParts {
    let headline!: (o: RunOutput) => void;
    let fail!: (e: Error) => void;
    let extras!: (e: RunExtras) => void;
    const parts = {
      headline: new Promise<RunOutput>((r, j) => ((headline = r), (fail = j))),
      extras: new Promise<RunExtras>((r) => (extras = r)),
    };
    this.calls.push({ request, headline, fail, extras });
    return parts;
  }
}

class MemoryStore {
  readonly saved: WorkingSnapshot[] = [];
  saveWorking(snapshot: WorkingSnapshot): Promise<void> {
    this.saved.push(snapshot);
    return Promise.resolve();
  }
}

describe('the autosave with the run queue holding the page work', () => {
  const savedDocument = globalThis.document;
  const savedWindow = globalThis.window;
  let listeners: Record<string, () => void>;
  beforeEach(() => {
    vi.useFakeTimers();
    listeners = {};
    const on = (type: string, f: () => void): void => void (listeners[type] = f);
    (globalThis as { document?: unknown }).document = { body: { dataset: {} }, addEventListener: on, visibilityState: 'visible' };
    (globalThis as { window?: unknown }).window = { setTimeout: (f: () => void, ms: number) => setTimeout(f, ms), addEventListener: on };
  });
  afterEach(() => {
    vi.useRealTimers();
    (globalThis as { document?: unknown }).document = savedDocument;
    (globalThis as { window?: unknown }).window = savedWindow;
  });

  /** An edit as the app makes it: the run requested, then the autosave asked for. */
  function setupWith(): { engine: ManualEngine; store: MemoryStore; s: ManualScheduling; edit: (delay_ns: number) => void; queue: RunQueue } {
    const engine = new ManualEngine();
    const store = new MemoryStore();
    const s = new ManualScheduling();
    const work = new DeferredWork(s);
    let working: Preset = demoPreset('demo-linear-delayed');
    const autosave = createAutosave(store as unknown as SessionStore, () => ({ preset: working, recordId: null, dirty: true, baseline: '', savedAt: 0 }), work);
    const queue = new RunQueue(engine as unknown as EngineClient, () => undefined, () => undefined, () => undefined, work);
    const edit = (delay_ns: number): void => {
      working = { ...working, source: { ...working.source, extraction: { ...working.source.extraction, delay_ns } } as Preset['source'] };
      queue.request(working, 'final', 100);
      autosave();
    };
    return { engine, store, s, edit, queue };
  }
  const delayOf = (w: WorkingSnapshot): unknown => (w.preset.source.extraction as { delay_ns?: number }).delay_ns;

  it('waits for the headline, then saves at the next idle time', async () => {
    const { engine, store, s, edit } = setupWith();
    edit(180);
    vi.advanceTimersByTime(AUTOSAVE_DELAY_MS);
    s.runIdle();
    expect(store.saved).toHaveLength(0); // the run's headline is due
    engine.calls[0].headline({ elapsed_ms: 1 } as unknown as RunOutput);
    await vi.advanceTimersByTimeAsync(0);
    s.runIdle();
    expect(store.saved.map(delayOf)).toEqual([180]);
  });

  it('saves when the run fails', async () => {
    const { engine, store, s, edit } = setupWith();
    edit(190);
    vi.advanceTimersByTime(AUTOSAVE_DELAY_MS);
    engine.calls[0].fail(new Error('worker crashed'));
    await vi.advanceTimersByTimeAsync(0);
    s.runIdle();
    expect(store.saved.map(delayOf)).toEqual([190]);
    expect(document.body.dataset.status).toBe('error');
  });

  it('saves the latest setup when a run is dropped for a newer change', async () => {
    const { engine, store, s, edit } = setupWith();
    edit(200);
    vi.advanceTimersByTime(AUTOSAVE_DELAY_MS);
    edit(210); // finished while the first run is in flight: the first result is stale
    vi.advanceTimersByTime(AUTOSAVE_DELAY_MS);
    engine.calls[0].headline({ elapsed_ms: 1 } as unknown as RunOutput);
    await vi.advanceTimersByTimeAsync(0);
    s.runIdle();
    expect(document.body.dataset.runsDropped).toBe('1');
    expect(store.saved).toHaveLength(0); // the newer run's headline is due
    engine.calls[1].headline({ elapsed_ms: 2 } as unknown as RunOutput);
    await vi.advanceTimersByTimeAsync(0);
    s.runIdle();
    expect(store.saved.map(delayOf)).toEqual([210]);
  });

  it('saves even when no headline ever comes, after the longest hold', async () => {
    const { store, edit } = setupWith();
    edit(220);
    await vi.advanceTimersByTimeAsync(AUTOSAVE_DELAY_MS + MAX_HOLD_MS);
    expect(store.saved.map(delayOf)).toEqual([220]);
  });

  it('saves at once when the page is left, without waiting for the delay or the run', () => {
    const { store, edit } = setupWith();
    edit(230);
    listeners.pagehide();
    expect(store.saved.map(delayOf)).toEqual([230]);
    vi.advanceTimersByTime(AUTOSAVE_DELAY_MS + MAX_HOLD_MS);
    expect(store.saved).toHaveLength(1); // nothing left to save twice
  });
});
