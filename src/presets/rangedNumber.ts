/**
 * A zod number checked against a range, with the validator's one-line message (./rangeWords): the
 * helper the optional preset sections (./ionLoadSchema, ./toleranceSchema) share.
 */
import { z } from 'zod';
import { rangeMessage } from './rangeWords';

export interface NumberRange {
  readonly min: number;
  readonly max: number;
}

/** A number ≥ min (or > min with `exclusiveMin`) and ≤ max; `unit` ends the message ("" for none). */
export function rangedNumber(range: NumberRange, unit: string, exclusiveMin = false) {
  const text = rangeMessage({ min: range.min, max: range.max, exclusiveMin }, unit);
  const base = z.number({ error: text });
  return (exclusiveMin ? base.gt(range.min, { error: text }) : base.gte(range.min, { error: text })).lte(range.max, { error: text });
}
