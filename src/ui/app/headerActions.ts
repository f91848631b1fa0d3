/** The header's run and save buttons and their keyboard shortcuts (Ctrl/⌘+Enter runs, Ctrl/⌘+S saves). */
import { byId } from '../dom';

export function wireHeaderActions(run: () => void, save: () => void): void {
  byId('btn-run').addEventListener('click', () => run());
  byId('btn-save').addEventListener('click', () => save());
  document.addEventListener('keydown', (e) => {
    if ((e.ctrlKey || e.metaKey) && e.key === 'Enter') {
      e.preventDefault();
      run();
    } else if ((e.ctrlKey || e.metaKey) && (e.key === 's' || e.key === 'S')) {
      e.preventDefault();
      save();
    }
  });
}
