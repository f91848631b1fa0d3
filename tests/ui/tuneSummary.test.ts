/** The app's auto-tune summary: preset, start and result side by side, one figure, and a kept preset said in words. */
import { describe, expect, it } from 'vitest';
import type { ScanSpeciesPoint, TuneResult } from '../../src/tuning/api';
import { tuneSummary } from '../../src/ui/tuning/tuneSummary';

const species = (t: number): ScanSpeciesPoint => ({ mz: 1336.7008, label: 'morinex-12 (invented)', flightTime_ns: 22967, fwhm_ns: 0.1, resolvingPower: 1e5, transmission: t });

const base = {
  start: [150],
  best: [228],
  objective: 59087,
  flatness: [{ path: 'source.extraction.delay_ns', low: 224.86, high: 229.01 }],
  evaluations: 68,
  tunedPreset: {} as TuneResult['tunedPreset'],
  startObjective: 2805,
  measure: 'sd',
  presetValues: [228],
  presetObjective: 59087,
  presetSpecies: [species(1)],
  startSpecies: [species(0.97)],
  species: [species(1)],
  searchBest: [150],
  searchObjective: 2805,
} satisfies TuneResult;

describe('tune summary', () => {
  const parameters = [{ path: 'source.extraction.delay_ns', label: 'Extraction delay (ns)' }];
  const objective = { name: 'max-r-at-mz' as const, targetMz: 1336.7008 };

  it('a kept preset is said in words, with the preset, start and recommended values and transmissions', () => {
    const s = tuneSummary({ ...base, recommendation: 'preset' }, parameters, objective);
    expect(s.verdict).toMatch(/^No setting found scores better than the preset's own settings \(preset 59\u2009087, best found 2\u2009805\)/);
    expect(s.objectiveLine).toMatch(/with the preset's settings, .* at the start, .* recommended \(the preset's\)/);
    expect(s.recommendedHeading).toBe('recommended (preset)');
    expect(s.parameters[0]).toMatchObject({ preset: '228.00', start: '150.00', recommended: '228.00' });
    expect(s.species[0]).toEqual({ label: 'morinex-12 (invented)', preset: '100.0 %', start: '97.0 %', recommended: '100.0 %', floor: '—' });
    expect(s.figure).toContain('width = 2.355 × standard deviation of the arrival times');
  });

  it('a tuned result that beats the preset has no verdict line; one asked for although worse says so', () => {
    expect(tuneSummary({ ...base, recommendation: 'tuned', presetObjective: 1000 }, parameters, objective).verdict).toBeNull();
    expect(tuneSummary({ ...base, recommendation: 'tuned', worseThanPreset: true, objective: 2805, best: [150] }, parameters, objective).verdict).toMatch(/scores worse than the preset's own settings/);
  });

  it('names the transmission constraint, each species\' floor, and the species that binds or that refuses the tune', () => {
    const constrained = { ...base, recommendation: 'tuned' as const, transmissionConstraint: "every species keeps at least 99.0 % of its transmission at the preset's settings", transmissionFloors: [0.99] };
    const binding = tuneSummary({ ...constrained, transmissionBinding: { index: 0, label: 'morinex-12 (invented)', mz: 1336.7008, transmission: 0.992, floor: 0.99 } }, parameters, objective);
    expect(binding.constraint).toBe("Transmission constraint: every species keeps at least 99.0 % of its transmission at the preset's settings.");
    expect(binding.species[0].floor).toBe('99.0 %');
    expect(binding.transmissionFindings).toEqual([expect.stringMatching(/^The transmission constraint binds: morinex-12 \(invented\) \(m\/z 1336\.7008\) keeps 99\.2 %, its floor is 99\.0 %/)]);
    const refused = tuneSummary({ ...constrained, feasible: false, transmissionViolated: [{ index: 0, label: 'morinex-12 (invented)', mz: 1336.7008, transmission: 0.75, floor: 0.99 }] }, parameters, objective);
    expect(refused.transmissionFindings[0]).toMatch(/^REFUSED: .*morinex-12 \(invented\) \(m\/z 1336\.7008\) keeps 75\.0 % against its floor 99\.0 %/);
    expect(tuneSummary(constrained, parameters, objective).transmissionFindings).toEqual([]);
  });
});
