/** One level of undo for loads: the replaced setup is kept beside the autosave, validated on the way back, and swapped. */
import 'fake-indexeddb/auto';
import { describe, expect, it } from 'vitest';
import { IdbPresetStore } from '../../src/ui/storage/idbPresetStore';
import type { WorkingSnapshot } from '../../src/ui/storage/presetStore';
import { ReplacedSetupKeeper, replacingNeedsConsent } from '../../src/ui/storage/replacedSetup';
import { demoPreset } from './helpers';

const linear = demoPreset('demo-linear-delayed');
const dual = demoPreset('demo-reflectron-dual');
const snap = (preset: typeof linear, dirty: boolean): WorkingSnapshot => ({ preset, recordId: null, dirty, baseline: dirty ? '' : JSON.stringify(preset), savedAt: 1 });

describe('loads that replace unsaved work', () => {
  it('need consent only when they would replace unsaved changes with something else', () => {
    expect(replacingNeedsConsent(undefined, dual)).toBe(false);
    expect(replacingNeedsConsent(snap(linear, false), dual)).toBe(false);
    expect(replacingNeedsConsent(snap(linear, true), dual)).toBe(true);
    expect(replacingNeedsConsent(snap(linear, true), structuredClone(linear))).toBe(false);
  });

  it('keep the replaced setup, across a reopen of the store, and swap it back and forth', async () => {
    const store = await IdbPresetStore.open({ name: 'replaced-1' });
    const keeper = new ReplacedSetupKeeper(store);
    const seen: boolean[] = [];
    keeper.onAvailable = (on) => seen.push(on);
    await keeper.init();
    expect(seen).toEqual([false]);
    expect(await keeper.swap(snap(dual, false))).toBeUndefined();
    const edited = { ...linear, name: 'my unsaved edit' };
    await keeper.remember(snap(edited, true), dual);
    expect(seen).toEqual([false, true]);
    store.close();

    const reopened = await IdbPresetStore.open({ name: 'replaced-1' });
    const again = new ReplacedSetupKeeper(reopened);
    again.onAvailable = (on) => seen.push(on);
    await again.init();
    expect(seen.at(-1)).toBe(true);
    const back = await again.swap(snap(dual, true));
    expect(back).toEqual(snap(edited, true));
    // The undo is itself undoable: the setup it replaced is now the kept one.
    expect((await again.swap(snap(edited, true)))?.preset).toEqual(dual);
    reopened.close();
  });

  it('keep nothing when a load brings the same setup back', async () => {
    const store = await IdbPresetStore.open({ name: 'replaced-2' });
    const keeper = new ReplacedSetupKeeper(store);
    await keeper.remember(snap(linear, true), structuredClone(linear));
    expect(await store.loadReplaced()).toBeUndefined();
    store.close();
  });
});
