/**
 * Autosave of the working setup into the preset store, a short while after the last change. The
 * save itself waits for the page's idle time after the run's headline (`DeferredWork`), so it does
 * not take the page from a run in flight; it reads the setup when it runs, so it saves the latest.
 * A page hidden or left saves what waits at once.
 */
import type { SessionStore, WorkingSnapshot } from '../storage/presetStore';
import { DeferredWork } from './deferredWork';

export const AUTOSAVE_DELAY_MS = 300;

/** Returns the function that asks for an autosave. `work` defers the save (by default, to the next idle time). */
export function createAutosave(store: SessionStore | null, snapshot: () => WorkingSnapshot, work: DeferredWork = new DeferredWork()): () => void {
  let timer = 0;
  let waiting = false;
  const save = (): void => {
    waiting = false;
    store?.saveWorking(snapshot()).then(
      () => (document.body.dataset.autosave = 'saved'),
      () => (document.body.dataset.autosave = 'failed'),
    );
  };
  const saveNow = (): void => {
    if (!waiting) return;
    clearTimeout(timer);
    work.defer('autosave', save);
    work.flush();
  };
  if (store) {
    window.addEventListener('pagehide', saveNow);
    document.addEventListener('visibilitychange', () => {
      if (document.visibilityState === 'hidden') saveNow();
    });
  }
  return () => {
    if (!store) return;
    document.body.dataset.autosave = 'pending';
    waiting = true;
    clearTimeout(timer);
    timer = window.setTimeout(() => work.defer('autosave', save), AUTOSAVE_DELAY_MS);
  };
}
