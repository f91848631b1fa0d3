import 'fake-indexeddb/auto';
import { afterEach, describe, expect, it } from 'vitest';
import { IdbPresetStore, openBenchDb } from '../../src/ui/storage/idbPresetStore';
import { cleanName, copyName } from '../../src/ui/storage/presetStore';
import { demoPreset } from './helpers';

let opened: IdbPresetStore[] = [];
let dbCount = 0;

async function freshStore(): Promise<{ store: IdbPresetStore; name: string }> {
  const name = `test-db-${++dbCount}`;
  let id = 0;
  let clock = 1_000;
  const store = await IdbPresetStore.open({ name, newId: () => `id-${++id}`, now: () => (clock += 10) });
  opened.push(store);
  return { store, name };
}

afterEach(() => {
  for (const s of opened) s.close();
  opened = [];
});

describe('method presets in IndexedDB', () => {
  it('saves, lists (newest first), reads back equal presets', async () => {
    const { store } = await freshStore();
    const linear = demoPreset('demo-linear-delayed');
    const dual = demoPreset('demo-reflectron-dual');
    const a = await store.create('  Linear   method ', linear);
    const b = await store.create('Dual method', dual);
    expect(a.name).toBe('Linear method');
    const listing = await store.list();
    expect(listing.records.map((r) => r.id)).toEqual([b.id, a.id]);
    expect(listing.unreadable).toEqual([]);
    expect((await store.get(a.id))?.preset).toEqual(linear);
    expect((await store.get(b.id))?.preset).toEqual(dual);
  });

  it('renames, updates, duplicates with a free copy name', async () => {
    const { store } = await freshStore();
    const linear = demoPreset('demo-linear-delayed');
    const a = await store.create('Method', linear);
    const renamed = await store.rename(a.id, 'Method A');
    expect(renamed.name).toBe('Method A');
    expect(renamed.createdAt).toBe(a.createdAt);
    expect(renamed.updatedAt).toBeGreaterThan(a.updatedAt);
    const changed = structuredClone(linear);
    if (changed.source.extraction.mode !== 'delayed') throw new Error('demo is delayed');
    changed.source.extraction.delay_ns = 200;
    const updated = await store.update(a.id, changed);
    expect(updated.name).toBe('Method A');
    expect((await store.get(a.id))?.preset).toEqual(changed);
    const copy1 = await store.duplicate(a.id);
    const copy2 = await store.duplicate(a.id);
    expect(copy1.name).toBe('Method A (copy)');
    expect(copy2.name).toBe('Method A (copy 2)');
    expect(copy1.preset).toEqual(changed);
    expect((await store.list()).records).toHaveLength(3);
  });

  it('delete returns the record and restore puts it back exactly (undo)', async () => {
    const { store } = await freshStore();
    const a = await store.create('Keep me', demoPreset('demo-reflectron-single'));
    const removed = await store.remove(a.id);
    expect(removed).toEqual(a);
    expect(await store.get(a.id)).toBeUndefined();
    expect((await store.list()).records).toEqual([]);
    await store.restore(removed!);
    expect(await store.get(a.id)).toEqual(a);
    expect(await store.remove('no-such-id')).toBeUndefined();
  });

  it('lists records that no longer validate as unreadable instead of loading them', async () => {
    const { store, name } = await freshStore();
    await store.create('Good', demoPreset('demo-linear-delayed'));
    const db = await openBenchDb(name);
    const bad = { ...demoPreset('demo-linear-delayed'), formatVersion: 99 };
    await db.put('presets', { id: 'bad', name: 'From the future', preset: bad, createdAt: 1, updatedAt: 2 });
    db.close();
    const listing = await store.list();
    expect(listing.records.map((r) => r.name)).toEqual(['Good']);
    expect(listing.unreadable).toHaveLength(1);
    expect(listing.unreadable[0].reason).toMatch(/formatVersion/);
    expect(await store.get('bad')).toBeUndefined();
  });

  it('autosaves the working setup and restores it, refusing a damaged one', async () => {
    const { store, name } = await freshStore();
    expect(await store.loadWorking()).toBeUndefined();
    const preset = demoPreset('demo-reflectron-dual');
    await store.saveWorking({ preset, recordId: 'id-7', dirty: true, baseline: '{"x":1}', savedAt: 5 });
    expect(await store.loadWorking()).toEqual({ preset, recordId: 'id-7', dirty: true, baseline: '{"x":1}', savedAt: 5 });
    const db = await openBenchDb(name);
    await db.put('session', { preset: { ...preset, mirror: { type: 'mirror-of-doom' } }, recordId: null }, 'working');
    db.close();
    expect(await store.loadWorking()).toBeUndefined();
  });

  it('refuses empty names and caps them at 120 characters', async () => {
    const { store } = await freshStore();
    await expect(store.create('   ', demoPreset('demo-linear-delayed'))).rejects.toThrow(/empty/);
    expect(cleanName('x'.repeat(200))).toHaveLength(120);
    expect(copyName('A (copy)', new Set(['A (copy)']))).toBe('A (copy 2)');
  });
});
