/**
 * Traced isotope peaks keep every nominal shift's total and centroid exact.
 *
 * Reference: an independent convolution written here, per nominal shift (M+0, M+1, ...), of each
 * element's isotope distribution raised to its atom count, carrying probability and
 * probability-weighted mass. Abundances and masses are the IUPAC CIAAW representative isotopic
 * compositions (Meija et al., "Isotopic compositions of the elements 2013", Pure Appl. Chem. 88,
 * 293 (2016)) as shipped by the `chemical-elements` npm package (not the project's own table).
 */
import { describe, expect, it } from 'vitest';
import { elementsAndIsotopesObject } from 'chemical-elements';
import { speciesFromFormula } from '../../../src/ions/chemistry';
import { ISOTOPE_MIN_RELATIVE, tracedIsotopePeaks } from '../../../src/presets/speciesChemistry';
import { validatePreset } from '../../../src/presets/load';
import type { PresetInput } from '../../../src/presets/schema';
import { simulate } from '../../../src/simulation/run';

/** Electron mass in u, CODATA 2018. */
const ELECTRON_U = 5.48579909065e-4;

interface ShiftSum {
  p: number;
  pm: number;
}

/** Nominal-shift distribution of an ion with atom counts `atoms` and charge z (cation, electrons removed). */
function convolve(atoms: Record<string, number>, z: number): { shift: number; fraction: number; mz: number }[] {
  let dist: ShiftSum[] = [{ p: 1, pm: 0 }];
  for (const [symbol, count] of Object.entries(atoms)) {
    const element = elementsAndIsotopesObject[symbol];
    if (!element) throw new Error(`reference lacks ${symbol}`);
    const isotopes = element.isotopes.flatMap((i) => (i.abundance ? [{ nominal: i.nominal, mass: i.mass, abundance: i.abundance }] : []));
    const lightest = Math.min(...isotopes.map((i) => i.nominal));
    const one: ShiftSum[] = [];
    for (const i of isotopes) one[i.nominal - lightest] = { p: i.abundance, pm: i.abundance * i.mass };
    for (let k = 0; k < one.length; k++) one[k] ??= { p: 0, pm: 0 };
    for (let n = 0; n < count; n++) {
      const next: ShiftSum[] = Array.from({ length: dist.length + one.length - 1 }, () => ({ p: 0, pm: 0 }));
      for (let a = 0; a < dist.length; a++) {
        for (let b = 0; b < one.length; b++) {
          next[a + b].p += dist[a].p * one[b].p;
          next[a + b].pm += dist[a].pm * one[b].p + dist[a].p * one[b].pm;
        }
      }
      // Shifts beyond 12 are far below anything traced; cutting keeps the loop short.
      dist = next.slice(0, 13);
    }
  }
  return dist.map((d, shift) => ({ shift, fraction: d.p, mz: (d.pm / d.p - z * ELECTRON_U) / z }));
}

const CASES: { name: string; formula: string; atoms: Record<string, number> }[] = [
  // A small ion (a C8 formula), where the old pruning lost 17 % of M+2 and 2 % of M+1.
  { name: 'C8H11N4O2+ (small ion)', formula: 'C8H10N4O2', atoms: { C: 8, H: 11, N: 4, O: 2 } },
  // An invented sulfur-containing peptide-like ion (34S makes M+2 fine structure).
  { name: 'C63H99N18O13S+ (peptide-like, with S)', formula: 'C63H98N18O13S', atoms: { C: 63, H: 99, N: 18, O: 13, S: 1 } },
];

describe('traced isotope peaks against an independent nominal convolution (IUPAC 2013 abundances)', () => {
  for (const c of CASES) {
    it(`${c.name}: every traced shift's total and centroid are exact`, () => {
      const chem = speciesFromFormula({ formula: c.formula, adduct: 'protonated', charge: 1, polarity: 'positive' });
      if (!chem.ok) throw new Error(chem.issues[0].message);
      const traced = tracedIsotopePeaks(chem.value);
      const reference = convolve(c.atoms, 1);
      const largest = Math.max(...traced.map((p) => p.fraction));
      const shifts = [...new Set(traced.map((p) => p.shift))];
      for (const ref of reference) {
        const own = traced.filter((p) => p.shift === ref.shift);
        if (own.length === 0) {
          // A shift may be left out only when its whole total is below the tracing threshold.
          expect(ref.fraction).toBeLessThan(ISOTOPE_MIN_RELATIVE * largest * (1 + 1e-9));
          continue;
        }
        const total = own.reduce((a, p) => a + p.fraction, 0);
        const centroid = own.reduce((a, p) => a + p.fraction * p.mz, 0) / total;
        expect(Math.abs(total - ref.fraction) / ref.fraction).toBeLessThan(1e-9);
        expect(Math.abs(centroid - ref.mz) / ref.mz).toBeLessThan(1e-9);
      }
      expect(shifts).toContain(2);
      // The ratios a practitioner reads: M+1/M and M+2/M (summed over fine structure).
      const at = (s: number): number => traced.filter((p) => p.shift === s).reduce((a, p) => a + p.fraction, 0);
      expect(at(1) / at(0)).toBeCloseTo(reference[1].fraction / reference[0].fraction, 9);
      expect(at(2) / at(0)).toBeCloseTo(reference[2].fraction / reference[0].fraction, 9);
    });
  }

  it('the run report gives the per-shift totals of the traced ions', () => {
    const input = {
      formatVersion: 1,
      name: 'totals',
      polarity: 'positive',
      source: { repeller: { potential_V: 20_000 }, groundGrid: { gap_mm: 10 }, extraction: { mode: 'static' } },
      drift: { length_mm: 1000 },
      mirror: { type: 'none' },
      ions: {
        species: [{ label: 'small ion', formula: 'C8H10N4O2', adduct: 'protonated', charge: 1 }],
        startPosition: { kind: 'surface', position_mm: 5 },
        startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 },
      },
      run: { ions: 2000, seed: 3 },
    } as PresetInput;
    const loaded = validatePreset(input);
    if (!loaded.ok) throw new Error('preset');
    const totals = simulate(loaded.value).report.species[0].isotopeShiftTotals;
    const reference = convolve(CASES[0].atoms, 1);
    expect(totals.map((t) => t.shift)).toEqual([0, 1, 2]);
    for (const t of totals) {
      expect(t.abundance).toBeCloseTo(reference[t.shift].fraction, 12);
      expect(Math.abs(t.mz - reference[t.shift].mz) / t.mz).toBeLessThan(1e-9);
    }
  });
});
