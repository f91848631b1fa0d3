/** The fit next to a bound, and the inputs it refuses (each named by the parameter at fault). */
import { describe, expect, it } from 'vitest';
import { analyseMeasured } from '../../src/measured/analyse';
import { FitError } from '../../src/measured/fit';
import { expectedSpectrum, noisySpectrum, testPreset } from './recoveryFixture';

const measured = noisySpectrum(expectedSpectrum(testPreset({ timeOffset_ns: 10, pulseWidth_ns: 0.05 }), 2000, 100_000), 2);

describe('fit edges', () => {
  it('fits a parameter whose value lies next to its lower bound (differences stay inside the bounds)', () => {
    const fit = analyseMeasured(testPreset({ seed: 3 }), measured, { fit: [{ path: 'acquisition.timeOffset_ns' }, { path: 'acquisition.pulseWidth_ns', min: 0, max: 5 }] }).fit!;
    const [offset, pulse] = fit.parameters;
    expect(Math.abs(offset.value - 10)).toBeLessThan(2 * offset.standardError!);
    expect(pulse.value).toBeGreaterThanOrEqual(0);
    expect(pulse.value).toBeLessThan(0.05 + 2 * pulse.standardError!);
  });

  it('refuses a repeated path, a path the preset lacks, a value outside its bounds and more parameters than measured quantities', () => {
    const run = (fit: { path: string; min?: number; max?: number }[], widths = true) => () => analyseMeasured(testPreset({ ions: 600 }), measured, { fit, widths });
    expect(run([{ path: 'drift.length_mm' }, { path: 'drift.length_mm' }])).toThrow(/is given twice/);
    expect(run([{ path: 'mirror.backPlate_V' }])).toThrow(FitError);
    expect(run([{ path: 'drift.length_mm', min: 1300, max: 1400 }])).toThrow(/lies outside the bounds 1300:1400/);
    expect(run([{ path: 'acquisition.timeOffset_ns' }, { path: 'drift.length_mm' }, { path: 'acquisition.pulseWidth_ns' }, { path: 'source.extraction.delay_ns' }], false)).toThrow(/3 measured quantities .* cannot determine 4 parameters/);
  });
});
