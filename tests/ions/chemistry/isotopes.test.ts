import { describe, it, expect } from 'vitest';
import { ELECTRON_MASS_U, isotopeEnvelope, monoisotopicMass_u, mzFromAtomsMass } from '../../../src/ions/chemistry/isotopes';
import type { IsotopeEnvelope, IsotopePeak } from '../../../src/ions/chemistry/isotopes';
import { parseFormula } from '../../../src/ions/chemistry/formula';
import { formIon } from '../../../src/ions/chemistry/adducts';
import type { Composition } from '../../../src/ions/chemistry/composition';

// Atomic masses (u), AME 2020: Wang et al., Chinese Physics C 45, 030003 (2021), via the IUPAC
// CIAAW atomic-masses table; typed here independently of the table under test.
const M = {
  H1: 1.007825031898,
  H2: 2.014101777844,
  C12: 12,
  C13: 13.00335483534,
  N14: 14.00307400425,
  N15: 15.00010889827,
  O16: 15.99491461926,
  O17: 16.99913175595,
  O18: 17.99915961214,
  Na23: 22.98976928195,
  S32: 31.97207117354,
  S33: 32.97145890862,
  S34: 33.967867011,
  Cl35: 34.968852694,
  Cl37: 36.965902573,
};
// Representative isotopic abundances, IUPAC (Meija et al., Pure Appl. Chem. 88, 293 (2016)).
const P = {
  H1: 0.999885, H2: 0.000115, C12: 0.9893, C13: 0.0107, N14: 0.99636, N15: 0.00364,
  O16: 0.99757, O17: 0.00038, O18: 0.00205, S32: 0.9499, S33: 0.0075, S34: 0.0425, Cl35: 0.7576, Cl37: 0.2424,
};
// CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)).
const ELECTRON_U = 5.48579909065e-4;
const PROTON_U = 1.007276466621;

function formula(text: string): Composition {
  const r = parseFormula(text);
  if (!r.ok) throw new Error(r.issues[0].message);
  return r.value;
}

function ionMz(text: string, adduct: string, charge?: number): number {
  const r = formIon({ composition: formula(text), adduct, charge });
  if (!r.ok) throw new Error(r.issues[0].message);
  return mzFromAtomsMass(monoisotopicMass_u(r.value.composition), r.value.charge);
}

function binomial(n: number, k: number): number {
  let c = 1;
  for (let i = 1; i <= k; i++) c = (c * (n - k + i)) / i;
  return c;
}

/** The fine peak nearest `mz`, which must lie within `tolerance`. */
function peakAt(envelope: IsotopeEnvelope, mz: number, tolerance = 1e-9): IsotopePeak {
  let best = envelope.peaks[0];
  for (const p of envelope.peaks) if (Math.abs(p.mz - mz) < Math.abs(best.mz - mz)) best = p;
  expect(Math.abs(best.mz - mz)).toBeLessThan(tolerance);
  return best;
}

describe('monoisotopic m/z, hand-computed from AME 2020 and CODATA 2018', () => {
  it('uses the CODATA 2018 electron mass', () => {
    expect(ELECTRON_MASS_U).toBe(ELECTRON_U);
  });

  it('H+ equals the proton mass up to the 13.6 eV binding energy of hydrogen', () => {
    // m(1H) − m_e = m_p − 13.598 eV/c² = m_p − 1.46e-8 u (CODATA 2018; NIST ASD ionisation energy).
    const mz = mzFromAtomsMass(monoisotopicMass_u({ H: 1 }), 1);
    expect(Math.abs(mz - (PROTON_U - 13.598434 / 931.49410242e6))).toBeLessThan(1e-10);
    expect(Math.abs(mz - PROTON_U)).toBeLessThan(2e-8);
  });

  it('[H2O+H]+, Na+ and [C6H12O6+Na]+', () => {
    expect(ionMz('H2O', 'protonated')).toBeCloseTo(3 * M.H1 + M.O16 - ELECTRON_U, 9);
    expect(mzFromAtomsMass(monoisotopicMass_u({ Na: 1 }), 1)).toBeCloseTo(M.Na23 - ELECTRON_U, 9);
    expect(ionMz('C6H12O6', 'sodiated')).toBeCloseTo(6 * M.C12 + 12 * M.H1 + 6 * M.O16 + M.Na23 - ELECTRON_U, 9);
  });

  it('caffeine [C8H10N4O2+H]+ = 195.08765 (from memory, common practice)', () => {
    const mz = ionMz('C8H10N4O2', '[M+H]+');
    expect(mz).toBeCloseTo(8 * M.C12 + 11 * M.H1 + 4 * M.N14 + 2 * M.O16 - ELECTRON_U, 9);
    expect(Math.abs(mz - 195.08765)).toBeLessThan(5e-6);
  });

  it('the nonapeptide formula C50H73N15O11 [M+H]+ and [M+2H]2+', () => {
    const neutral = 50 * M.C12 + 73 * M.H1 + 15 * M.N14 + 11 * M.O16;
    const mz = ionMz('C50H73N15O11', 'protonated');
    expect(mz).toBeCloseTo(neutral + M.H1 - ELECTRON_U, 8);
    // 1060.5690 (from memory) lies 3e-4 above: about the 5.5e-4 u electron mass, which tables that
    // add a hydrogen atom instead of a proton leave in. Agreement to 1e-3 is all that value supports.
    expect(Math.abs(mz - 1060.569)).toBeLessThan(1e-3);
    expect(ionMz('C50H73N15O11', 'protonated', 2)).toBeCloseTo((neutral + 2 * M.H1 - 2 * ELECTRON_U) / 2, 8);
  });

  it('radical cation of benzene and anions gaining electrons', () => {
    expect(ionMz('C6H6', 'radicalCation')).toBeCloseTo(6 * M.C12 + 6 * M.H1 - ELECTRON_U, 9);
    expect(ionMz('C6H6', 'radicalAnion')).toBeCloseTo(6 * M.C12 + 6 * M.H1 + ELECTRON_U, 9);
    expect(ionMz('C6H12O6', 'deprotonated')).toBeCloseTo(6 * M.C12 + 11 * M.H1 + 6 * M.O16 + ELECTRON_U, 9);
    expect(ionMz('C6H12O6', 'chloride')).toBeCloseTo(6 * M.C12 + 12 * M.H1 + 6 * M.O16 + M.Cl35 + ELECTRON_U, 9);
    expect(ionMz('C6H12O6', 'deprotonated', -2)).toBeCloseTo((6 * M.C12 + 10 * M.H1 + 6 * M.O16 + 2 * ELECTRON_U) / 2, 9);
  });

  it('isotope-labelled atoms count at their own mass', () => {
    const shift = 6 * (M.C13 - M.C12);
    expect(monoisotopicMass_u(formula('[13C]6H12O6')) - monoisotopicMass_u(formula('C6H12O6'))).toBeCloseTo(shift, 9);
    expect(monoisotopicMass_u(formula('D2O'))).toBeCloseTo(2 * M.H2 + M.O16, 9);
  });
});

