/**
 * Ionising adducts: how a neutral molecule M becomes the ion a source makes of it
 * ([M+H]+, [M+2Na]2+, [M−H]−, [M+Cl]−, M+•, ...), with the checks that reject impossible
 * combinations of adduct, charge and polarity.
 */

import { combineCompositions, formatComposition } from './composition';
import type { Composition } from './composition';
import { failure, success } from './result';
import type { ChemistryIssue, ChemistryResult } from './result';

export type Polarity = 'positive' | 'negative';

export type AdductName =
  | 'protonated'
  | 'sodiated'
  | 'potassiated'
  | 'ammoniated'
  | 'lithiated'
  | 'argentated'
  | 'cesiated'
  | 'deprotonated'
  | 'chloride'
  | 'radicalCation'
  | 'radicalAnion';

export interface AdductDefinition {
  readonly name: AdductName;
  readonly polarity: Polarity;
  /** The atoms gained (+1) or lost (−1) once per unit of charge; absent for radical ions. */
  readonly carrier?: { readonly formula: string; readonly atoms: Composition; readonly direction: 1 | -1 };
}

const carrier = (formula: string, atoms: Composition, direction: 1 | -1) => ({ formula, atoms, direction });

/** The adducts this module forms. Each carrier holds one elementary charge. */
export const ADDUCTS: Readonly<Record<AdductName, AdductDefinition>> = {
  protonated: { name: 'protonated', polarity: 'positive', carrier: carrier('H', { H: 1 }, 1) },
  sodiated: { name: 'sodiated', polarity: 'positive', carrier: carrier('Na', { Na: 1 }, 1) },
  potassiated: { name: 'potassiated', polarity: 'positive', carrier: carrier('K', { K: 1 }, 1) },
  ammoniated: { name: 'ammoniated', polarity: 'positive', carrier: carrier('NH4', { N: 1, H: 4 }, 1) },
  lithiated: { name: 'lithiated', polarity: 'positive', carrier: carrier('Li', { Li: 1 }, 1) },
  argentated: { name: 'argentated', polarity: 'positive', carrier: carrier('Ag', { Ag: 1 }, 1) },
  cesiated: { name: 'cesiated', polarity: 'positive', carrier: carrier('Cs', { Cs: 1 }, 1) },
  deprotonated: { name: 'deprotonated', polarity: 'negative', carrier: carrier('H', { H: 1 }, -1) },
  chloride: { name: 'chloride', polarity: 'negative', carrier: carrier('Cl', { Cl: 1 }, 1) },
  radicalCation: { name: 'radicalCation', polarity: 'positive' },
  radicalAnion: { name: 'radicalAnion', polarity: 'negative' },
};

export const ADDUCT_NAMES = Object.keys(ADDUCTS) as AdductName[];

/** Bracket notation of an ion, e.g. `[M+2H]2+`, `[M-H]-`, `[M]+•`. */
export function adductNotation(name: AdductName, charge: number): string {
  const def = ADDUCTS[name];
  const z = Math.abs(charge);
  const sign = charge > 0 ? '+' : '-';
  const chargeText = `${z === 1 ? '' : z}${sign}`;
  if (!def.carrier) return `[M]${chargeText}•`;
  const op = def.carrier.direction > 0 ? '+' : '-';
  return `[M${op}${z === 1 ? '' : z}${def.carrier.formula}]${chargeText}`;
}

interface AdductReading {
  readonly name: AdductName;
  /** Charge written in the notation itself, when the adduct was given as `[M+2H]2+`. */
  readonly notationCharge?: number;
}

const NOTATION = /^\[M(?:([+-])(\d*)([A-Za-z0-9]+))?\](\d*)([+-])(•|\.|\*)?$/;

/** Accepts a name from ADDUCTS or bracket notation such as `[M+Na]+`, `[M-2H]2-`, `[M]+•`. */
function readAdduct(text: string): AdductReading | string {
  if (Object.prototype.hasOwnProperty.call(ADDUCTS, text)) return { name: text as AdductName };
  const compact = text.replace(/\s+/g, '').replace(/[−–]/g, '-');
  const shortRadical = /^M([+-])(•|\.|\*)$/.exec(compact);
  if (shortRadical) return { name: shortRadical[1] === '+' ? 'radicalCation' : 'radicalAnion', notationCharge: shortRadical[1] === '+' ? 1 : -1 };
  const m = NOTATION.exec(compact);
  const known = `expected one of ${ADDUCT_NAMES.join(', ')}, or bracket notation such as [M+H]+, [M+2H]2+, [M-H]-, [M+Cl]-, [M]+•`;
  if (!m) return `unknown adduct '${text}'; ${known}`;
  const [, op, countText, species, chargeDigits, chargeSign, radicalDot] = m;
  const charge = (chargeDigits === '' ? 1 : Number(chargeDigits)) * (chargeSign === '+' ? 1 : -1);
  if (charge === 0) return `adduct '${text}' has charge 0`;
  if (op === undefined) {
    if (!radicalDot) return `adduct '${text}': an ion with nothing added or removed is a radical ion, written [M]+• or [M]-•`;
    return { name: charge > 0 ? 'radicalCation' : 'radicalAnion', notationCharge: charge };
  }
  if (radicalDot) return `adduct '${text}': radical ions with adducts are not supported`;
  const copies = countText === '' ? 1 : Number(countText);
  const direction = op === '+' ? 1 : -1;
  const def = ADDUCT_NAMES.map((n) => ADDUCTS[n]).find((d) => d.carrier && d.carrier.formula === species && d.carrier.direction === direction);
  if (!def) return `unknown adduct '${text}'; ${known}`;
  if (copies !== Math.abs(charge)) {
    return `adduct '${text}': ${copies} ${species} carrier${copies === 1 ? '' : 's'} cannot give charge ${Math.abs(charge)}; each carries one charge`;
  }
  return { name: def.name, notationCharge: charge };
}

