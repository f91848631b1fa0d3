/** The worker's measured-spectrum service: problems come back as one message, never as a throw. */
import { describe, expect, it } from 'vitest';
import { measuredService } from '../../src/measured/service';
import type { MeasuredSpectrum } from '../../src/measured/measuredSpectrum';
import { testPreset } from './recoveryFixture';

const mzSpectrum: MeasuredSpectrum = {
  format: 'jcamp',
  axis: 'mz',
  x: new Float64Array([999, 999.5, 1000, 1000.5, 1001, 1599.5, 1600, 1600.5, 2399.5, 2400, 2400.5]),
  intensity: new Float64Array([0, 10, 100, 10, 0, 20, 80, 20, 5, 50, 5]),
  title: null,
  timeUnitFrom: null,
  notes: [],
};

describe('measuredService', () => {
  it('matches an m/z spectrum to the species by m/z and refuses to fit it, saying why', () => {
    const matched = measuredService.analyse({ preset: testPreset({ ions: 600 }), spectrum: mzSpectrum, fileName: 'a.jdx', options: {} });
    expect(matched.ok).toBe(true);
    if (matched.ok) {
      expect(matched.section.matches.map((m) => m.label)).toEqual(['test ion A', 'test ion B', 'test ion C']);
      expect(matched.section.matches[0].measured_mz).toBeCloseTo(1000, 6);
      expect(matched.profile).toBeNull();
    }
    const fit = measuredService.analyse({ preset: testPreset({ ions: 600 }), spectrum: mzSpectrum, fileName: 'a.jdx', options: { fit: [{ path: 'drift.length_mm' }] } });
    expect(fit).toEqual({ ok: false, error: expect.stringMatching(/^measured: the fit needs a spectrum on a time axis/) });
  });

  it('refuses an invalid setup with its problems named', () => {
    const doc = JSON.parse(JSON.stringify(testPreset())) as { drift: { length_mm: number } };
    doc.drift.length_mm = -1;
    const r = measuredService.analyse({ preset: doc, spectrum: mzSpectrum, fileName: null, options: {} });
    expect(r).toEqual({ ok: false, error: expect.stringMatching(/^the setup is not valid: drift.length_mm: must be a number/) });
  });
});
