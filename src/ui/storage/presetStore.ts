/**
 * Where method presets and the autosaved working setup live. The app talks to these interfaces
 * only; the IndexedDB implementation is in idbPresetStore.ts, and tests use fake-indexeddb.
 */
import type { Preset } from '../../presets/schema';

export interface PresetRecord {
  readonly id: string;
  readonly name: string;
  readonly preset: Preset;
  /** Milliseconds since the epoch. */
  readonly createdAt: number;
  readonly updatedAt: number;
}

/** A stored record that no longer validates (e.g. written by a newer version), listed with its reason. */
export interface UnreadableRecord {
  readonly id: string;
  readonly name: string;
  readonly reason: string;
}

export interface PresetListing {
  readonly records: PresetRecord[];
  readonly unreadable: UnreadableRecord[];
}

export interface PresetStore {
  /** Every record, most recently updated first. */
  list(): Promise<PresetListing>;
  get(id: string): Promise<PresetRecord | undefined>;
  /** A new record under a new id. */
  create(name: string, preset: Preset): Promise<PresetRecord>;
  /** Replaces the preset of an existing record (keeps its name and creation time). */
  update(id: string, preset: Preset): Promise<PresetRecord>;
  rename(id: string, name: string): Promise<PresetRecord>;
  duplicate(id: string, name?: string): Promise<PresetRecord>;
  /** Removes and returns the record, so the caller can offer to undo with `restore`. */
  remove(id: string): Promise<PresetRecord | undefined>;
  /** Puts a removed record back exactly as it was (same id and times). */
  restore(record: PresetRecord): Promise<void>;
}

/** The working setup as it was last edited, restored after a reload. */
export interface WorkingSnapshot {
  readonly preset: Preset;
  /** The saved record the setup came from, if any. */
  readonly recordId: string | null;
  /** Whether it differed from that record (or from what was loaded) when autosaved. */
  readonly dirty: boolean;
  /** JSON of the setup as last saved or loaded, to tell later whether it has changed. */
  readonly baseline: string;
  readonly savedAt: number;
}

export interface SessionStore {
  loadWorking(): Promise<WorkingSnapshot | undefined>;
  saveWorking(snapshot: WorkingSnapshot): Promise<void>;
  /** The working setup as it was before the last load replaced it (one level of undo). */
  loadReplaced(): Promise<WorkingSnapshot | undefined>;
  saveReplaced(snapshot: WorkingSnapshot): Promise<void>;
}

/** Names are trimmed, non-empty and at most 120 characters (the preset schema's limit). */
export function cleanName(name: string): string {
  const trimmed = name.replace(/\s+/g, ' ').trim().slice(0, 120);
  if (!trimmed) throw new Error('a preset name must not be empty');
  return trimmed;
}

/** "name (copy)", "name (copy 2)", ... not yet used in `taken`. */
export function copyName(name: string, taken: ReadonlySet<string>): string {
  const base = name.replace(/ \(copy(?: \d+)?\)$/, '');
  for (let i = 1; ; i++) {
    const candidate = cleanName(i === 1 ? `${base} (copy)` : `${base} (copy ${i})`);
    if (!taken.has(candidate)) return candidate;
  }
}