describe('isotope envelope against the binomial/multinomial formula with IUPAC abundances', () => {
  it('C100: M+1/M = 100·p13/p12 and M+2/M = C(100,2)·(p13/p12)² (binomial distribution)', () => {
    const e = isotopeEnvelope({ C: 100 }, 0);
    const r = P.C13 / P.C12;
    expect(e.groups[0].fraction).toBeCloseTo(P.C12 ** 100, 12);
    expect(e.groups[1].fraction / e.groups[0].fraction).toBeCloseTo(100 * r, 10);
    expect(e.groups[2].fraction / e.groups[0].fraction).toBeCloseTo(binomial(100, 2) * r * r, 10);
    expect(e.groups[1].mz - e.groups[0].mz).toBeCloseTo(M.C13 - M.C12, 9);
    // M+1 is the largest group for C100 since 100·0.0107/0.9893 = 1.08 > 1.
    expect(e.groups[1].abundance).toBe(1);
  });

  it('Cl2: the 35Cl/37Cl pattern p35² : 2·p35·p37 : p37² (about 9 : 6 : 1)', () => {
    const e = isotopeEnvelope({ Cl: 2 }, 0);
    expect(e.peaks).toHaveLength(3);
    expect(e.peaks.map((p) => p.mz)).toEqual([2 * M.Cl35, M.Cl35 + M.Cl37, 2 * M.Cl37].map((m) => expect.closeTo(m, 9)));
    expect(e.peaks.map((p) => p.fraction)).toEqual([P.Cl35 ** 2, 2 * P.Cl35 * P.Cl37, P.Cl37 ** 2].map((f) => expect.closeTo(f, 12)));
    const r = P.Cl37 / P.Cl35;
    expect(e.peaks.map((p) => p.abundance)).toEqual([1, 2 * r, r * r].map((a) => expect.closeTo(a, 12)));
    expect(e.coverage).toBeCloseTo(1, 12);
  });

  it('resolves the M+1 and M+2 fine structure of biotin C10H16N2O3S ([M+H]+)', () => {
    const e = isotopeEnvelope(formula('C10H17N2O3S'), 1);
    const mono = peakAt(e, 10 * M.C12 + 17 * M.H1 + 2 * M.N14 + 3 * M.O16 + M.S32 - ELECTRON_U);
    expect(mono.abundance).toBe(1);
    // Each single substitution: mass shifts by the isotope difference, probability by n·p_heavy/p_light.
    const singles: [number, number][] = [
      [M.C13 - M.C12, (10 * P.C13) / P.C12],
      [M.N15 - M.N14, (2 * P.N15) / P.N14],
      [M.H2 - M.H1, (17 * P.H2) / P.H1],
      [M.O17 - M.O16, (3 * P.O17) / P.O16],
      [M.S33 - M.S32, P.S33 / P.S32],
      [M.O18 - M.O16, (3 * P.O18) / P.O16],
      [M.S34 - M.S32, P.S34 / P.S32],
      [2 * (M.C13 - M.C12), (binomial(10, 2) * (P.C13 / P.C12) ** 2)],
    ];
    const found = singles.map(([dm, ratio]) => {
      const p = peakAt(e, mono.mz + dm);
      expect(p.fraction / mono.fraction).toBeCloseTo(ratio, 10);
      return p.mz;
    });
    // All distinct peaks; 13C vs 15N are 6.3 mDa apart, resolved at m/z 245 from RP ≈ 4e4 up.
    expect(new Set(found).size).toBe(singles.length);
    expect(found[0] - found[1]).toBeCloseTo(M.C13 - M.C12 - (M.N15 - M.N14), 9);
  });
});

