/**
 * The species peaks may take the detected flight times the report sorted (buildReport's sortedOut)
 * instead of sorting them again: a pure saving, so the peaks must be the same to the bit with and
 * without them (a consistency check of two code paths: common practice, no source).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { buildAnalysisSections } from '../../src/simulation/analysisReport';
import { buildReport } from '../../src/simulation/report';
import { simulate } from '../../src/simulation/run';

const demo = (name: string) => {
  const parsed = parsePresetText(readFileSync(new URL(`../../presets/${name}.json`, import.meta.url), 'utf8'));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.value;
};

describe('species peaks from the report’s sorted times', () => {
  for (const name of ['demo-linear-delayed', 'demo-peptide-isotopes', 'demo-reflectron-dual']) {
    it(`equal the peaks that sort their own times: ${name}`, () => {
      const preset = demo(name);
      // Few ions, so the shot-noise smoothing (which reads the sorted times' spread) is in play.
      const sim = simulate(preset, { ions: 800, analysis: false });
      const sorted: Float64Array[] = [];
      buildReport(sim.ensemble, sim.trace, sorted);
      expect(sorted).toHaveLength(sim.ensemble.species.length);
      const means = sim.report.species.map(() => null);
      const own = buildAnalysisSections(preset, sim.compiled.model, sim.compiled.population, sim.ensemble, sim.trace, means, { focus: false });
      const reused = buildAnalysisSections(preset, sim.compiled.model, sim.compiled.population, sim.ensemble, sim.trace, means, { focus: false, sortedTimes: sorted });
      expect(own.speciesPeaks.some((p) => p !== null && p.shotNoiseSmoothing_ns > 0)).toBe(true);
      expect(reused.speciesPeaks).toEqual(own.speciesPeaks);
      own.speciesPeaks.forEach((p, s) => {
        if (p) for (const [k, v] of Object.entries(p)) expect(Object.is(v, (reused.speciesPeaks[s] as unknown as Record<string, unknown>)[k]), `${k} of block ${s}`).toBe(true);
      });
      expect(reused.calibration).toEqual(own.calibration);
    });
  }
});
