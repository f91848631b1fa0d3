/**
 * Reads an elemental formula into atom counts.
 *
 * Accepted: element symbols with counts (`C6H12O6`), groups in (), [] or {} with a multiplier
 * (`CH3(CH2)10COOH`, `[C2H4O]10H2O`), dotted parts with a leading coefficient for hydrates and
 * adducts (`CuSO4·5H2O`, `CuSO4.5H2O`, `CuSO4*5H2O`), and isotope labels: `[13C]`, `¹³C`, and
 * `D` for 2H. Whitespace around the formula is ignored; whitespace inside it is an error.
 */

import { combineCompositions, isotopeKey } from './composition';
import type { Composition } from './composition';
import { isElementSymbol, lookupElement, lookupIsotope } from './elements';
import { failure, success } from './result';
import type { ChemistryResult } from './result';

const CLOSER: Readonly<Record<string, string>> = { '(': ')', '[': ']', '{': '}' };
const CLOSERS = new Set([')', ']', '}']);
const DOTS = new Set(['.', '·', '⋅', '*']);
const SUPERSCRIPT_DIGITS = '⁰¹²³⁴⁵⁶⁷⁸⁹';
// Nine digits keep every count an exact integer well inside double precision.
const MAX_COUNT_DIGITS = 9;
// Beyond a virus capsid's worth of one element, envelopes stop being meaningful to compute.
const MAX_ATOMS_PER_ELEMENT = 10_000_000;

class FormulaSyntaxError {
  constructor(
    readonly message: string,
    readonly position: number,
  ) {}
}

function isDigit(c: string | undefined): boolean {
  return c !== undefined && c >= '0' && c <= '9';
}

function isUpper(c: string | undefined): boolean {
  return c !== undefined && c >= 'A' && c <= 'Z';
}

function isLower(c: string | undefined): boolean {
  return c !== undefined && c >= 'a' && c <= 'z';
}

function describe(c: string): string {
  return /\s/.test(c) ? 'whitespace' : `'${c}'`;
}

class FormulaReader {
  private pos: number;

  constructor(
    private readonly text: string,
    start: number,
    private readonly end: number,
  ) {
    this.pos = start;
  }

  private fail(message: string, position = this.pos): never {
    throw new FormulaSyntaxError(`${message}, at character ${position + 1}`, position);
  }

  private peek(offset = 0): string | undefined {
    const i = this.pos + offset;
    return i < this.end ? this.text[i] : undefined;
  }

  readWhole(): Record<string, number> {
    let total: Record<string, number> = {};
    for (;;) {
      const partStart = this.pos;
      const coefficient = this.readInteger() ?? 1;
      if (coefficient === 0) this.fail('a coefficient of 0 is not allowed', partStart);
      const part = this.readSequence(undefined);
      if (Object.keys(part).length === 0) {
        this.fail(this.pos < this.end ? `expected an element symbol, found ${describe(this.text[this.pos])}` : 'expected an element symbol, found the end of the formula');
      }
      total = combineCompositions(total, part, coefficient);
      if (this.pos >= this.end) return total;
      // readSequence stops at the end, at a dot or at a stray closer; only the dot continues.
      if (DOTS.has(this.text[this.pos])) this.pos++;
      else this.fail(`unexpected ${describe(this.text[this.pos])} with no matching opening bracket`);
    }
  }

  /** Units up to the matching `closer` (consumed) or, at top level, up to the end or a dot. */
  private readSequence(closer: string | undefined, openedAt = -1): Record<string, number> {
    let counts: Record<string, number> = {};
    for (;;) {
      const c = this.peek();
      if (c === undefined) {
        if (closer !== undefined) this.fail(`'${this.text[openedAt]}' is never closed (expected '${closer}')`, openedAt);
        return counts;
      }
      if (CLOSERS.has(c)) {
        if (closer === undefined) return counts;
        if (c !== closer) this.fail(`'${c}' does not close the '${this.text[openedAt]}' opened at character ${openedAt + 1}`);
        this.pos++;
        return counts;
      }
      if (DOTS.has(c)) {
        if (closer !== undefined) this.fail(`'${c}' separator inside brackets`);
        return counts;
      }
      if (c in CLOSER && !(c === '[' && isDigit(this.peek(1)))) {
        const openPos = this.pos;
        this.pos++;
        const inner = this.readSequence(CLOSER[c], openPos);
        if (Object.keys(inner).length === 0) this.fail('empty group', openPos);
        counts = combineCompositions(counts, inner, this.readCount());
        continue;
      }
      const key = this.readAtom();
      counts = combineCompositions(counts, { [key]: this.readCount() });
    }
  }