describe('isotope envelope: normalisation and pruning', () => {
  const peptide = formula('C150H230N40O45S2');
  const e = isotopeEnvelope(peptide, 2);

  it('sorts peaks by m/z with the largest at abundance 1', () => {
    for (let i = 1; i < e.peaks.length; i++) expect(e.peaks[i].mz).toBeGreaterThan(e.peaks[i - 1].mz);
    expect(Math.max(...e.peaks.map((p) => p.abundance))).toBe(1);
    expect(Math.max(...e.groups.map((g) => g.abundance))).toBe(1);
  });

  it('keeps fine fractions that sum to the coverage, near 1 at the 1e-6 threshold; groups sum to 1', () => {
    const fine = e.peaks.reduce((s, p) => s + p.fraction, 0);
    const nominal = e.groups.reduce((s, g) => s + g.fraction, 0);
    expect(fine).toBeCloseTo(e.coverage, 12);
    expect(e.coverage).toBeLessThanOrEqual(1);
    expect(e.coverage).toBeGreaterThan(1 - 1e-3);
    expect(e.complete).toBe(true);
    // Groups come from the exact aggregated distribution; only groups under 1e-6 of the largest are left out.
    expect(Math.abs(nominal - 1)).toBeLessThan(1e-5);
  });

  it('gives each nominal group the summed fraction and weighted mean m/z of its fine peaks', () => {
    // Two methods inside the module: the aggregated distribution against the fine structure
    // summed at a threshold low enough that the pruned tail is negligible.
    const full = isotopeEnvelope(peptide, 2, { relativeThreshold: 1e-13 });
    expect(full.coverage).toBeGreaterThan(1 - 1e-9);
    for (const g of e.groups) {
      const members = full.peaks.filter((p) => p.shift === g.shift);
      const f = members.reduce((s, p) => s + p.fraction, 0);
      const mz = members.reduce((s, p) => s + p.fraction * p.mz, 0) / f;
      expect(Math.abs(f - g.fraction)).toBeLessThan(1e-9);
      expect(Math.abs(mz - g.mz)).toBeLessThan(1e-7);
    }
  });

  it('prunes exactly: what a coarse threshold keeps is what a fine one finds above it', () => {
    // No merging, so each peak is one isotopic composition.
    const coarse = isotopeEnvelope(peptide, 2, { relativeThreshold: 1e-3, mergeTolerance_mz: 0 });
    const fine = isotopeEnvelope(peptide, 2, { relativeThreshold: 1e-9, mergeTolerance_mz: 0 });
    const maxFraction = Math.max(...fine.peaks.map((p) => p.fraction));
    const above = fine.peaks.filter((p) => p.fraction >= 1e-3 * maxFraction);
    expect(coarse.peaks.map((p) => p.mz)).toEqual(above.map((p) => expect.closeTo(p.mz, 9)));
    expect(coarse.peaks.map((p) => p.fraction)).toEqual(above.map((p) => expect.closeTo(p.fraction, 14)));
    for (const p of coarse.peaks) expect(p.fraction).toBeGreaterThanOrEqual(1e-3 * maxFraction * (1 - 1e-12));
  });

  it('merges peaks closer than the tolerance into their weighted centroid, conserving abundance', () => {
    const merged = isotopeEnvelope(peptide, 2, { mergeTolerance_mz: 0.05 });
    expect(merged.peaks.length).toBeLessThan(e.peaks.length);
    expect(merged.peaks.reduce((s, p) => s + p.fraction, 0)).toBeCloseTo(e.coverage, 12);
    for (let i = 1; i < merged.peaks.length; i++) expect(merged.peaks[i].mz - merged.peaks[i - 1].mz).toBeGreaterThan(0.05);
  });

  it('flags an envelope cut short by maxCompositions, with its coverage saying how much is missing', () => {
    const capped = isotopeEnvelope(peptide, 2, { maxCompositions: 50 });
    expect(capped.complete).toBe(false);
    expect(capped.peaks.length).toBeLessThanOrEqual(50);
    expect(capped.coverage).toBeLessThan(e.coverage);
    expect(capped.coverage).toBeGreaterThan(0.5);
  });

  it('keeps nominal groups exact when the fine list is capped, also within one many-isotope element', () => {
    const hg = formula('Hg6Sn4');
    const full = isotopeEnvelope(hg, 1);
    const capped = isotopeEnvelope(hg, 1, { maxCompositions: 20 });
    expect(full.complete).toBe(true);
    expect(capped.complete).toBe(false);
    expect(capped.peaks.length).toBeLessThanOrEqual(20);
    expect(capped.groups).toEqual(full.groups);
  });
});
