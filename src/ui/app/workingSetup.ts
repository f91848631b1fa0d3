/**
 * The working setup: the last valid preset, the saved record it belongs to, and the baseline it is
 * compared with to tell unsaved changes; the header shows its name and a mark while it is dirty.
 */
import type { Preset } from '../../presets/schema';
import type { WorkingSnapshot } from '../storage/presetStore';
import { byId } from '../dom';

export class WorkingSetup {
  recordId: string | null = null;
  /** JSON of the setup as last saved or loaded clean; '' marks a setup never saved (a shared link). */
  baseline: string;

  constructor(public preset: Preset) {
    this.baseline = JSON.stringify(preset);
  }

  isDirty(): boolean {
    return JSON.stringify(this.preset) !== this.baseline;
  }

  snapshot(): WorkingSnapshot {
    return { preset: this.preset, recordId: this.recordId, dirty: this.isDirty(), baseline: this.baseline, savedAt: Date.now() };
  }

  refreshHeader(): void {
    const dirty = this.isDirty(); // one serialisation of the setup: the header is refreshed on every edit
    byId('setup-name').textContent = this.preset.name;
    byId('dirty-mark').hidden = !dirty;
    document.title = `${dirty ? '● ' : ''}${this.preset.name} — TOF Flight Bench`;
  }
}

/** Ask before leaving the page with unsaved changes. */
export function guardUnload(setup: WorkingSetup): void {
  window.addEventListener('beforeunload', (event) => {
    if (!setup.isDirty()) return;
    event.preventDefault();
    event.returnValue = ''; // older engines need it set to show the prompt
  });
}
