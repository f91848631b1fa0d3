/**
 * Outcome of a chemistry request built from user input: a value, or the problems that prevent one.
 * User input never throws; each problem names the field it concerns.
 */

export interface ChemistryIssue {
  /** The input field at fault, e.g. `formula`, `adduct`, `charge`, `polarity`. */
  readonly path: string;
  readonly message: string;
  /** For syntax problems in a formula: the 0-based character index where reading stopped. */
  readonly position?: number;
}

export type ChemistryResult<T> =
  | { readonly ok: true; readonly value: T }
  | { readonly ok: false; readonly issues: readonly ChemistryIssue[] };

export function success<T>(value: T): ChemistryResult<T> {
  return { ok: true, value };
}

export function failure<T>(path: string, message: string, position?: number): ChemistryResult<T> {
  const issue: ChemistryIssue = position === undefined ? { path, message } : { path, message, position };
  return { ok: false, issues: [issue] };
}
