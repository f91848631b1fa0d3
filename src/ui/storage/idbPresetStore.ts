/**
 * Method presets and the autosaved working setup in the browser's IndexedDB (through `idb`).
 * Everything read back is validated again: stored data is never trusted into app state.
 */
import { openDB, type DBSchema, type IDBPDatabase } from 'idb';
import { validatePreset } from '../../presets/load';
import { formatIssues } from '../../presets/issues';
import type { Preset } from '../../presets/schema';
import { cleanName, copyName, type PresetListing, type PresetRecord, type PresetStore, type SessionStore, type WorkingSnapshot } from './presetStore';

export const DB_NAME = 'tof-flight-bench';
const DB_VERSION = 1;
const WORKING_KEY = 'working';
/** The setup a load replaced, kept so that the load can be undone (also after a reload). */
const REPLACED_KEY = 'replaced';

interface StoredRecord {
  id: string;
  name: string;
  preset: unknown;
  createdAt: number;
  updatedAt: number;
}

interface BenchDb extends DBSchema {
  presets: { key: string; value: StoredRecord; indexes: { updatedAt: number } };
  session: { key: string; value: unknown };
}

export type IdFactory = () => string;

const defaultId: IdFactory = () => crypto.randomUUID();

export function openBenchDb(name = DB_NAME): Promise<IDBPDatabase<BenchDb>> {
  return openDB<BenchDb>(name, DB_VERSION, {
    upgrade(db) {
      const presets = db.createObjectStore('presets', { keyPath: 'id' });
      presets.createIndex('updatedAt', 'updatedAt');
      db.createObjectStore('session');
    },
  });
}

function readRecord(stored: StoredRecord): { ok: true; record: PresetRecord } | { ok: false; reason: string } {
  const checked = validatePreset(stored.preset);
  if (!checked.ok) return { ok: false, reason: formatIssues(checked.issues) };
  return {
    ok: true,
    record: { id: stored.id, name: String(stored.name), preset: checked.value, createdAt: stored.createdAt, updatedAt: stored.updatedAt },
  };
}

export class IdbPresetStore implements PresetStore, SessionStore {
  private constructor(
    private readonly db: IDBPDatabase<BenchDb>,
    private readonly newId: IdFactory,
    private readonly now: () => number,
  ) {}

  static async open(options: { name?: string; newId?: IdFactory; now?: () => number } = {}): Promise<IdbPresetStore> {
    return new IdbPresetStore(await openBenchDb(options.name), options.newId ?? defaultId, options.now ?? Date.now);
  }

  close(): void {
    this.db.close();
  }

  async list(): Promise<PresetListing> {
    const all = await this.db.getAll('presets');
    const listing: PresetListing = { records: [], unreadable: [] };
    for (const stored of all) {
      const read = readRecord(stored);
      if (read.ok) listing.records.push(read.record);
      else listing.unreadable.push({ id: stored.id, name: String(stored.name), reason: read.reason });
    }
    listing.records.sort((a, b) => b.updatedAt - a.updatedAt || a.name.localeCompare(b.name));
    return listing;
  }

  async get(id: string): Promise<PresetRecord | undefined> {
    const stored = await this.db.get('presets', id);
    if (!stored) return undefined;
    const read = readRecord(stored);
    return read.ok ? read.record : undefined;
  }

  async create(name: string, preset: Preset): Promise<PresetRecord> {
    const time = this.now();
    const record: PresetRecord = { id: this.newId(), name: cleanName(name), preset: structuredClone(preset), createdAt: time, updatedAt: time };
    await this.db.add('presets', { ...record });
    return record;
  }

  async update(id: string, preset: Preset): Promise<PresetRecord> {
    const old = await this.mustGet(id);
    const record: PresetRecord = { ...old, preset: structuredClone(preset), updatedAt: this.now() };
    await this.db.put('presets', { ...record });
    return record;
  }

  async rename(id: string, name: string): Promise<PresetRecord> {
    const old = await this.mustGet(id);
    const record: PresetRecord = { ...old, name: cleanName(name), updatedAt: this.now() };
    await this.db.put('presets', { ...record });
    return record;
  }

  async duplicate(id: string, name?: string): Promise<PresetRecord> {
    const old = await this.mustGet(id);
    const taken = new Set((await this.db.getAll('presets')).map((r) => String(r.name)));
    return this.create(name ?? copyName(old.name, taken), old.preset);
  }

  async remove(id: string): Promise<PresetRecord | undefined> {
    const tx = this.db.transaction('presets', 'readwrite');
    const stored = await tx.store.get(id);
    if (stored) await tx.store.delete(id);
    await tx.done;
    if (!stored) return undefined;
    const read = readRecord(stored);
    return read.ok ? read.record : undefined;
  }

  async restore(record: PresetRecord): Promise<void> {
    await this.db.put('presets', { ...record, preset: structuredClone(record.preset) });
  }

  async loadWorking(): Promise<WorkingSnapshot | undefined> {
    return this.readSnapshot(WORKING_KEY);
  }

  async loadReplaced(): Promise<WorkingSnapshot | undefined> {
    return this.readSnapshot(REPLACED_KEY);
  }

  async saveReplaced(snapshot: WorkingSnapshot): Promise<void> {
    await this.db.put('session', { ...snapshot, preset: structuredClone(snapshot.preset) }, REPLACED_KEY);
  }

  /** A stored snapshot, validated again (never trusted into app state). */
  private async readSnapshot(key: string): Promise<WorkingSnapshot | undefined> {
    const stored = (await this.db.get('session', key)) as Partial<WorkingSnapshot> | undefined;
    if (!stored || typeof stored !== 'object') return undefined;
    const checked = validatePreset(stored.preset);
    if (!checked.ok) return undefined;
    return {
      preset: checked.value,
      recordId: typeof stored.recordId === 'string' ? stored.recordId : null,
      dirty: stored.dirty === true,
      baseline: typeof stored.baseline === 'string' ? stored.baseline : '',
      savedAt: typeof stored.savedAt === 'number' ? stored.savedAt : 0,
    };
  }

  async saveWorking(snapshot: WorkingSnapshot): Promise<void> {
    await this.db.put('session', { ...snapshot, preset: structuredClone(snapshot.preset) }, WORKING_KEY);
  }

  private async mustGet(id: string): Promise<PresetRecord> {
    const record = await this.get(id);
    if (!record) throw new Error(`no readable preset with id ${id}`);
    return record;
  }
}
