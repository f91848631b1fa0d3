/**
 * B1 figures: ions traced per second by the exact engine on one thread (population sampling is
 * timed separately and not included), and the reference ion's flight time.
 */
import { allocateEnsemble, allocateTraceResult } from '../src/ions/ensemble';
import { samplePopulation } from '../src/ions/population';
import { traceEnsemble } from '../src/physics/regions/driver';
import { Fate } from '../src/physics/fates';
import { compilePreset } from '../src/presets/compile';
import { validatePreset } from '../src/presets/load';
import { b1Preset, B1_REFERENCE } from './problems/b1';

export interface B1Figures {
  b1_ions_per_s: number;
  b1_t_ref_ns: number;
  b1_sample_ions_per_s: number;
  b1_detected_fraction: number;
  /**
   * Population sampling of the same ions measured as the trace is (warm, best of `repeats`), so the
   * two can be compared; b1_sample_ions_per_s is the first, cold pass.
   */
  sample_ions_per_s: number;
}

export function runB1(repeats = 5): B1Figures {
  const loaded = validatePreset(b1Preset);
  if (!loaded.ok) throw new Error('B1 preset invalid: ' + JSON.stringify(loaded.issues));
  const { model, population } = compilePreset(loaded.value);

  const t0 = performance.now();
  const ensemble = samplePopulation(population);
  const sampleSeconds = (performance.now() - t0) / 1000;

  const trace = allocateTraceResult(ensemble.count);
  traceEnsemble(model, ensemble, trace); // warm-up: let the JIT optimise the kernels
  let best = Infinity;
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    traceEnsemble(model, ensemble, trace);
    best = Math.min(best, (performance.now() - start) / 1000);
  }
  let bestSample = Infinity;
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    samplePopulation(population);
    bestSample = Math.min(bestSample, (performance.now() - start) / 1000);
  }
  let detected = 0;
  for (let i = 0; i < ensemble.count; i++) if (trace.fate[i] === Fate.DETECTED) detected++;

  const ref = allocateEnsemble(ensemble.species, [1]);
  ref.z0_m[0] = B1_REFERENCE.z0_m;
  ref.vz0_m_per_s[0] = B1_REFERENCE.v0_m_per_s;
  const refTrace = allocateTraceResult(1);
  traceEnsemble(model, ref, refTrace);
  if (refTrace.fate[0] !== Fate.DETECTED) throw new Error('B1 reference ion was not detected');

  return {
    b1_ions_per_s: Math.round(ensemble.count / best),
    b1_t_ref_ns: refTrace.flightTime_s[0] * 1e9,
    b1_sample_ions_per_s: Math.round(ensemble.count / sampleSeconds),
    b1_detected_fraction: detected / ensemble.count,
    sample_ions_per_s: Math.round(ensemble.count / bestSample),
  };
}
