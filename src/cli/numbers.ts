/**
 * The one grammar of numbers on the command line, for every numeric flag and every number inside a
 * flag's value (scan ranges, tune bounds, --range): an optional sign, decimal digits with an optional
 * fraction, an optional decimal exponent, optionally surrounded by spaces. Hexadecimal, binary and
 * octal forms, "Infinity", "NaN" and empty text are not numbers here (JavaScript's Number() would take
 * "0x10" as 16 and "" as 0).
 */
export const NUMBER_GRAMMAR = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/** Words used in messages for what this grammar accepts. */
export const NUMBER_GRAMMAR_WORDS = 'a decimal number such as 250, -1.5 or 2e4';

/** The number written in `text`, or NaN when `text` is not one by the grammar above (or overflows). */
export function parseCliNumber(text: string | undefined): number {
  if (text === undefined || !NUMBER_GRAMMAR.test(text.trim())) return NaN;
  const value = Number(text);
  return Number.isFinite(value) ? value : NaN;
}

/** A whole number in [min, max] by the same grammar ("1e3" is 1000), or a message saying what is allowed. */
export function parseCliInteger(text: string | undefined, range: { readonly min: number; readonly max: number }): { ok: true; value: number } | { ok: false; message: string } {
  const value = parseCliNumber(text);
  if (!Number.isInteger(value) || value < range.min || value > range.max) {
    return { ok: false, message: `must be an integer from ${range.min} to ${range.max} (got ${text === undefined ? 'nothing' : JSON.stringify(text)})` };
  }
  return { ok: true, value };
}
