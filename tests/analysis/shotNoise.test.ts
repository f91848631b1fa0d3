/**
 * The spectrum peak of few ions under a narrow detector pulse: its FWHM must be the envelope's, not
 * that of the tallest shot-noise spike. Reference: a gaussian arrival-time distribution of sd σ seen
 * through a gaussian response of sd σr has FWHM 2·sqrt(2 ln 2)·sqrt(σ² + σr²) (convolution of
 * gaussians; textbook).
 */
import { describe, expect, it } from 'vitest';
import { Fate } from '../../src/physics/fates';
import { effectivePulseSd_s, GAUSSIAN_FWHM_PER_SD } from '../../src/analysis/detectorResponse';
import { buildSpectrum, type AcquisitionSettings } from '../../src/analysis/spectrum';
import { measurePeak } from '../../src/analysis/peaks';
import { shotNoiseSmoothing } from '../../src/analysis/shotNoise';
import { measureSpeciesPeak } from '../../src/simulation/analysisReport';
import type { TraceResult } from '../../src/ions/ensemble';

/** Gaussian arrivals about t0 (Box–Muller on a fixed linear congruential stream: deterministic). */
function gaussianTrace(n: number, t0_s: number, sd_s: number, seed: number): TraceResult {
  let state = seed >>> 0;
  const uniform = (): number => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return (state + 0.5) / 4294967296;
  };
  const flightTime_s = new Float64Array(n);
  for (let i = 0; i < n; i++) flightTime_s[i] = t0_s + sd_s * Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
  return { flightTime_s, fate: new Uint8Array(n).fill(Fate.DETECTED), weight: new Float64Array(n).fill(1) } as unknown as TraceResult;
}

const T0 = 60e-6;
const SD = 17e-9; // a 40 ns FWHM peak, as in a poorly focused mirror
const settings = (trace: TraceResult): AcquisitionSettings => {
  let lo = Infinity;
  let hi = -Infinity;
  for (const t of trace.flightTime_s) {
    lo = Math.min(lo, t);
    hi = Math.max(hi, t);
  }
  return { pulseFwhm_s: 1e-9, detectorJitterSd_s: 0.1e-9, triggerJitterSd_s: 0, shots: 1, seed: 1, sampleInterval_s: 0.25e-9, recordStart_s: lo - 20e-9, recordLength_s: hi - lo + 40e-9 };
};

describe('spectrum peak FWHM with few ions (shot noise)', () => {
  for (const n of [2000, 20_000]) {
    it(`${n} ions: the FWHM is within 4 % of the envelope's, on every one of five seeds`, () => {
      for (let seed = 1; seed <= 5; seed++) {
        const trace = gaussianTrace(n, T0, SD, seed);
        const own = settings(trace);
        const truth = GAUSSIAN_FWHM_PER_SD * Math.hypot(SD, effectivePulseSd_s(own));
        const peak = measureSpeciesPeak(trace, 0, n, own)!;
        expect(Math.abs(peak.fwhm_ns! * 1e-9 - truth) / truth).toBeLessThan(0.04);
      }
    });
  }

  it('the tallest-sample measurement without the widening is what went wrong (too narrow by > 8 % at 2000 ions)', () => {
    const trace = gaussianTrace(2000, T0, SD, 1);
    const own = settings(trace);
    const spec = buildSpectrum({ arrival_s: trace.flightTime_s, fate: trace.fate, weight: trace.weight }, own);
    let apex = 0;
    for (let k = 1; k < spec.intensity.length; k++) if (spec.intensity[k] > spec.intensity[apex]) apex = k;
    const raw = measurePeak(spec.time_s, spec.intensity, apex, 0, spec.intensity.length - 1).fwhm_s!;
    const truth = GAUSSIAN_FWHM_PER_SD * Math.hypot(SD, effectivePulseSd_s(own));
    expect(raw).toBeLessThan(0.92 * truth);
  });

  it('dense, narrow peaks are measured as before (no widening)', () => {
    expect(shotNoiseSmoothing(5000, 0.42e-9, 0.44e-9)).toEqual({ sd_s: 0, limited: false });
    expect(shotNoiseSmoothing(2000, SD, 0.44e-9).sd_s).toBeGreaterThan(0);
  });
});
