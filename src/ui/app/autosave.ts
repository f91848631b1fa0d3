/** Autosave of the working setup into the preset store, a short while after the last change. */
import type { SessionStore, WorkingSnapshot } from '../storage/presetStore';

export const AUTOSAVE_DELAY_MS = 300;

export function createAutosave(store: SessionStore | null, snapshot: () => WorkingSnapshot): () => void {
  let timer = 0;
  return () => {
    if (!store) return;
    document.body.dataset.autosave = 'pending';
    clearTimeout(timer);
    timer = window.setTimeout(() => {
      store.saveWorking(snapshot()).then(
        () => (document.body.dataset.autosave = 'saved'),
        () => (document.body.dataset.autosave = 'failed'),
      );
    }, AUTOSAVE_DELAY_MS);
  };
}
