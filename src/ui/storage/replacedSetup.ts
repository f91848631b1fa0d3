/**
 * Nothing a load replaces is lost: before any load (a shared link, a file, a saved preset, a demo,
 * applied tuning values) overwrites the working setup, the setup it replaces is stored as the
 * "replaced" snapshot, one level deep, beside the autosave (so it survives a reload), and "Undo
 * load" swaps it back (undoing the undo swaps again). Which loads must ask first is decided here too.
 */
import type { Preset } from '../../presets/schema';
import type { SessionStore, WorkingSnapshot } from './presetStore';

/** Whether opening a shared setup over `current` needs the user's consent: only when it would replace unsaved work. */
export function replacingNeedsConsent(current: WorkingSnapshot | undefined, incoming: Preset): boolean {
  if (!current || !current.dirty) return false;
  return JSON.stringify(current.preset) !== JSON.stringify(incoming);
}

export class ReplacedSetupKeeper {
  /** Called with whether an undo is available (e.g. to show the button). */
  onAvailable: (available: boolean) => void = () => undefined;

  constructor(private readonly store: SessionStore | null) {}

  /** Look up a snapshot kept from an earlier session. */
  async init(): Promise<void> {
    const kept = await this.store?.loadReplaced().catch(() => undefined);
    this.onAvailable(kept !== undefined);
  }

  /** Keep `replaced` before a load overwrites it with `incoming` (nothing is kept when they are the same setup). */
  async remember(replaced: WorkingSnapshot, incoming: Preset): Promise<void> {
    if (!this.store || JSON.stringify(replaced.preset) === JSON.stringify(incoming)) return;
    await this.store.saveReplaced(replaced);
    this.onAvailable(true);
  }

  /** The kept setup, after storing `current` in its place (so the undo can itself be undone); undefined when none is kept. */
  async swap(current: WorkingSnapshot): Promise<WorkingSnapshot | undefined> {
    if (!this.store) return undefined;
    const kept = await this.store.loadReplaced();
    if (!kept) return undefined;
    await this.store.saveReplaced(current);
    return kept;
  }
}
