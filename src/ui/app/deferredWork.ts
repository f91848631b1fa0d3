/**
 * Page work that can wait for a run's headline: the autosave, the other views' refresh. On a
 * machine with as many cores as run workers, whatever the page's main thread does while a run is
 * in flight takes a core from a worker, and a result that arrives while the page is busy waits for
 * it; so this work is held while a headline is due (`hold`) and run at the next idle time after
 * the headline was drawn, dropped or failed (`release`). A held task still runs after `MAX_HOLD_MS`
 * (a long drag, an engine that never answers), and `flush` runs everything at once (before the page
 * reports a change done, and when the page is hidden or left), so no task is lost. A task deferred
 * again under the same key replaces the waiting one (each reads the state it needs when it runs).
 */

/** The longest a task waits for a headline, ms: longer than a solved-field run, short against losing an edit. */
export const MAX_HOLD_MS = 2000;

export interface Scheduling {
  /** Run `task` when the page is idle (soon). */
  idle(task: () => void): void;
  /** Run `task` after `ms`; returns a handle for `cancel`. */
  after(task: () => void, ms: number): number;
  cancel(handle: number): void;
}

/** The browser's: an idle callback (with a deadline, so a busy page still gets to it), else a timer. */
export const browserScheduling: Scheduling = {
  idle: (task) => {
    if (typeof requestIdleCallback === 'function') requestIdleCallback(() => task(), { timeout: 100 });
    else setTimeout(task, 0);
  },
  after: (task, ms) => setTimeout(task, ms) as unknown as number,
  cancel: (handle) => clearTimeout(handle),
};

export class DeferredWork {
  private readonly tasks = new Map<string, () => void>();
  private held = false;
  private idleAsked = false;
  private deadline: number | null = null;

  constructor(
    private readonly scheduling: Scheduling = browserScheduling,
    private readonly onError: (err: unknown) => void = (err) => console.error(err),
  ) {}

  /** Run `task` (under `key`) when no headline is due, at the latest after MAX_HOLD_MS. */
  defer(key: string, task: () => void): void {
    this.tasks.delete(key); // a replaced task goes to the back: the order is the order of the last requests
    this.tasks.set(key, task);
    if (this.deadline === null) this.deadline = this.scheduling.after(() => this.flush(), MAX_HOLD_MS);
    if (!this.held) this.askIdle();
  }

  /** A run's headline is due: hold the waiting tasks. */
  hold(): void {
    this.held = true;
  }

  /** No headline is due any more (drawn, dropped or failed): run the waiting tasks when idle. */
  release(): void {
    this.held = false;
    if (this.tasks.size > 0) this.askIdle();
  }

  /** How many tasks wait. */
  get pending(): number {
    return this.tasks.size;
  }

  /**
   * Run every waiting task now, in the order they were (last) deferred. A failing task is reported
   * (`onError`) and does not stop the others, nor the caller (the run queue flushes before 'done').
   */
  flush(): void {
    if (this.deadline !== null) this.scheduling.cancel(this.deadline);
    this.deadline = null;
    const tasks = [...this.tasks.values()];
    this.tasks.clear();
    for (const task of tasks) {
      try {
        task();
      } catch (err) {
        this.onError(err);
      }
    }
  }

  private askIdle(): void {
    if (this.idleAsked) return;
    this.idleAsked = true;
    this.scheduling.idle(() => {
      this.idleAsked = false;
      // A headline became due meanwhile: its release asks again.
      if (!this.held) this.flush();
    });
  }
}
