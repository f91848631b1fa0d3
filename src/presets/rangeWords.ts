/**
 * The words for a numeric range, used both by the validator's messages (./schema, ./fieldsSchema) and
 * by the panel's hints (src/ui/panel/fields.ts, which reads the bounds from the validator itself via
 * ./pathBounds), so a hint can never promise a value the check refuses.
 */
export interface NumberBounds {
  readonly min: number;
  readonly max: number;
  /** The minimum itself is not allowed (a length must be > 0, not ≥ 0). */
  readonly exclusiveMin?: boolean;
  /** Whole numbers only. */
  readonly integer?: boolean;
}

/** "> 1 and ≤ 50000", "≥ -50000 and ≤ 50000", or "from 1 to 500" for whole numbers. */
export function boundsWords(bounds: NumberBounds): string {
  if (bounds.integer) return `from ${bounds.min} to ${bounds.max}`;
  return `${bounds.exclusiveMin ? '>' : '≥'} ${bounds.min} and ≤ ${bounds.max}`;
}

/** The validator's message: "must be a number > 1 and ≤ 50000 mm", "must be an integer from 1 to 500". */
export function rangeMessage(bounds: NumberBounds, unit: string): string {
  return `must be ${bounds.integer ? 'an integer' : 'a number'} ${boundsWords(bounds)}${unit ? ' ' + unit : ''}`;
}
