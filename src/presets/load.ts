/**
 * Loading a preset: text → JSON → migration → schema validation → cross-field checks.
 * Nothing here throws for bad input; every problem comes back with its JSON path and reason.
 */
import type { z } from 'zod';
import { checkPreset } from './compile';
import { jsonPath, type PresetIssue, type PresetResult } from './issues';
import { migratePreset } from './migrate';
import { presetSchema, type Preset } from './schema';
import { fillChemistryMz } from './speciesChemistry';
import { stripByteOrderMark } from './textInput';

/** Allowed values of the discriminating keys, for messages. */
const DISCRIMINATOR_VALUES: Record<string, string> = {
  mode: '"static", "delayed"',
  type: '"none", "single", "dual", "profile", "solved"',
  shape: '"step", "linear", "exponential", "table"',
  kind: 'see presets/preset.schema.json for the kinds allowed here',
};

/** Largest preset file accepted (bytes of text). */
export const MAX_PRESET_CHARS = 1_000_000;

export function parsePresetText(text: string): PresetResult<Preset> {
  if (text.length > MAX_PRESET_CHARS) {
    return { ok: false, issues: [{ path: '(file)', message: `is larger than ${MAX_PRESET_CHARS} characters` }] };
  }
  let doc: unknown;
  try {
    doc = JSON.parse(stripByteOrderMark(text));
  } catch (err) {
    return { ok: false, issues: [{ path: '(file)', message: `is not valid JSON: ${(err as Error).message}` }] };
  }
  return validatePreset(doc);
}

export function validatePreset(doc: unknown): PresetResult<Preset> {
  const migrated = migratePreset(doc);
  if (!migrated.ok) return migrated;
  const parsed = presetSchema.safeParse(migrated.value);
  if (!parsed.success) return { ok: false, issues: zodIssues(parsed.error, migrated.value) };
  const chemistry = fillChemistryMz(parsed.data.ions.species, parsed.data.polarity);
  if (!chemistry.ok) return chemistry;
  const preset: Preset = { ...parsed.data, ions: { ...parsed.data.ions, species: chemistry.value } };
  const issues = checkPreset(preset);
  return issues.length ? { ok: false, issues } : { ok: true, value: preset };
}

function zodIssues(error: z.ZodError, doc: unknown): PresetIssue[] {
  return error.issues.map((issue) => {
    const path = jsonPath(issue.path);
    if (issue.code !== 'unrecognized_keys' && issue.code !== 'custom' && valueAt(doc, issue.path) === undefined) return { path, message: 'is required' };
    if (issue.code === 'unrecognized_keys') {
      return { path, message: `unknown key${issue.keys.length > 1 ? 's' : ''} ${issue.keys.map((k) => `"${k}"`).join(', ')}` };
    }
    if (issue.code === 'invalid_union' && 'note' in issue && issue.note === 'No matching discriminator') {
      return { path, message: `is not one of the allowed values (${DISCRIMINATOR_VALUES[String(issue.path.at(-1))] ?? 'see presets/preset.schema.json'})` };
    }
    return { path, message: issue.message };
  });
}

function valueAt(doc: unknown, path: readonly PropertyKey[]): unknown {
  let node = doc;
  for (const key of path) {
    if (typeof node !== 'object' || node === null || !Object.hasOwn(node, key)) return undefined;
    node = (node as Record<PropertyKey, unknown>)[key];
  }
  return node;
}
