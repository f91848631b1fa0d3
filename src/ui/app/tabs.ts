/** The lower tabs (compare, method presets, tuning, measured spectra, tolerance): each view refreshes when shown. */
import { byId, setUpTabs } from '../dom';

export interface TabViews {
  readonly compare: { refreshChoices(): Promise<void> };
  readonly presets: { refresh(): Promise<void> };
  readonly tuning: { refresh(): void };
  readonly measured: { refresh(): void };
  readonly tolerance: { refresh(): void };
}

/** Returns `showTab(id)`. */
export function wireTabs(views: TabViews): (tabId: string) => void {
  return setUpTabs(byId('lower-tabs'), (id) => {
    if (id === 'tab-compare') void views.compare.refreshChoices();
    if (id === 'tab-presets') void views.presets.refresh();
    if (id === 'tab-tuning') views.tuning.refresh();
    if (id === 'tab-measured') views.measured.refresh();
    if (id === 'tab-tolerance') views.tolerance.refresh();
  });
}
