/**
 * Species given by chemistry in a preset: an elemental formula, an ionising adduct and a charge
 * state become an m/z (monoisotopic, electron mass included) and an isotope envelope. The envelope
 * is expanded into one ensemble block per isotopologue peak that matters at the resolving powers a
 * TOF reaches, so that isotope peaks in the results come from the traced ions.
 */
import { speciesFromFormula, type Species } from '../ions/chemistry';
import type { SpeciesInfo } from '../ions/ensemble';

export interface ChemistryFields {
  readonly formula: string;
  readonly adduct: string;
  readonly charge: number;
  readonly polarity: 'positive' | 'negative';
}

/** Isotopologue peaks below this fraction of the species' largest peak are not traced. */
export const ISOTOPE_MIN_RELATIVE = 0.002;
/** Fine-structure peaks closer than this relative m/z are traced as one (unresolved below R = 5·10^5). */
export const ISOTOPE_MERGE_RELATIVE = 2e-6;

type ChemistryOutcome = { ok: true; value: Species } | { ok: false; issues: { path: string; message: string }[] };

/** Loading a preset and compiling it both need a species' chemistry; scans do both at every point. */
const memo = new Map<string, ChemistryOutcome>();
const MEMO_SIZE = 64;

/** Chemistry of one species, or issues keyed by the species' own field names (memoised; results are read-only). */
export function resolveChemistry(fields: ChemistryFields): ChemistryOutcome {
  const key = `${fields.formula}|${fields.adduct}|${fields.charge}|${fields.polarity}`;
  const known = memo.get(key);
  if (known) return known;
  const result = speciesFromFormula({ formula: fields.formula, adduct: fields.adduct, charge: fields.charge, polarity: fields.polarity });
  // The chemistry module names its fields `formula`, `adduct`, `charge`, `polarity`; keep the first segment.
  const outcome: ChemistryOutcome = result.ok
    ? result
    : { ok: false, issues: result.issues.map((i) => ({ path: i.path.split('.')[0] || 'formula', message: i.message })) };
  if (memo.size >= MEMO_SIZE) memo.delete(memo.keys().next().value as string);
  memo.set(key, outcome);
  return outcome;
}

/** Ensemble blocks for a species given by formula: its isotopologue peaks, merged and thresholded. */
export function isotopeBlocks(species: Species, label: string, abundance: number, charge: number, parent: number): SpeciesInfo[] {
  const peaks = species.envelope;
  const merged: { mz: number; fraction: number; shift: number }[] = [];
  for (const p of peaks) {
    const last = merged[merged.length - 1];
    if (last && p.mz - last.mz <= ISOTOPE_MERGE_RELATIVE * p.mz) {
      const f = last.fraction + p.fraction;
      last.mz = (last.mz * last.fraction + p.mz * p.fraction) / f;
      last.fraction = f;
    } else merged.push({ mz: p.mz, fraction: p.fraction, shift: p.shift });
  }
  const largest = Math.max(...merged.map((p) => p.fraction));
  return merged
    .filter((p) => p.fraction >= ISOTOPE_MIN_RELATIVE * largest)
    .map((p) => ({
      label: `${label} M+${p.shift}`,
      mz: p.mz,
      charge,
      abundance: abundance * p.fraction,
      parent,
      isotopeShift: p.shift,
      isotopeFraction: p.fraction,
    }));
}

interface SpeciesLike {
  readonly mz: number;
  readonly formula?: string;
  readonly adduct?: string;
  readonly charge: number;
}

/**
 * Fill in the m/z of every species given by formula (its monoisotopic m/z); problems come back with
 * the species' JSON path. Returns a new species array; the input is not changed.
 */
export function fillChemistryMz<S extends SpeciesLike>(
  species: readonly S[],
  polarity: 'positive' | 'negative',
): { ok: true; value: S[] } | { ok: false; issues: { path: string; message: string }[] } {
  const issues: { path: string; message: string }[] = [];
  const value = species.map((s, i) => {
    if (s.formula === undefined) return s;
    const chem = resolveChemistry({ formula: s.formula, adduct: s.adduct ?? 'protonated', charge: s.charge, polarity });
    if (!chem.ok) {
      for (const issue of chem.issues) issues.push({ path: `ions.species[${i}].${issue.path === 'polarity' ? 'adduct' : issue.path}`, message: issue.message });
      return s;
    }
    return { ...s, mz: chem.value.monoisotopicMz };
  });
  return issues.length ? { ok: false, issues } : { ok: true, value };
}
