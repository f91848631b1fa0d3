/**
 * Recovery of hidden instrument offsets from a noisy measured spectrum.
 *
 * The "measured" spectrum is simulated from the invented test instrument with hidden offsets
 * (a 42 ns electronics delay, a drift tube 1.5 mm longer, a 1.6 ns instead of 1.0 ns detector
 * pulse), scaled to 2000 counts per peak, with Poisson counting noise. The fit starts from the
 * nominal preset. Checks (standard least-squares theory, e.g. Press et al., Numerical Recipes,
 * 3rd ed., §15.5–15.6: for correct σ the covariance (JᵀWJ)⁻¹ is the spread of the estimates):
 * each offset is recovered within two standard errors, and over 50 noise realisations (each with
 * its own simulation seed too) the mean reported standard error agrees with the spread of the
 * estimates within 30 %.
 */
import { describe, expect, it } from 'vitest';
import { analyseMeasured } from '../../src/measured/analyse';
import { expectedSpectrum, noisySpectrum, testPreset } from './recoveryFixture';

const HIDDEN = { timeOffset_ns: 42, driftLength_mm: 1201.5, pulseWidth_ns: 1.6 };
const TRUE_VALUES = [HIDDEN.timeOffset_ns, HIDDEN.driftLength_mm, HIDDEN.pulseWidth_ns];
const FIT = [
  { path: 'acquisition.timeOffset_ns' },
  { path: 'drift.length_mm', min: 1190, max: 1210 },
  { path: 'acquisition.pulseWidth_ns', min: 0, max: 5 },
];
const SEEDS = 50;

describe('fit of hidden offsets (Poisson counting noise)', () => {
  const expected = expectedSpectrum(testPreset(HIDDEN), 2000);

  it('recovers each hidden offset within two standard errors from the nominal preset', () => {
    const a = analyseMeasured(testPreset({ seed: 11 }), noisySpectrum(expected, 1), { fit: FIT });
    expect(a.matches.map((m) => m.label)).toEqual(['test ion A', 'test ion B', 'test ion C']);
    const fit = a.fit!;
    expect(fit.converged).toBe(true);
    fit.parameters.forEach((p, k) => {
      expect(p.standardError).not.toBeNull();
      expect(Math.abs(p.value - TRUE_VALUES[k])).toBeLessThanOrEqual(2 * p.standardError!);
      expect(p.atBound).toBe(false);
    });
    // The nominal start is far off: tens of ns in every centroid before the fit.
    const before = fit.residuals.filter((r) => r.quantity === 'centroid').map((r) => r.measured_ns - r.initialModel_ns);
    expect(Math.min(...before)).toBeGreaterThan(50);
    // A fitted preset is a new object with the fitted values and a new name; the nominal is untouched.
    expect(fit.fittedPreset.acquisition!.timeOffset_ns).toBeCloseTo(fit.parameters[0].value, 12);
    expect(fit.fittedPreset.name).toMatch(/\(fitted\)$/);
    expect(testPreset({ seed: 11 }).acquisition!.timeOffset_ns).toBeUndefined();
  });

  it(`reports standard errors that match the spread over ${SEEDS} noise seeds within 30 %`, () => {
    const values: number[][] = TRUE_VALUES.map(() => []);
    const errors: number[][] = TRUE_VALUES.map(() => []);
    for (let seed = 1; seed <= SEEDS; seed++) {
      const fit = analyseMeasured(testPreset({ seed: 100 + seed }), noisySpectrum(expected, 1000 + seed), { fit: FIT }).fit!;
      fit.parameters.forEach((p, k) => {
        values[k].push(p.value);
        errors[k].push(p.standardError!);
      });
    }
    TRUE_VALUES.forEach((truth, k) => {
      const mean = values[k].reduce((a, b) => a + b, 0) / SEEDS;
      const spread = Math.sqrt(values[k].reduce((a, v) => a + (v - mean) ** 2, 0) / (SEEDS - 1));
      const reported = errors[k].reduce((a, b) => a + b, 0) / SEEDS;
      console.log(`${FIT[k].path}: mean ${mean.toFixed(5)} (true ${truth}), spread ${spread.toPrecision(3)}, mean reported SE ${reported.toPrecision(3)}, ratio ${(reported / spread).toFixed(3)}`);
      expect(reported / spread).toBeGreaterThan(0.7);
      expect(reported / spread).toBeLessThan(1.3);
      // No bias beyond what 50 fits can resolve: the mean lies within 3 standard errors of the mean.
      expect(Math.abs(mean - truth)).toBeLessThan((3 * spread) / Math.sqrt(SEEDS));
    });
  });
});
