/** Species given by formula and adduct: m/z from atomic masses, isotope peaks traced as ions. */
import { describe, expect, it } from 'vitest';
import { speciesFromFormula } from '../../src/ions/chemistry';
import { validatePreset } from '../../src/presets/load';
import type { PresetInput } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';

const preset = (species: unknown[], polarity: 'positive' | 'negative' = 'positive'): PresetInput =>
  ({
    formatVersion: 1,
    name: 'chemistry',
    polarity,
    source: {
      repeller: { potential_V: polarity === 'positive' ? 20_000 : -20_000 },
      groundGrid: { gap_mm: 10 },
      extraction: { mode: 'static' },
    },
    drift: { length_mm: 2000 },
    mirror: { type: 'none' },
    ions: { species, startPosition: { kind: 'surface', position_mm: 5 }, startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 } },
    run: { ions: 20_000, seed: 4 },
  }) as PresetInput;

describe('species from formula', () => {
  it('caffeine [M+H]+ gets its monoisotopic m/z (195.08765, from memory; electron mass included) and traced isotope peaks', () => {
    const loaded = validatePreset(preset([{ label: 'caffeine', formula: 'C8H10N4O2', adduct: 'protonated', charge: 1 }]));
    expect(loaded.ok).toBe(true);
    if (!loaded.ok) return;
    expect(loaded.value.ions.species[0].mz).toBeCloseTo(195.08765, 4);
    const r = simulate(loaded.value);
    const s = r.report.species[0];
    expect(r.report.species).toHaveLength(1);
    expect(s.mz).toBeCloseTo(195.08765, 4);
    expect(s.ions).toBe(20_000);
    // M+1 is dominated by 13C: m/z spacing 1.00336 (13C − 12C = 1.003355 u, AME 2020).
    const m1 = s.isotopePeaks.filter((p) => p.shift === 1).sort((a, b) => b.abundance - a.abundance)[0];
    expect(m1.mz - s.mz).toBeCloseTo(1.00336, 4);
    // Abundances come from the isotope module; the traced ion counts follow them (statistically).
    const chem = speciesFromFormula({ formula: 'C8H10N4O2', adduct: 'protonated', charge: 1, polarity: 'positive' });
    if (!chem.ok) throw new Error('chemistry');
    const m1Group = chem.value.nominalGroups.find((g) => g.shift === 1)!;
    const tracedM1 = s.isotopePeaks.filter((p) => p.shift === 1).reduce((a, p) => a + p.abundance, 0);
    expect(tracedM1).toBeCloseTo(m1Group.fraction, 2);
    // Ions at rest in one plane: every isotope peak's flight time scales as sqrt(m/z) exactly.
    for (const p of s.isotopePeaks) {
      expect(p.flightTime_ns! / s.flightTime_ns!).toBeCloseTo(Math.sqrt(p.mz / s.mz), 10);
    }
  });

  it('a doubly protonated peptide and a deprotonated anion', () => {
    const pos = validatePreset(preset([{ formula: 'C50H73N15O11', adduct: '[M+2H]2+', charge: 2 }]));
    expect(pos.ok && pos.value.ions.species[0].mz).toBeCloseTo(530.78795, 3); // C50H73N15O11 [M+2H]2+ (from memory)
    const neg = validatePreset(preset([{ formula: 'C6H12O6', adduct: 'deprotonated', charge: 1 }], 'negative'));
    expect(neg.ok && neg.value.ions.species[0].mz).toBeCloseTo(179.05611, 4); // glucose [M−H]− (from memory)
  });

  it('bad chemistry names the field and the species', () => {
    const bad = validatePreset(preset([{ mz: 500, charge: 1 }, { formula: 'C6H12Xx', adduct: 'protonated', charge: 1 }]));
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.issues[0].path).toBe('ions.species[1].formula');
    const wrongPolarity = validatePreset(preset([{ formula: 'C6H12O6', adduct: 'deprotonated', charge: 1 }], 'positive'));
    expect(wrongPolarity.ok).toBe(false);
    if (!wrongPolarity.ok) expect(wrongPolarity.issues[0].path).toMatch(/^ions\.species\[0\]\.(adduct|charge)$/);
    const neither = validatePreset(preset([{ charge: 1 }]));
    expect(neither.ok).toBe(false);
    if (!neither.ok) expect(neither.issues[0]).toEqual({ path: 'ions.species[0].mz', message: 'give either mz or a formula with an adduct' });
  });
});
