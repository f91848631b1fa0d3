/** acquisition.timeOffset_ns: an optional constant delay that moves the recorded spectrum and nothing else. */
import { describe, expect, it } from 'vitest';
import { simulate } from '../../src/simulation/run';
import { testPreset } from './recoveryFixture';

describe('acquisition.timeOffset_ns', () => {
  it('shifts every spectrum peak by the offset and leaves the ion flight times alone', () => {
    const plain = simulate(testPreset({ ions: 3000 }));
    const shifted = simulate(testPreset({ ions: 3000, timeOffset_ns: 37.25 }));
    plain.report.species.forEach((s, i) => {
      const t = shifted.report.species[i];
      expect(t.flightTime_ns).toBe(s.flightTime_ns);
      // Same ions, the record grid moves with them: the centroid moves by the offset to rounding.
      expect(t.peak!.centroid_ns - s.peak!.centroid_ns).toBeCloseTo(37.25, 6);
      expect(t.peak!.fwhm_ns).toBeCloseTo(s.peak!.fwhm_ns!, 6);
    });
  });

  it('is optional (absent = 0) and range-checked with its unit in the message', async () => {
    const { validatePreset } = await import('../../src/presets/load');
    const doc = JSON.parse(JSON.stringify(testPreset())) as { acquisition: Record<string, unknown> };
    expect(validatePreset(doc).ok).toBe(true);
    doc.acquisition.timeOffset_ns = 2e6;
    const r = validatePreset(doc);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues[0]).toMatchObject({ path: 'acquisition.timeOffset_ns', message: expect.stringContaining('ns') });
  });
});
