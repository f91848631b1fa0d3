/**
 * The method presets tab: the setups saved in this browser (load, rename, duplicate, delete with
 * undo) and the shipped demos. Every record is validated when read; unreadable ones are listed
 * with their reason instead of being loaded.
 */
import type { AppContext } from '../appContext';
import { byId, confirmDialog, el, toast } from '../dom';
import type { PresetRecord } from '../storage/presetStore';
import { demos } from './demos';

export class PresetsView {
  private readonly table = byId<HTMLTableElement>('preset-table');
  private readonly nameInput = byId<HTMLInputElement>('save-as-name');
  /** Called after the list of saved presets changed. */
  onListChange: () => void = () => {};

  constructor(private readonly app: AppContext) {
    byId<HTMLFormElement>('save-as-form').addEventListener('submit', (e) => {
      e.preventDefault();
      void this.saveAs(this.nameInput.value);
    });
    const list = byId('demo-list');
    for (const d of demos()) {
      const button = el('button', { type: 'button', text: `Load: ${d.preset.name.replace(/^Demo: /, '')}` });
      button.addEventListener('click', () => void this.loadChecked(structuredClone(d.preset), null));
      list.append(el('li', {}, button));
    }
  }

  /** Prefill the name and put the focus on it (the Save button of a setup not saved yet). */
  askName(): void {
    this.nameInput.value = this.app.working().name;
    this.nameInput.focus();
    this.nameInput.select();
  }

  async refresh(): Promise<void> {
    const body = this.table.tBodies[0];
    const store = this.app.store;
    if (!store) {
      body.replaceChildren(el('tr', {}, el('td', { colspan: '3', text: 'This browser offers no storage (IndexedDB) here; use Export instead.' })));
      return;
    }
    const listing = await store.list();
    const rows: HTMLTableRowElement[] = listing.records.map((r) => this.row(r));
    for (const bad of listing.unreadable) {
      rows.push(el('tr', {}, el('td', { text: bad.name }), el('td', { text: 'unreadable' }), el('td', { text: bad.reason.split('\n')[0] })));
    }
    if (!rows.length) rows.push(el('tr', {}, el('td', { colspan: '3', text: 'No saved presets yet. Name the current setup above and save it.' })));
    body.replaceChildren(...rows);
  }

  private row(record: PresetRecord): HTMLTableRowElement {
    const current = record.id === this.app.recordId();
    const name = el('td', {}, el('span', { text: record.name }), current ? el('span', { className: 'summary', text: ' (current)' }) : null);
    const actions = el('span', { className: 'row-actions' });
    const action = (label: string, run: () => void, title: string): void => {
      const b = el('button', { type: 'button', text: label, title, 'aria-label': `${label} ${record.name}` });
      b.addEventListener('click', run);
      actions.append(b);
    };
    action('Load', () => void this.loadChecked(record.preset, record.id), 'Make this the working setup');
    action('Rename', () => this.startRename(name, record), 'Rename this preset');
    action('Duplicate', () => void this.duplicate(record), 'Save a copy');
    action('Delete', () => void this.remove(record), 'Delete (can be undone for a few seconds)');
    return el('tr', { 'data-id': record.id }, name, el('td', { text: new Date(record.updatedAt).toLocaleString() }), el('td', {}, actions));
  }

  private async loadChecked(preset: PresetRecord['preset'], recordId: string | null): Promise<void> {
    if (this.app.isDirty() && !(await confirmDialog('Replace the working setup?', 'It has changes that are not saved as a preset.', 'Replace'))) return;
    this.app.loadSetup(structuredClone(preset), { recordId, state: 'clean' });
    toast(`Loaded “${preset.name}”.`);
    void this.refresh();
  }

  async saveAs(name: string): Promise<void> {
    const store = this.app.store;
    if (!store || !name.trim()) return;
    const preset = { ...structuredClone(this.app.working()), name: name.trim().slice(0, 120) };
    const record = await store.create(name, preset);
    this.app.markSaved(record.id, record.preset);
    toast(`Saved “${record.name}”.`);
    await this.refresh();
    this.onListChange();
  }

  /** Save over the current record; false when the setup has none yet. */
  async saveCurrent(): Promise<boolean> {
    const store = this.app.store;
    const id = this.app.recordId();
    if (!store || !id || !(await store.get(id))) return false;
    const record = await store.update(id, this.app.working());
    this.app.markSaved(record.id, record.preset);
    toast(`Saved “${record.name}”.`);
    await this.refresh();
    return true;
  }

  private startRename(cell: HTMLElement, record: PresetRecord): void {
    const input = el('input', { type: 'text', value: record.name, maxlength: '120', 'aria-label': `New name for ${record.name}` });
    const finish = async (commit: boolean): Promise<void> => {
      input.removeEventListener('blur', onBlur);
      if (commit && input.value.trim() && input.value.trim() !== record.name && this.app.store) {
        await this.app.store.rename(record.id, input.value);
        this.onListChange();
      }
      await this.refresh();
    };
    const onBlur = (): void => void finish(true);
    input.addEventListener('keydown', (e) => {
      if (e.key === 'Enter') void finish(true);
      if (e.key === 'Escape') void finish(false);
    });
    input.addEventListener('blur', onBlur);
    cell.replaceChildren(input);
    input.focus();
    input.select();
  }

  private async duplicate(record: PresetRecord): Promise<void> {
    if (!this.app.store) return;
    const copy = await this.app.store.duplicate(record.id);
    toast(`Saved a copy: “${copy.name}”.`);
    await this.refresh();
    this.onListChange();
  }

  private async remove(record: PresetRecord): Promise<void> {
    const store = this.app.store;
    if (!store) return;
    const removed = await store.remove(record.id);
    await this.refresh();
    this.onListChange();
    if (!removed) return;
    toast(
      `Deleted “${removed.name}”.`,
      {
        label: 'Undo',
        run: () =>
          void store.restore(removed).then(async () => {
            await this.refresh();
            this.onListChange();
          }),
      },
      10_000,
    );
  }
}
