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

/**
 * Ensemble blocks for a species given by formula: its isotopologue peaks, close fine-structure peaks
 * merged, and peaks below ISOTOPE_MIN_RELATIVE of the largest folded into the nearest traced peak of
 * the same nominal shift (abundance-weighted m/z), so that every traced shift carries its exact total
 * (the aggregated nominal group, which the fine-structure pruning does not bias) and its exact
 * centroid. A shift with no traced peak is traced as one peak at its centroid if its total reaches
 * the threshold, else it is left out (its share is then missing from the species' ions).
 */
export function isotopeBlocks(species: Species, label: string, abundance: number, charge: number, parent: number): SpeciesInfo[] {
  return tracedIsotopePeaks(species).map((p) => ({
    label: `${label} M+${p.shift}`,
    mz: p.mz,
    charge,
    abundance: abundance * p.fraction,
    parent,
    isotopeShift: p.shift,
    isotopeFraction: p.fraction,
  }));
}

export interface TracedIsotopePeak {
  readonly mz: number;
  /** Fraction of the species' molecules this traced peak stands for (0..1). */
  readonly fraction: number;
  readonly shift: number;
}

/** The traced peaks of isotopeBlocks (sorted by m/z), with the totals and centroids described there. */
export function tracedIsotopePeaks(species: Species): TracedIsotopePeak[] {
  const merged: { mz: number; fraction: number; shift: number }[] = [];
  for (const p of species.envelope) {
    const last = merged[merged.length - 1];
    if (last && last.shift === p.shift && p.mz - last.mz <= ISOTOPE_MERGE_RELATIVE * p.mz) {
      const f = last.fraction + p.fraction;
      last.mz = (last.mz * last.fraction + p.mz * p.fraction) / f;
      last.fraction = f;
    } else merged.push({ mz: p.mz, fraction: p.fraction, shift: p.shift });
  }
  const largest = Math.max(...merged.map((p) => p.fraction));
  const floor = ISOTOPE_MIN_RELATIVE * largest;
  const out: TracedIsotopePeak[] = [];
  const shifts = [...new Set(merged.map((p) => p.shift))].sort((a, b) => a - b);
  for (const shift of shifts) {
    const own = merged.filter((p) => p.shift === shift);
    const group = species.nominalGroups.find((g) => g.shift === shift);
    const fineTotal = own.reduce((a, p) => a + p.fraction, 0);
    // The aggregated group total is exact; the fine peaks miss what the envelope's threshold pruned.
    const total = group ? group.fraction : fineTotal;
    if (total < floor) continue;
    let kept = own.filter((p) => p.fraction >= floor).map((p) => ({ mz: p.mz * p.fraction, fraction: p.fraction, centre: p.mz }));
    if (kept.length === 0) {
      const centroid = own.reduce((a, p) => a + p.mz * p.fraction, 0) / fineTotal;
      kept = [{ mz: centroid * fineTotal, fraction: fineTotal, centre: centroid }];
    } else {
      for (const p of own) {
        if (p.fraction >= floor) continue;
        let near = kept[0];
        for (const k of kept) if (Math.abs(k.centre - p.mz) < Math.abs(near.centre - p.mz)) near = k;
        near.mz += p.mz * p.fraction;
        near.fraction += p.fraction;
      }
    }
    const scale = total / fineTotal;
    // The compositions the envelope pruned also move the shift's centroid (by ~1e-8 relative for a
    // small ion's M+2): offset the shift's peaks together so their centroid is the group's exact one.
    const fineCentroid = kept.reduce((a, k) => a + k.mz, 0) / fineTotal;
    // (A lone composition, the monoisotopic one included, is exact already and keeps its m/z to the last bit.)
    const offset = group && own.length > 1 ? group.mz - fineCentroid : 0;
    for (const k of kept) out.push({ mz: k.mz / k.fraction + offset, fraction: k.fraction * scale, shift });
  }
  return out.sort((a, b) => a.mz - b.mz);
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
