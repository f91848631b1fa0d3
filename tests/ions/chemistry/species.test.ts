import { describe, it, expect } from 'vitest';
import { speciesFromFormula } from '../../../src/ions/chemistry/index';
import type { Species } from '../../../src/ions/chemistry/index';

// CODATA 2018 electron mass; AME 2020 atomic masses (Wang et al., Chinese Physics C 45, 030003 (2021)).
const ELECTRON_U = 5.48579909065e-4;
const H1 = 1.007825031898;
const C12 = 12;
const N14 = 14.00307400425;
const O16 = 15.99491461926;
const S32 = 31.97207117354;

function species(request: Parameters<typeof speciesFromFormula>[0]): Species {
  const r = speciesFromFormula(request);
  if (!r.ok) throw new Error(r.issues.map((i) => `${i.path}: ${i.message}`).join('; '));
  return r.value;
}

describe('speciesFromFormula', () => {
  it('gives caffeine [M+H]+: composition, charge, monoisotopic m/z and its envelope', () => {
    const s = species({ formula: 'C8H10N4O2', adduct: 'protonated' });
    expect(s.composition).toEqual({ C: 8, H: 11, N: 4, O: 2 });
    expect(s).toMatchObject({ moleculeFormula: 'C8H10N4O2', ionFormula: 'C8H11N4O2', notation: '[M+H]+', charge: 1, polarity: 'positive', complete: true });
    // Hand value; 195.08765 is the commonly quoted figure (from memory, common practice).
    expect(s.monoisotopicMz).toBeCloseTo(8 * C12 + 11 * H1 + 4 * N14 + 2 * O16 - ELECTRON_U, 9);
    expect(s.moleculeMonoisotopicMass_u).toBeCloseTo(8 * C12 + 10 * H1 + 4 * N14 + 2 * O16, 9);
    expect(s.envelope[0].mz).toBeCloseTo(s.monoisotopicMz, 9);
    expect(s.envelope[0].abundance).toBe(1);
    expect(s.nominalGroups[0]).toMatchObject({ shift: 0, abundance: 1 });
    expect(s.nominalGroups[1].shift).toBe(1);
  });

  it('gives a doubly charged peptide with groups half a unit apart', () => {
    // Bradykinin C50H73N15O11, [M+2H]2+.
    const s = species({ formula: 'C50H73N15O11', adduct: '[M+2H]2+' });
    expect(s.charge).toBe(2);
    expect(s.monoisotopicMz).toBeCloseTo((50 * C12 + 75 * H1 + 15 * N14 + 11 * O16 - 2 * ELECTRON_U) / 2, 8);
    expect(s.nominalGroups[1].mz - s.nominalGroups[0].mz).toBeCloseTo(0.5, 2);
  });

  it('handles a 3 kDa peptide and a deprotonated ion', () => {
    const s = species({ formula: 'C150H230N40O45S2', adduct: 'deprotonated', charge: 3, polarity: 'negative' });
    expect(s.charge).toBe(-3);
    expect(s.monoisotopicMz).toBeCloseTo((150 * C12 + 227 * H1 + 40 * N14 + 45 * O16 + 2 * S32 + 3 * ELECTRON_U) / 3, 8);
    expect(s.coverage).toBeGreaterThan(0.999);
    // M+1 and M+2 outweigh M+0 for ~3.4 kDa of mostly carbon (binomial with n·p13 ≈ 1.6).
    expect(s.nominalGroups[0].abundance).toBeLessThan(1);
  });

  it('reports every bad field together, each with its path', () => {
    const r = speciesFromFormula({ formula: 'C6H12Q6', adduct: 'deprotonated', charge: 0, polarity: 'positive', envelope: { relativeThreshold: 2 } });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.issues.map((i) => i.path).sort()).toEqual(['charge', 'envelope.relativeThreshold', 'formula']);
    expect(r.issues.find((i) => i.path === 'formula')?.message).toContain("'Q'");
  });

  it('rejects an impossible adduct/polarity combination and hydrogen over-removal', () => {
    const polarity = speciesFromFormula({ formula: 'C6H12O6', adduct: 'deprotonated', polarity: 'positive' });
    expect(polarity.ok ? [] : polarity.issues.map((i) => i.path)).toEqual(['polarity']);
    const removal = speciesFromFormula({ formula: 'CO2', adduct: '[M-H]-' });
    expect(removal.ok ? [] : removal.issues).toEqual([{ path: 'adduct', message: '[M-H]- removes 1 H but the molecule has 0' }]);
  });

  it('rejects an empty formula and a missing adduct', () => {
    const r = speciesFromFormula({ formula: '', adduct: undefined });
    expect(r.ok ? [] : r.issues.map((i) => `${i.path}: ${i.message}`)).toEqual(['formula: formula is empty', 'adduct: adduct is required']);
  });
});
