/**
 * Why isotope peaks showed larger mass errors than their monoisotopic peaks: not overlap (each
 * isotope peak is measured on its own ions' spectrum) and not a defect, but the species' own
 * calibration error plus the centroid scatter of a peak holding few traced ions. Checked on the
 * isotope demo: each unknown species' M+1 error equals its M+0 error within 4 combined standard
 * errors of the centroids (sd/sqrt(n); statistics, common practice, no source) plus 0.5 ppm.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { simulate } from '../../src/simulation/run';

describe('isotope peak mass errors in the isotope demo', () => {
  it('M+1 shares its species\' M+0 error, up to the statistical scatter the report gives', () => {
    const loaded = parsePresetText(readFileSync('presets/demo-peptide-isotopes.json', 'utf8'));
    if (!loaded.ok) throw new Error('preset');
    const report = simulate(loaded.value, { ions: 20_000 }).report;
    const unknowns = report.species.filter((s) => s.massError_ppm !== null);
    expect(unknowns.length).toBeGreaterThanOrEqual(2);
    for (const s of unknowns) {
      const m0 = s.isotopePeaks.find((p) => p.shift === 0)!;
      const m1 = s.isotopePeaks.filter((p) => p.shift === 1).reduce((a, b) => (b.abundance > a.abundance ? b : a));
      expect(m0.massError_ppm).toBe(s.massError_ppm);
      const allowed = 4 * Math.hypot(m0.statisticalError_ppm!, m1.statisticalError_ppm!) + 0.5;
      expect(Math.abs(m1.massError_ppm! - m0.massError_ppm!), s.label).toBeLessThan(allowed);
    }
  });
});
