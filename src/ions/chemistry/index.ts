/**
 * Ion species from chemistry: formula + adduct + charge + polarity → the ion's composition,
 * monoisotopic m/z and isotope envelope. Pure: depends on nothing else in the engine.
 */

import { applyIonSpec, resolveIonSpec } from './adducts';
import type { AdductName, Polarity } from './adducts';
import { formatComposition } from './composition';
import type { Composition } from './composition';
import { parseFormula } from './formula';
import { isotopeEnvelope, monoisotopicMass_u } from './isotopes';
import type { EnvelopeOptions, IsotopePeak, NominalGroup } from './isotopes';
import type { ChemistryIssue, ChemistryResult } from './result';

export { ELEMENTS, ELEMENT_SYMBOLS, CARBON12_MASS_U, isElementSymbol, lookupElement, lookupIsotope } from './elements';
export type { ElementData, IsotopeData } from './elements';
export { atomCount, combineCompositions, elementCount, formatComposition, isotopeKey, readCompositionKey } from './composition';
export type { Composition, CompositionKey } from './composition';
export { parseFormula } from './formula';
export { ADDUCTS, ADDUCT_NAMES, adductNotation, applyIonSpec, formIon, resolveIonSpec } from './adducts';
export type { AdductDefinition, AdductName, IonFields, IonFormation, IonRequest, IonSpec, Polarity } from './adducts';
export { ELECTRON_MASS_U, isotopeEnvelope, monoisotopicMass_u, mzFromAtomsMass } from './isotopes';
export type { EnvelopeOptions, IsotopeEnvelope, IsotopePeak, NominalGroup } from './isotopes';
export type { ChemistryIssue, ChemistryResult } from './result';

export interface SpeciesRequest {
  /** Elemental formula of the neutral molecule M, e.g. `C8H10N4O2`. */
  readonly formula: unknown;
  /** Adduct name (`protonated`, `sodiated`, ...) or notation (`[M+H]+`, `[M+2H]2+`, `[M-H]-`, `[M]+•`). */
  readonly adduct: unknown;
  /** Signed charge, or its magnitude with `polarity`. Default: one carrier (|z| = 1). */
  readonly charge?: unknown;
  readonly polarity?: unknown;
  /** Envelope pruning and merging; defaults as in isotopeEnvelope. */
  readonly envelope?: EnvelopeOptions;
}

export interface Species {
  /** Hill-order formula of the neutral molecule M. */
  readonly moleculeFormula: string;
  /** Neutral monoisotopic mass of M in u. */
  readonly moleculeMonoisotopicMass_u: number;
  /** The ion's atoms (M with the adduct applied). */
  readonly composition: Composition;
  /** Hill-order formula of the ion. */
  readonly ionFormula: string;
  readonly adduct: AdductName;
  readonly notation: string;
  /** Signed charge number z. */
  readonly charge: number;
  readonly polarity: Polarity;
  /** m/z of the all-principal-isotope ion, electrons accounted for. */
  readonly monoisotopicMz: number;
  /** Fine-structure isotope peaks sorted by m/z. */
  readonly envelope: readonly IsotopePeak[];
  /** Nominal-mass groups (M+0, M+1, ...) for display. */
  readonly nominalGroups: readonly NominalGroup[];
  /** Summed fraction of the fine envelope: 1 minus what the threshold left out. */
  readonly coverage: number;
  /** False when EnvelopeOptions.maxCompositions cut the fine envelope short. */
  readonly complete: boolean;
}

function checkEnvelopeOptions(options: EnvelopeOptions | undefined): ChemistryIssue[] {
  const issues: ChemistryIssue[] = [];
  if (options === undefined) return issues;
  const t = options.relativeThreshold;
  if (t !== undefined && !(typeof t === 'number' && t > 0 && t < 1)) {
    issues.push({ path: 'envelope.relativeThreshold', message: `must be a number in (0, 1), got ${JSON.stringify(t)}` });
  }
  const tol = options.mergeTolerance_mz;
  if (tol !== undefined && !(typeof tol === 'number' && tol >= 0 && Number.isFinite(tol))) {
    issues.push({ path: 'envelope.mergeTolerance_mz', message: `must be a finite number ≥ 0, got ${JSON.stringify(tol)}` });
  }
  const cap = options.maxCompositions;
  if (cap !== undefined && !(typeof cap === 'number' && Number.isSafeInteger(cap) && cap >= 1)) {
    issues.push({ path: 'envelope.maxCompositions', message: `must be a whole number ≥ 1, got ${JSON.stringify(cap)}` });
  }
  return issues;
}

/**
 * The ion species a source makes of `formula` with `adduct`: its composition, charge, monoisotopic
 * m/z and isotope envelope; or every problem found, each naming its field. Never throws for user input.
 */
export function speciesFromFormula(request: SpeciesRequest): ChemistryResult<Species> {
  const molecule = parseFormula(request.formula, 'formula');
  const spec = resolveIonSpec(request);
  const issues: ChemistryIssue[] = [...(molecule.ok ? [] : molecule.issues), ...(spec.ok ? [] : spec.issues), ...checkEnvelopeOptions(request.envelope)];
  if (!molecule.ok || !spec.ok || issues.length > 0) return { ok: false, issues };

  const ion = applyIonSpec(molecule.value, spec.value);
  if (!ion.ok) return ion;
  const envelope = isotopeEnvelope(ion.value.composition, ion.value.charge, request.envelope);
  return {
    ok: true,
    value: {
      moleculeFormula: formatComposition(molecule.value),
      moleculeMonoisotopicMass_u: monoisotopicMass_u(molecule.value),
      composition: ion.value.composition,
      ionFormula: ion.value.formula,
      adduct: ion.value.adduct,
      notation: ion.value.notation,
      charge: ion.value.charge,
      polarity: ion.value.polarity,
      monoisotopicMz: envelope.monoisotopicMz,
      envelope: envelope.peaks,
      nominalGroups: envelope.groups,
      coverage: envelope.coverage,
      complete: envelope.complete,
    },
  };
}
