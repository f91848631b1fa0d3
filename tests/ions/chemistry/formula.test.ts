import { describe, it, expect } from 'vitest';
import { parseFormula } from '../../../src/ions/chemistry/formula';
import { formatComposition } from '../../../src/ions/chemistry/composition';
import type { ChemistryResult } from '../../../src/ions/chemistry/result';
import type { Composition } from '../../../src/ions/chemistry/composition';

function counts(text: string): Composition {
  const result = parseFormula(text);
  if (!result.ok) throw new Error(`${text}: ${result.issues.map((i) => i.message).join('; ')}`);
  return result.value;
}

function issue(result: ChemistryResult<Composition>): { path: string; message: string; position?: number } {
  if (result.ok) throw new Error('expected a failure');
  expect(result.issues).toHaveLength(1);
  return result.issues[0];
}

describe('parseFormula: counts', () => {
  // Atom counts below were counted by hand from the structures (textbook chemistry).
  it('reads plain formulas', () => {
    expect(counts('C6H12O6')).toEqual({ C: 6, H: 12, O: 6 });
    expect(counts('NaCl')).toEqual({ Na: 1, Cl: 1 });
    expect(counts('C50H73N15O11')).toEqual({ C: 50, H: 73, N: 15, O: 11 });
  });

  it('adds repeated symbols (condensed structural formulas)', () => {
    // Lauric acid CH3(CH2)10COOH = C12H24O2.
    expect(counts('CH3(CH2)10COOH')).toEqual({ C: 12, H: 24, O: 2 });
    expect(counts('CH3COOH')).toEqual({ C: 2, H: 4, O: 2 });
  });

  it('multiplies groups in (), [] and {}, nested', () => {
    // PEG 10-mer [C2H4O]10H2O = C20H42O11.
    expect(counts('[C2H4O]10H2O')).toEqual({ C: 20, H: 42, O: 11 });
    expect(counts('Ca3(PO4)2')).toEqual({ Ca: 3, P: 2, O: 8 });
    // Potassium ferrocyanide K4[Fe(CN)6].
    expect(counts('K4[Fe(CN)6]')).toEqual({ K: 4, Fe: 1, C: 6, N: 6 });
    expect(counts('{[(CH2)2]3}2')).toEqual({ C: 12, H: 24 });
  });

  it('reads hydrates and dotted adducts with their coefficients', () => {
    expect(counts('CuSO4·5H2O')).toEqual({ Cu: 1, S: 1, O: 9, H: 10 });
    expect(counts('CuSO4.5H2O')).toEqual({ Cu: 1, S: 1, O: 9, H: 10 });
    expect(counts('CuSO4*5H2O')).toEqual({ Cu: 1, S: 1, O: 9, H: 10 });
    expect(counts('2H2O')).toEqual({ H: 4, O: 2 });
    expect(counts('CaCl2·2H2O·NaCl')).toEqual({ Ca: 1, Cl: 3, H: 4, O: 2, Na: 1 });
  });

  it('reads isotope labels: [13C], superscript mass numbers and D', () => {
    expect(counts('[13C]6H12O6')).toEqual({ '[13C]': 6, H: 12, O: 6 });
    expect(counts('C5[13C]H12O6')).toEqual({ C: 5, '[13C]': 1, H: 12, O: 6 });
    expect(counts('¹³CH4')).toEqual({ '[13C]': 1, H: 4 });
    expect(counts('D2O')).toEqual({ '[2H]': 2, O: 1 });
    expect(counts('C2H5[18O]H')).toEqual({ C: 2, H: 6, '[18O]': 1 });
  });

  it('ignores whitespace around the formula', () => {
    expect(counts('  H2O \n')).toEqual({ H: 2, O: 1 });
  });

  it('prints compositions in Hill order (common practice, no source)', () => {
    expect(formatComposition(counts('OH2'))).toBe('H2O');
    expect(formatComposition(counts('HOCH2CH3'))).toBe('C2H6O');
    expect(formatComposition(counts('NaCl'))).toBe('ClNa');
    expect(formatComposition(counts('C6H11DO6'))).toBe('C6H11[2H]O6');
  });
});

describe('parseFormula: errors name the field and the place', () => {
  it('rejects an empty formula', () => {
    expect(issue(parseFormula(''))).toEqual({ path: 'formula', message: 'formula is empty' });
    expect(issue(parseFormula('   ')).message).toBe('formula is empty');
    expect(issue(parseFormula(undefined)).path).toBe('formula');
    expect(issue(parseFormula(42)).message).toMatch(/string/);
  });

  it('names an unknown element symbol and where it stands', () => {
    const i = issue(parseFormula('C6H12Xy6'));
    expect(i.path).toBe('formula');
    expect(i.message).toContain("'Xy'");
    expect(i.position).toBe(5);
  });

  it('tells an element the table lacks from a non-symbol', () => {
    expect(issue(parseFormula('OsO4')).message).toContain("element 'Os' has no isotope data");
    expect(issue(parseFormula('[14C]O2')).message).toContain("'14C' is not a stable isotope");
  });

  it('points at an unclosed bracket', () => {
    const i = issue(parseFormula('C6(H12O6'));
    expect(i.message).toMatch(/never closed/);
    expect(i.position).toBe(2);
  });

  it('points at a stray or mismatched closing bracket', () => {
    const stray = issue(parseFormula('C6H12O6)'));
    expect(stray.position).toBe(7);
    expect(stray.message).toMatch(/no matching opening/);
    const mismatched = issue(parseFormula('(CH2]3'));
    expect(mismatched.position).toBe(4);
    expect(mismatched.message).toMatch(/does not close/);
  });

  it('rejects empty groups, zero counts, lower-case starts, inner whitespace and dangling dots', () => {
    expect(issue(parseFormula('C()2')).message).toMatch(/empty group/);
    expect(issue(parseFormula('C0H4')).message).toMatch(/count of 0/);
    expect(issue(parseFormula('h2o')).message).toMatch(/capital letter/);
    expect(issue(parseFormula('C6 H12')).position).toBe(2);
    expect(issue(parseFormula('CuSO4.')).message).toMatch(/end of the formula/);
    expect(issue(parseFormula('[13C')).message).toMatch(/missing its '\]'/);
  });

  it('rejects absurd atom counts instead of attempting them', () => {
    expect(issue(parseFormula('(C1000)100000')).message).toMatch(/100000000 atoms of C/);
    expect(issue(parseFormula('C1234567890')).message).toMatch(/number too large/);
  });
});
