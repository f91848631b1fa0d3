/**
 * Loading setups into the app: every load after start-up keeps the setup it replaces (one level of
 * undo, stored beside the autosave); shared links, opened at start-up or in a running tab; and the
 * first setup: a shared link, else the autosaved one, else the demo.
 */
import type { Preset } from '../../presets/schema';
import type { LoadOrigin } from '../appContext';
import { byId, confirmDialog, toast } from '../dom';
import { decodeShareToken, shareTokenFromHash } from '../io/shareLink';
import type { SessionStore } from '../storage/presetStore';
import { ReplacedSetupKeeper, replacingNeedsConsent } from '../storage/replacedSetup';
import { showLoadProblems } from './importExport';
import type { WorkingSetup } from './workingSetup';

export class SetupLoader {
  private readonly keeper: ReplacedSetupKeeper;
  private started = false;

  /** `apply` makes a preset the working setup (panel, header, autosave, views, run). */
  constructor(
    store: SessionStore | null,
    private readonly setup: WorkingSetup,
    private readonly apply: (preset: Preset, origin: LoadOrigin) => void,
  ) {
    this.keeper = new ReplacedSetupKeeper(store);
    const undoButton = byId<HTMLButtonElement>('btn-undo-load');
    this.keeper.onAvailable = (available) => (undoButton.hidden = !available);
    undoButton.addEventListener('click', () => void this.undoLoad());
  }

  load(preset: Preset, origin: LoadOrigin): void {
    if (this.started) void this.keeper.remember(this.setup.snapshot(), preset);
    this.apply(preset, origin);
  }

  async undoLoad(): Promise<void> {
    const kept = await this.keeper.swap(this.setup.snapshot());
    if (!kept) {
      toast('No replaced setup is kept.');
      return;
    }
    this.setup.baseline = kept.baseline;
    this.apply(kept.preset, { recordId: kept.recordId, state: 'dirty' });
    toast(`Restored “${kept.preset.name}”, the setup the last load replaced (“Undo load” again swaps back).`, undefined, 8000);
  }

  /** Load the first setup, then listen for shared links opened in this tab. */
  async start(store: SessionStore | null): Promise<void> {
    // A link opened in a tab that already runs the app changes only the fragment.
    window.addEventListener('hashchange', () => {
      const token = shareTokenFromHash(location.hash);
      if (token === null) return;
      history.replaceState(null, '', location.pathname + location.search);
      void decodeShareToken(token).then(async (shared) => {
        if (!shared.ok) return showLoadProblems('The shared link was not loaded', shared.issues);
        if (replacingNeedsConsent(this.setup.snapshot(), shared.value) && !(await askToReplace())) {
          toast('The shared setup was not opened; your working setup is unchanged.');
          return;
        }
        this.openShared(shared.value);
      });
    });

    const token = shareTokenFromHash(location.hash);
    const snapshot = store ? await store.loadWorking().catch(() => undefined) : undefined;
    await this.keeper.init();
    let first: { preset: Preset; origin: LoadOrigin; baselineText?: string } | null = null;
    if (token !== null) {
      const shared = await decodeShareToken(token);
      history.replaceState(null, '', location.pathname + location.search);
      if (!shared.ok) showLoadProblems('The shared link was not loaded', shared.issues);
      else if (!replacingNeedsConsent(snapshot, shared.value) || (await askToReplace())) {
        if (snapshot) await this.keeper.remember(snapshot, shared.value);
        first = { preset: shared.value, origin: { recordId: null, state: 'dirty' }, baselineText: '' };
      } else toast('The shared setup was not opened; your working setup is unchanged.');
    }
    if (!first && snapshot) first = { preset: snapshot.preset, origin: { recordId: snapshot.recordId, state: 'dirty' }, baselineText: snapshot.baseline };
    if (first) {
      this.setup.baseline = first.baselineText ?? JSON.stringify(first.preset);
      this.load(first.preset, first.origin);
    } else this.load(this.setup.preset, { recordId: null, state: 'clean' });
    this.started = true;
  }

  private openShared(preset: Preset): void {
    this.load(preset, { recordId: null, state: 'dirty' });
    this.setup.baseline = ''; // a shared setup is unsaved work until saved as a preset
    this.setup.refreshHeader();
    toast(`Opened the shared setup “${preset.name}”.`, { label: 'Undo', run: () => void this.undoLoad() }, 8000);
  }
}

function askToReplace(): Promise<boolean> {
  return confirmDialog('Open the shared setup?', 'Your working setup has changes that are not saved as a preset. Opening the link replaces it; “Undo load” brings it back.', 'Open shared setup');
}
