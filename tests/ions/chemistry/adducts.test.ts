import { describe, it, expect } from 'vitest';
import { formIon } from '../../../src/ions/chemistry/adducts';
import type { IonFormation, IonRequest } from '../../../src/ions/chemistry/adducts';
import type { ChemistryIssue } from '../../../src/ions/chemistry/result';

// The ion stoichiometries below are the definitions of the adduct notations (common practice, no source).
const CAFFEINE = { C: 8, H: 10, N: 4, O: 2 };

function ion(request: Omit<IonRequest, 'composition'>, composition: Record<string, number> = CAFFEINE): IonFormation {
  const result = formIon({ composition, ...request });
  if (!result.ok) throw new Error(result.issues.map((i) => `${i.path}: ${i.message}`).join('; '));
  return result.value;
}

function issues(request: Omit<IonRequest, 'composition'>, composition: Record<string, number> = CAFFEINE): readonly ChemistryIssue[] {
  const result = formIon({ composition, ...request });
  if (result.ok) throw new Error('expected a failure');
  return result.issues;
}

describe('formIon: compositions and charges', () => {
  it('forms the singly charged adduct ions', () => {
    expect(ion({ adduct: 'protonated' })).toMatchObject({ composition: { C: 8, H: 11, N: 4, O: 2 }, charge: 1, polarity: 'positive', notation: '[M+H]+', formula: 'C8H11N4O2' });
    expect(ion({ adduct: 'sodiated' })).toMatchObject({ composition: { C: 8, H: 10, N: 4, O: 2, Na: 1 }, charge: 1, notation: '[M+Na]+' });
    expect(ion({ adduct: 'potassiated' })).toMatchObject({ composition: { K: 1 }, charge: 1, notation: '[M+K]+' });
    expect(ion({ adduct: 'ammoniated' })).toMatchObject({ composition: { N: 5, H: 14 }, charge: 1, notation: '[M+NH4]+' });
    expect(ion({ adduct: 'deprotonated' })).toMatchObject({ composition: { H: 9 }, charge: -1, polarity: 'negative', notation: '[M-H]-' });
    expect(ion({ adduct: 'chloride' })).toMatchObject({ composition: { Cl: 1, H: 10 }, charge: -1, notation: '[M+Cl]-' });
  });

  it('forms radical ions by electron loss or gain alone', () => {
    expect(ion({ adduct: 'radicalCation' })).toMatchObject({ composition: CAFFEINE, charge: 1, notation: '[M]+•' });
    expect(ion({ adduct: 'radicalAnion' })).toMatchObject({ composition: CAFFEINE, charge: -1, notation: '[M]-•' });
    expect(ion({ adduct: 'M+•' }).adduct).toBe('radicalCation');
    expect(ion({ adduct: '[M]-•' }).adduct).toBe('radicalAnion');
  });

  it('forms multiply charged ions [M+nH]n+ and [M−nH]n−, from the charge or from the notation', () => {
    expect(ion({ adduct: 'protonated', charge: 3 })).toMatchObject({ composition: { H: 13 }, charge: 3, notation: '[M+3H]3+' });
    expect(ion({ adduct: '[M+2H]2+' })).toMatchObject({ composition: { H: 12 }, charge: 2 });
    expect(ion({ adduct: '[M-2H]2-' })).toMatchObject({ composition: { H: 8 }, charge: -2, notation: '[M-2H]2-' });
    // A magnitude is accepted when the polarity gives the sign.
    expect(ion({ adduct: 'deprotonated', charge: 2, polarity: 'negative' })).toMatchObject({ charge: -2 });
    expect(ion({ adduct: 'deprotonated', charge: -2 })).toMatchObject({ charge: -2 });
    expect(ion({ adduct: '[M+2Na]2+' })).toMatchObject({ composition: { Na: 2 }, charge: 2 });
  });

  it('accepts the common notations and their spellings', () => {
    expect(ion({ adduct: '[M+H]+' }).adduct).toBe('protonated');
    expect(ion({ adduct: '[M+NH4]+' }).adduct).toBe('ammoniated');
    expect(ion({ adduct: '[M−H]−' }).adduct).toBe('deprotonated');
    expect(ion({ adduct: ' [M + Cl]- ' }).adduct).toBe('chloride');
    expect(ion({ adduct: '[M+Ag]+' }).adduct).toBe('argentated');
  });
});

describe('formIon: impossible combinations name the field', () => {
  it('rejects a polarity against the adduct', () => {
    const [i] = issues({ adduct: 'deprotonated', polarity: 'positive' });
    expect(i.path).toBe('polarity');
    expect(i.message).toMatch(/negative/);
    expect(issues({ adduct: 'sodiated', polarity: 'negative' })[0].path).toBe('polarity');
    expect(issues({ adduct: 'protonated', polarity: 'up' })[0].path).toBe('polarity');
  });

  it('rejects charge 0, fractional charges and charge signs against the adduct', () => {
    expect(issues({ adduct: 'protonated', charge: 0 })[0]).toMatchObject({ path: 'charge', message: expect.stringMatching(/neutral/) });
    expect(issues({ adduct: 'protonated', charge: 1.5 })[0].path).toBe('charge');
    expect(issues({ adduct: 'protonated', charge: -1 })[0].path).toBe('charge');
    expect(issues({ adduct: 'deprotonated', charge: 2 })[0].path).toBe('charge');
    expect(issues({ adduct: 'protonated', charge: -2, polarity: 'positive' })[0].path).toBe('charge');
  });

  it('rejects a radical ion with more than one charge', () => {
    expect(issues({ adduct: 'radicalCation', charge: 2 })[0]).toMatchObject({ path: 'charge', message: expect.stringMatching(/radical/) });
  });

  it('rejects a charge that contradicts the notation, and notations whose carriers do not match their charge', () => {
    expect(issues({ adduct: '[M+2H]2+', charge: 3 })[0].path).toBe('charge');
    expect(issues({ adduct: '[M+2H]+' })[0].path).toBe('adduct');
    expect(issues({ adduct: '[M]+' })[0].path).toBe('adduct');
  });

  it('rejects removing more hydrogens than the molecule has', () => {
    const [i] = issues({ adduct: 'deprotonated', charge: -3 }, { H: 2, O: 1 });
    expect(i.path).toBe('adduct');
    expect(i.message).toBe('[M-3H]3- removes 3 H but the molecule has 2');
    expect(issues({ adduct: 'deprotonated' }, { C: 1, O: 2 })[0].message).toMatch(/has 0/);
    expect(issues({ adduct: 'deprotonated' }, { H: 1 })[0].message).toMatch(/leaves no atoms/);
  });

  it('rejects unknown adducts, and reports every bad field at once', () => {
    expect(issues({ adduct: 'protonised' })[0]).toMatchObject({ path: 'adduct', message: expect.stringMatching(/unknown adduct 'protonised'/) });
    expect(issues({ adduct: undefined })[0]).toMatchObject({ path: 'adduct', message: 'adduct is required' });
    const all = issues({ adduct: '[M+Xe]+', charge: 0, polarity: 'sideways' });
    expect(all.map((i) => i.path).sort()).toEqual(['adduct', 'charge', 'polarity']);
  });
});
