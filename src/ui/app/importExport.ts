/** Import of a preset file, JSON export and share links of the working setup, and the dialog listing why a load failed. */
import type { PresetIssue } from '../../presets/issues';
import type { Preset } from '../../presets/schema';
import type { LoadOrigin } from '../appContext';
import { byId, confirmDialog, copyText, downloadText, el, toast } from '../dom';
import { presetFileName, presetToJson, readPresetFile } from '../io/presetFile';
import { encodeShareFragment } from '../io/shareLink';
import type { WorkingSetup } from './workingSetup';

/** Show the problems that kept a file or link from loading (the working setup is unchanged). */
export function showLoadProblems(title: string, issues: readonly PresetIssue[]): void {
  byId('import-dialog-title').textContent = title;
  byId('import-issues').replaceChildren(...issues.map((i) => el('li', { text: `${i.path}: ${i.message}` })));
  byId<HTMLDialogElement>('import-dialog').showModal();
}

export function wireImportExport(setup: WorkingSetup, loadSetup: (preset: Preset, origin: LoadOrigin) => void): void {
  const fileInput = byId<HTMLInputElement>('file-import');
  byId('btn-import').addEventListener('click', () => fileInput.click());
  const importFile = async (file: File): Promise<void> => {
    const result = await readPresetFile(file);
    if (!result.ok) {
      showLoadProblems(`“${file.name}” was not loaded`, result.issues);
      return;
    }
    if (setup.isDirty() && !(await confirmDialog('Replace the working setup?', 'It has changes that are not saved as a preset.', 'Replace'))) return;
    loadSetup(result.value, { recordId: null, state: 'clean' });
    toast(`Loaded “${result.value.name}” from ${file.name}.`);
  };
  fileInput.addEventListener('change', () => {
    const file = fileInput.files?.[0];
    fileInput.value = '';
    if (file) void importFile(file);
  });
  const importDialog = byId<HTMLDialogElement>('import-dialog');
  byId('import-dialog-close').addEventListener('click', () => importDialog.close());
  byId('btn-export').addEventListener('click', () => downloadText(presetToJson(setup.preset), presetFileName(setup.preset), 'application/json'));
  byId('btn-share').addEventListener('click', () => {
    void encodeShareFragment(setup.preset).then(async (fragment) => {
      const url = `${location.origin}${location.pathname}#${fragment}`;
      if (await copyText(url)) toast('Link to this setup copied to the clipboard.');
      else toast(`Copy this link: ${url.length > 120 ? url.slice(0, 117) + '…' : url}`, undefined, 12_000);
    });
  });
}
