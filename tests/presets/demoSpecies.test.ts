/**
 * The shipped demos are an invented scenario: every species is an invented one given by formula
 * (its m/z computed from AME 2020 masses, never typed), each calibrant is the computed m/z of one of
 * them, and exactly one demo traces isotope envelopes. Common practice, no source: these are
 * properties of our own data, checked so that a typed value cannot creep back in.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { resolveChemistry } from '../../src/presets/speciesChemistry';

const DIR = 'presets';
const demos = readdirSync(DIR).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));

describe('shipped demo species', () => {
  it('there are demos to check', () => expect(demos.length).toBeGreaterThanOrEqual(6));
  for (const file of demos) {
    it(`${file}: invented species by formula, calibrants computed from them`, () => {
      const raw = JSON.parse(readFileSync(`${DIR}/${file}`, 'utf8'));
      for (const s of raw.ions.species) {
        expect(s.mz, `${file}: ${s.label} has a typed m/z`).toBeUndefined();
        expect(typeof s.formula).toBe('string');
        expect(s.label).toMatch(/\(invented\)$/);
      }
      const loaded = parsePresetText(readFileSync(`${DIR}/${file}`, 'utf8'));
      if (!loaded.ok) throw new Error(JSON.stringify(loaded.issues));
      const computed = loaded.value.ions.species.map((s) => {
        const chem = resolveChemistry({ formula: s.formula!, adduct: s.adduct!, charge: s.charge, polarity: loaded.value.polarity });
        if (!chem.ok) throw new Error(file);
        return chem.value.monoisotopicMz;
      });
      for (const mz of loaded.value.analysis?.calibrantMz ?? []) expect(computed).toContain(mz);
      // Spread over the mass range the demos need (m/z 1000–2600).
      expect(Math.min(...computed)).toBeLessThan(1100);
      expect(Math.max(...computed)).toBeGreaterThan(2400);
    });
  }
  it('exactly one demo traces isotope envelopes (formula species without isotopes: "monoisotopic")', () => {
    const withEnvelope = demos.filter((f) => JSON.parse(readFileSync(`${DIR}/${f}`, 'utf8')).ions.species.some((s: { isotopes?: string }) => s.isotopes !== 'monoisotopic'));
    expect(withEnvelope).toEqual(['demo-peptide-isotopes.json']);
  });
});
