/**
 * B2 figures: ions per second through the mixed tracer (the rising part integrated numerically,
 * single thread, sampling excluded; the best of five passes, the one least disturbed by other work on
 * a shared machine), the largest relative error against the independent reference,
 * and the reference ions' flight times; beside them the `odex` solver on the same problem and ions
 * at the same accuracy goal (b2Odex.ts), and the ratio of the two.
 */
import { allocateTraceResult } from '../src/ions/ensemble';
import { samplePopulation } from '../src/ions/population';
import { Fate } from '../src/physics/fates';
import { counters } from '../src/physics/numericRegions';
import { traceMixed } from '../src/physics/tracer';
import { compilePreset } from '../src/presets/compile';
import { validatePreset } from '../src/presets/load';
import { b2Preset, b2ReferenceFlightTime } from './problems/b2';
import { traceSingleIon } from '../src/simulation/singleIon';
import { runB2Odex, type B2OdexFigures } from './b2Odex';

export interface B2Figures extends B2OdexFigures {
  b2_ions_per_s: number;
  b2_max_rel_err: number;
  b2_t_ref_v0_200_ns: number;
  b2_t_ref_v0_500_ns: number;
  b2_t_ref_v0_800_ns: number;
  b2_steps_per_ion: number;
  /** b2_ions_per_s over odex's figure on the same problem (b2Odex.ts), measured in the same run. */
  b2_speedup_vs_odex: number;
}

/** Ions given to odex: enough for a steady figure, few enough to keep the benchmark short. */
const ODEX_IONS = 2000;

export function runB2(repeats = 5): B2Figures {
  const loaded = validatePreset(b2Preset);
  if (!loaded.ok) throw new Error('B2 preset invalid: ' + JSON.stringify(loaded.issues));
  const { model, population } = compilePreset(loaded.value);
  const ensemble = samplePopulation(population);
  const trace = allocateTraceResult(ensemble.count);
  traceMixed(model, ensemble, trace); // warm-up
  let best = Infinity;
  let steps = 0;
  for (let r = 0; r < repeats; r++) {
    counters.steps = 0;
    const start = performance.now();
    traceMixed(model, ensemble, trace);
    best = Math.min(best, (performance.now() - start) / 1000);
    steps = counters.steps;
  }
  let maxRel = 0;
  for (let i = 0; i < ensemble.count; i++) {
    if (trace.fate[i] !== Fate.DETECTED) throw new Error(`B2 ion ${i} not detected (fate ${trace.fate[i]})`);
    const ref = b2ReferenceFlightTime(ensemble.vz0_m_per_s[i]);
    maxRel = Math.max(maxRel, Math.abs(trace.flightTime_s[i] - ref) / ref);
  }
  const refIon = (v0: number) => traceSingleIon(model, 5000, 0, v0).t * 1e9;
  const odex = runB2Odex(ensemble.vz0_m_per_s.subarray(0, ODEX_IONS));
  const ionsPerSecond = Math.round(ensemble.count / best);
  return {
    b2_ions_per_s: ionsPerSecond,
    b2_max_rel_err: maxRel,
    b2_t_ref_v0_200_ns: refIon(200),
    b2_t_ref_v0_500_ns: refIon(500),
    b2_t_ref_v0_800_ns: refIon(800),
    b2_steps_per_ion: steps / ensemble.count,
    ...odex,
    b2_speedup_vs_odex: Math.round((10 * ionsPerSecond) / odex.b2_odex_ions_per_s) / 10,
  };
}
