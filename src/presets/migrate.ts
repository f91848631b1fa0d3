/**
 * Preset migrations: each entry upgrades a document from version N to N + 1. Files are never
 * rewritten in place; a migrated preset is a new object that the caller may save under a new name.
 */
import { CURRENT_FORMAT_VERSION } from './schema';
import type { PresetIssue, PresetResult } from './issues';

export type Migration = (doc: Record<string, unknown>) => Record<string, unknown>;

/** Upgrades keyed by the version they start from. Version 1 is the first published format. */
export const MIGRATIONS: Readonly<Record<number, Migration>> = {};

export function migratePreset(
  doc: unknown,
  migrations: Readonly<Record<number, Migration>> = MIGRATIONS,
  target = CURRENT_FORMAT_VERSION,
): PresetResult<Record<string, unknown>> {
  const fail = (message: string, path = 'formatVersion'): PresetResult<Record<string, unknown>> => ({
    ok: false,
    issues: [{ path, message } satisfies PresetIssue],
  });
  if (typeof doc !== 'object' || doc === null || Array.isArray(doc)) return fail('a preset must be a JSON object', '(top level)');
  const version = (doc as Record<string, unknown>).formatVersion;
  if (version === undefined) return fail(`is missing (this program reads version ${target})`);
  if (typeof version !== 'number' || !Number.isInteger(version) || version < 1) {
    return fail(`must be an integer from 1 to ${target}`);
  }
  if (version > target) return fail(`is ${version}, newer than this program understands (up to ${target}); update the program`);
  let current = { ...(doc as Record<string, unknown>) };
  for (let v = version; v < target; v++) {
    const step = migrations[v];
    if (!step) return fail(`no migration from version ${v} to ${v + 1}`);
    current = { ...step(current), formatVersion: v + 1 };
  }
  return { ok: true, value: current };
}
