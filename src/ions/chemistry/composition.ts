/**
 * Elemental compositions: atom counts keyed by element symbol (`C`) or by an isotope label
 * (`[13C]`, `[2H]`) for atoms fixed to one isotope, e.g. in labelled standards.
 */

import { lookupElement, lookupIsotope } from './elements';
import type { IsotopeData } from './elements';

/** Atom counts (positive integers) by key; keys absent mean zero. */
export type Composition = Readonly<Record<string, number>>;

export interface CompositionKey {
  readonly symbol: string;
  /** Present when the atoms are fixed to this isotope. */
  readonly massNumber?: number;
}

/** The key for atoms fixed to one isotope, e.g. `[13C]`. */
export function isotopeKey(symbol: string, massNumber: number): string {
  return `[${massNumber}${symbol}]`;
}

const LABEL_PATTERN = /^\[(\d+)([A-Z][a-z]?)\]$/;

export function readCompositionKey(key: string): CompositionKey {
  const label = LABEL_PATTERN.exec(key);
  return label ? { symbol: label[2], massNumber: Number(label[1]) } : { symbol: key };
}

/**
 * The isotopes an atom under this key may be, with their abundances: every stable isotope for a
 * plain element, just the one for a label. Undefined when the table has no such element/isotope.
 */
export function isotopesForKey(key: string): readonly IsotopeData[] | undefined {
  const { symbol, massNumber } = readCompositionKey(key);
  if (massNumber === undefined) return lookupElement(symbol)?.isotopes;
  const iso = lookupIsotope(symbol, massNumber);
  return iso ? [{ ...iso, abundance: 1 }] : undefined;
}

/** Sum of `a` and `factor` times `b`; entries that reach zero are dropped. Counts may go negative. */
export function combineCompositions(a: Composition, b: Composition, factor = 1): Record<string, number> {
  const out: Record<string, number> = { ...a };
  for (const [key, count] of Object.entries(b)) {
    const next = (out[key] ?? 0) + factor * count;
    if (next === 0) delete out[key];
    else out[key] = next;
  }
  return out;
}

export function atomCount(composition: Composition): number {
  let n = 0;
  for (const count of Object.values(composition)) n += count;
  return n;
}

/** Count of `symbol` atoms whatever their isotope (plain plus labelled). */
export function elementCount(composition: Composition, symbol: string): number {
  let n = 0;
  for (const [key, count] of Object.entries(composition)) if (readCompositionKey(key).symbol === symbol) n += count;
  return n;
}

/**
 * Hill-order text (C, then H, then the rest alphabetically; without carbon, all alphabetically),
 * labelled atoms right after their element: `C6H10[2H]2O6`. Common practice, no source.
 */
export function formatComposition(composition: Composition): string {
  const keys = Object.keys(composition).filter((k) => composition[k] !== 0);
  const hasCarbon = keys.some((k) => readCompositionKey(k).symbol === 'C');
  const rank = (symbol: string): string => (hasCarbon && symbol === 'C' ? '0' : hasCarbon && symbol === 'H' ? '1' : `2${symbol}`);
  keys.sort((x, y) => {
    const kx = readCompositionKey(x);
    const ky = readCompositionKey(y);
    const bySymbol = rank(kx.symbol).localeCompare(rank(ky.symbol));
    if (bySymbol !== 0) return bySymbol;
    return (kx.massNumber ?? -1) - (ky.massNumber ?? -1);
  });
  return keys.map((k) => (composition[k] === 1 ? k : `${k}${composition[k]}`)).join('');
}
