/**
 * Export and import of a setup as a JSON file. Imports are size-capped before they are read and
 * validated in full before anything is used; a bad file yields issues and changes nothing.
 */
import type { PresetIssue, PresetResult } from '../../presets/issues';
import { MAX_PRESET_CHARS, parsePresetText } from '../../presets/load';
import type { Preset } from '../../presets/schema';

/** Largest file accepted (bytes); UTF-8 text of MAX_PRESET_CHARS characters fits in at most 3× that, but presets are ASCII in practice. */
export const MAX_IMPORT_BYTES = MAX_PRESET_CHARS;

/** The exported text: the validated preset, pretty-printed, so that importing it gives the same object. */
export function presetToJson(preset: Preset): string {
  return JSON.stringify(preset, null, 2) + '\n';
}

/** A file name from the setup name: lower case, dashes, at most 60 characters. */
export function presetFileName(preset: Preset, suffix = ''): string {
  const slug = preset.name
    .normalize('NFKD')
    .replace(/[^\w\s-]/g, '')
    .trim()
    .toLowerCase()
    .replace(/[\s_]+/g, '-')
    .replace(/-+/g, '-')
    .slice(0, 60)
    .replace(/^-|-$/g, '');
  return `${slug || 'setup'}${suffix}.json`;
}

const fail = (message: string): PresetResult<Preset> => ({ ok: false, issues: [{ path: '(file)', message } satisfies PresetIssue] });

/** Reads and validates a chosen file (a File or any Blob). */
export async function readPresetFile(file: Blob): Promise<PresetResult<Preset>> {
  if (file.size > MAX_IMPORT_BYTES) return fail(`is ${file.size.toLocaleString('en')} bytes; the largest accepted is ${MAX_IMPORT_BYTES.toLocaleString('en')} bytes`);
  if (file.size === 0) return fail('is empty');
  let text: string;
  try {
    text = await file.text();
  } catch (err) {
    return fail(`could not be read: ${(err as Error).message}`);
  }
  return parsePresetText(text);
}
