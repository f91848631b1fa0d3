/**
 * Measured-spectrum fit figures (one thread, in this process): the recovery problem of the tests
 * (tests/measured/recoveryFixture.ts: an invented linear instrument, a measured spectrum with a hidden
 * 42 ns delay, a 1.5 mm longer drift tube and a 1.6 ns detector pulse, 2000 counts per peak with
 * Poisson noise), fitted from the nominal preset for the three parameters at 6000 ions per simulation.
 * - measured_fit_s: wall time of one fit (best of three passes: the machine is shared);
 * - measured_fit_simulations: simulations the fit ran;
 * - measured_fit_max_error_se: the largest |fitted − hidden| in standard errors (a check, not a speed).
 */
import { analyseMeasured } from '../src/measured/analyse';
import { expectedSpectrum, noisySpectrum, testPreset } from '../tests/measured/recoveryFixture';

export interface MeasuredFigures {
  measured_fit_s: number;
  measured_fit_simulations: number;
  measured_fit_max_error_se: number;
}

export function runMeasuredBench(): MeasuredFigures {
  const hidden = { timeOffset_ns: 42, driftLength_mm: 1201.5, pulseWidth_ns: 1.6 };
  const truth = [hidden.timeOffset_ns, hidden.driftLength_mm, hidden.pulseWidth_ns];
  const spectrum = noisySpectrum(expectedSpectrum(testPreset(hidden), 2000), 1);
  const nominal = testPreset({ seed: 11 });
  const fit = [{ path: 'acquisition.timeOffset_ns' }, { path: 'drift.length_mm', min: 1190, max: 1210 }, { path: 'acquisition.pulseWidth_ns', min: 0, max: 5 }];
  let best = Infinity;
  let result = null;
  for (let pass = 0; pass < 3; pass++) {
    const t0 = performance.now();
    result = analyseMeasured(nominal, spectrum, { fit }).fit!;
    best = Math.min(best, (performance.now() - t0) / 1000);
  }
  const maxError = Math.max(...result!.parameters.map((p, k) => Math.abs(p.value - truth[k]) / (p.standardError ?? NaN)));
  return {
    measured_fit_s: Math.round(best * 1000) / 1000,
    measured_fit_simulations: result!.simulations,
    measured_fit_max_error_se: Math.round(maxError * 100) / 100,
  };
}