  private readAtom(): string {
    const start = this.pos;
    const c = this.text[this.pos];
    let massNumber: number | undefined;
    if (c === '[') {
      this.pos++;
      massNumber = this.readInteger();
    } else if (SUPERSCRIPT_DIGITS.includes(c)) {
      let digits = '';
      while (this.peek() !== undefined && SUPERSCRIPT_DIGITS.includes(this.peek() as string)) {
        digits += String(SUPERSCRIPT_DIGITS.indexOf(this.peek() as string));
        this.pos++;
      }
      massNumber = Number(digits);
    }
    const symbol = this.readSymbol();
    if (c === '[') {
      if (this.peek() !== ']') this.fail(`isotope label '${this.text.slice(start, this.pos)}' is missing its ']'`, start);
      this.pos++;
    }
    if (massNumber === undefined) {
      if (symbol === 'D') return isotopeKey('H', 2);
      if (!lookupElement(symbol)) {
        this.fail(isElementSymbol(symbol) ? `element '${symbol}' has no isotope data in this table` : `unknown element symbol '${symbol}'`, start);
      }
      return symbol;
    }
    if (!lookupElement(symbol)) {
      this.fail(isElementSymbol(symbol) ? `element '${symbol}' has no isotope data in this table` : `unknown element symbol '${symbol}'`, start);
    }
    if (!lookupIsotope(symbol, massNumber)) this.fail(`'${massNumber}${symbol}' is not a stable isotope in this table`, start);
    return isotopeKey(symbol, massNumber);
  }

  private readSymbol(): string {
    const c = this.peek();
    if (!isUpper(c)) {
      if (c === undefined) this.fail('expected an element symbol, found the end of the formula');
      if (isLower(c)) this.fail(`unexpected '${c}': element symbols start with a capital letter`);
      this.fail(`unexpected ${describe(c as string)}`);
    }
    let symbol = c as string;
    this.pos++;
    if (isLower(this.peek())) {
      symbol += this.peek();
      this.pos++;
    }
    return symbol;
  }

  private readInteger(): number | undefined {
    const start = this.pos;
    while (isDigit(this.peek())) this.pos++;
    if (this.pos === start) return undefined;
    if (this.pos - start > MAX_COUNT_DIGITS) this.fail('number too large', start);
    return Number(this.text.slice(start, this.pos));
  }

  private readCount(): number {
    const start = this.pos;
    const n = this.readInteger();
    if (n === 0) this.fail('a count of 0 is not allowed (leave the element out)', start);
    return n ?? 1;
  }
}

/**
 * Atom counts of `text`, or an issue under `path` naming the unknown symbol or the position of a
 * syntax error. Never throws.
 */
export function parseFormula(text: unknown, path = 'formula'): ChemistryResult<Composition> {
  if (typeof text !== 'string') return failure(path, 'formula must be a string');
  let start = 0;
  let end = text.length;
  while (start < end && /\s/.test(text[start])) start++;
  while (end > start && /\s/.test(text[end - 1])) end--;
  if (start === end) return failure(path, 'formula is empty');
  try {
    const counts = new FormulaReader(text, start, end).readWhole();
    for (const [key, n] of Object.entries(counts)) {
      if (n > MAX_ATOMS_PER_ELEMENT) return failure(path, `${n} atoms of ${key}; at most ${MAX_ATOMS_PER_ELEMENT} of one element are accepted`);
    }
    return success(Object.freeze(counts));
  } catch (error) {
    if (error instanceof FormulaSyntaxError) return failure(path, error.message, error.position);
    throw error;
  }
}
