/**
 * The method record of a preset: how its settings were found. Every applied scan or tune appends
 * one entry (what was varied over which range, the objective and the figure it read, the result,
 * the date, ion count, seed and tool version), so an exported method says how it came about.
 */
import { z } from 'zod';

const finite = z.number().refine(Number.isFinite, { message: 'must be a finite number' });

export const methodRecordEntrySchema = z.strictObject({
  kind: z.enum(['scan', 'tune']),
  /** ISO 8601 date and time the result was applied. */
  date: z.string().min(1).max(40),
  toolVersion: z.string().min(1).max(40),
  ions: z.number().int().min(1).max(100_000_000),
  seed: z.number().int().min(0).max(2 ** 32 - 1),
  /** The objective in words, e.g. "max-r-at-mz, R at m/z 1336.7008". */
  objective: z.string().min(1).max(300),
  criterion: z.enum(['spectrum', 'ideal']),
  /** Each varied parameter: its range, the value before and the value applied. */
  parameters: z
    .array(z.strictObject({ path: z.string().min(1).max(200), min: finite, max: finite, before: finite, applied: finite }))
    .min(1)
    .max(8),
  /** The objective's value at the applied setting (null when it could not be scored). */
  result: finite.nullable(),
  note: z.string().max(1000).optional(),
});

export const methodRecordSchema = z.strictObject({
  records: z.array(methodRecordEntrySchema).max(200),
});

export type MethodRecordEntry = z.output<typeof methodRecordEntrySchema>;
