/** Appending to a preset's method record (see ./methodRecordSchema). Pure: returns a new preset. */
import type { Preset } from './schema';
import type { MethodRecordEntry } from './methodRecordSchema';
import { TOOL_VERSION } from '../version';

/** Most entries kept; the oldest are dropped beyond it. */
export const MAX_METHOD_RECORDS = 200;

export function withMethodRecord(preset: Preset, entry: Omit<MethodRecordEntry, 'toolVersion' | 'date'> & { date?: string }): Preset {
  const full: MethodRecordEntry = { ...entry, date: entry.date ?? new Date().toISOString(), toolVersion: TOOL_VERSION };
  const records = [...(preset.method?.records ?? []), full].slice(-MAX_METHOD_RECORDS);
  return { ...preset, method: { records } };
}