export interface IonFields {
  /** A name from ADDUCTS or bracket notation (`[M+H]+`, `[M+2H]2+`, `[M-H]-`, `[M]+•`). */
  readonly adduct: unknown;
  /** Charge state: a signed integer, or its magnitude when the polarity says the sign. Default: one carrier. */
  readonly charge?: unknown;
  readonly polarity?: unknown;
}

export interface IonRequest extends IonFields {
  /** The neutral molecule M. */
  readonly composition: Composition;
}

/** A checked adduct, charge and polarity, not yet applied to a molecule. */
export interface IonSpec {
  readonly adduct: AdductName;
  /** Signed charge number z (elementary charges). */
  readonly charge: number;
  readonly polarity: Polarity;
  /** e.g. `[M+2H]2+`. */
  readonly notation: string;
}

export interface IonFormation extends IonSpec {
  /** The ion's atoms: M plus or minus the carriers. */
  readonly composition: Composition;
  /** The ion's composition as Hill-order text, e.g. `C8H11N4O2`. */
  readonly formula: string;
}

/**
 * Checks adduct, charge and polarity together, naming the field that makes the combination
 * impossible: a polarity against the adduct's, a charge sign against it, charge 0, a radical with
 * more than one charge, a charge that contradicts the adduct's own notation.
 */
export function resolveIonSpec(fields: IonFields): ChemistryResult<IonSpec> {
  const issues: ChemistryIssue[] = [];
  const reading =
    fields.adduct === undefined ? 'adduct is required' : typeof fields.adduct === 'string' ? readAdduct(fields.adduct.trim()) : 'adduct must be a string';
  if (typeof reading === 'string') issues.push({ path: 'adduct', message: reading });

  let polarity: Polarity | undefined;
  if (fields.polarity !== undefined) {
    if (fields.polarity === 'positive' || fields.polarity === 'negative') polarity = fields.polarity;
    else issues.push({ path: 'polarity', message: `polarity must be 'positive' or 'negative', got ${JSON.stringify(fields.polarity)}` });
  }

  let chargeInput: number | undefined;
  if (fields.charge !== undefined) {
    const c = fields.charge;
    if (typeof c !== 'number' || !Number.isSafeInteger(c)) issues.push({ path: 'charge', message: `charge must be a whole number, got ${JSON.stringify(c)}` });
    else if (c === 0) issues.push({ path: 'charge', message: 'charge 0 is a neutral molecule, not an ion' });
    else chargeInput = c;
  }
  if (issues.length > 0 || typeof reading === 'string') return { ok: false, issues };

  const def = ADDUCTS[reading.name];
  if (polarity !== undefined && polarity !== def.polarity) {
    return failure('polarity', `${reading.name} (${adductNotation(def.name, def.polarity === 'positive' ? 1 : -1)}) makes ${def.polarity} ions; polarity '${polarity}' does not fit`);
  }
  const sign = def.polarity === 'positive' ? 1 : -1;
  if (chargeInput !== undefined && Math.sign(chargeInput) !== sign && (polarity === undefined || chargeInput < 0)) {
    return failure(
      'charge',
      `charge ${chargeInput} does not fit ${reading.name}, which makes ${def.polarity} ions (give charge ${-chargeInput}, or the magnitude with polarity '${def.polarity}')`,
    );
  }
  const magnitude = chargeInput !== undefined ? Math.abs(chargeInput) : reading.notationCharge !== undefined ? Math.abs(reading.notationCharge) : 1;
  const charge = sign * magnitude;
  if (reading.notationCharge !== undefined && reading.notationCharge !== charge) {
    return failure('charge', `charge ${chargeInput} contradicts the adduct notation '${String(fields.adduct)}' (charge ${reading.notationCharge})`);
  }
  if (!def.carrier && magnitude !== 1) {
    return failure('charge', `a radical ion (${reading.name}) carries one charge; got ${charge}`);
  }
  return success({ adduct: def.name, charge, polarity: def.polarity, notation: adductNotation(def.name, charge) });
}

/** The ion's atoms, or an `adduct` issue when the carriers remove more atoms than M has. */
export function applyIonSpec(composition: Composition, spec: IonSpec): ChemistryResult<IonFormation> {
  const def = ADDUCTS[spec.adduct];
  const magnitude = Math.abs(spec.charge);
  let atoms: Record<string, number> = { ...composition };
  if (def.carrier) {
    atoms = combineCompositions(atoms, def.carrier.atoms, def.carrier.direction * magnitude);
    for (const [key, count] of Object.entries(atoms)) {
      if (count < 0) {
        const removed = (def.carrier.atoms[key] ?? 0) * magnitude;
        return failure('adduct', `${spec.notation} removes ${removed} ${key} but the molecule has ${removed + count}`);
      }
    }
  }
  if (Object.keys(atoms).length === 0) return failure('adduct', `${spec.notation} leaves no atoms`);
  const frozen = Object.freeze(atoms);
  return success({ ...spec, composition: frozen, formula: formatComposition(frozen) });
}

/** resolveIonSpec then applyIonSpec: the ion M becomes, or the issues that prevent it. Never throws. */
export function formIon(request: IonRequest): ChemistryResult<IonFormation> {
  const spec = resolveIonSpec(request);
  return spec.ok ? applyIonSpec(request.composition, spec.value) : spec;
}
