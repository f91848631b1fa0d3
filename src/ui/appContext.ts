/** What the compare, tuning and preset views may ask of the app. */
import type { Preset } from '../presets/schema';
import type { EngineClient } from './engine/engineClient';
import type { PresetStore } from './storage/presetStore';

export interface LoadOrigin {
  /** Saved record the setup now corresponds to, if any. */
  readonly recordId: string | null;
  /** 'clean': the loaded setup is the new baseline; 'dirty': it counts as an unsaved change. */
  readonly state: 'clean' | 'dirty';
}

export interface AppContext {
  /** Runs of the working setup and of compared setups. */
  readonly engine: EngineClient;
  /** Scans and auto-tunes (cancelling them must not disturb ordinary runs). */
  readonly tuningEngine: EngineClient;
  readonly store: PresetStore | null;
  /** The last valid working setup. */
  working(): Preset;
  recordId(): string | null;
  isDirty(): boolean;
  /** Replace the working setup (validated by the caller), refresh the panel and run it. */
  loadSetup(preset: Preset, origin: LoadOrigin): void;
  /** The record the working setup belongs to was saved (or renamed): it is the new baseline. */
  markSaved(recordId: string, preset: Preset): void;
  /** Colours of the working setup's species (by m/z). */
  speciesColours(): string[];
}
