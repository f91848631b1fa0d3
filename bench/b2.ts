/**
 * B2 figures: ions per second through the region driver (the rising part integrated numerically, as
 * the problem demands for this figure, although the default engine has a closed form for it,
 * single thread, sampling excluded; the best of five passes, the one least disturbed by other work on
 * a shared machine), the largest relative error against the independent reference,
 * and the reference ions' flight times; beside them the `odex` solver on the same problem and ions
 * at the same accuracy goal (b2Odex.ts), and the ratio of the two. Beside them, kept apart, the
 * default engine's closed form of the rising stage (src/physics/pulsedStage.ts) on the same ions:
 * its speed, its largest error against the same reference, and its ratio to odex.
 */
import { allocateTraceResult } from '../src/ions/ensemble';
import type { AnalyserModel } from '../src/physics/analyser';
import { samplePopulation } from '../src/ions/population';
import { Fate } from '../src/physics/fates';
import { createTraceCounters } from '../src/physics/regions/contract';
import { traceEnsemble } from '../src/physics/regions/driver';
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
  /** The default engine: the rising stage in closed form (not the integrated figure above). */
  b2_closed_form_ions_per_s: number;
  b2_closed_form_max_rel_err: number;
  b2_closed_form_speedup_vs_odex: number;
}

/** Ions given to odex: enough for a steady figure, few enough to keep the benchmark short. */
const ODEX_IONS = 2000;

export function runB2(repeats = 5): B2Figures {
  const loaded = validatePreset(b2Preset);
  if (!loaded.ok) throw new Error('B2 preset invalid: ' + JSON.stringify(loaded.issues));
  const compiled = compilePreset(loaded.value);
  // The integrated figure: the rising stage integrated numerically, the static regions closed-form.
  const model = { ...compiled.model, integratePulse: true };
  const ensemble = samplePopulation(compiled.population);
  const trace = allocateTraceResult(ensemble.count);
  const timed = (m: AnalyserModel): { seconds: number; steps: number; maxRel: number } => {
    const counters = createTraceCounters();
    traceEnsemble(m, ensemble, trace, { counters }); // warm-up
    let best = Infinity;
    let steps = 0;
    for (let r = 0; r < repeats; r++) {
      counters.axialSteps = 0;
      const start = performance.now();
      traceEnsemble(m, ensemble, trace, { counters });
      best = Math.min(best, (performance.now() - start) / 1000);
      steps = counters.axialSteps;
    }
    let maxRel = 0;
    for (let i = 0; i < ensemble.count; i++) {
      if (trace.fate[i] !== Fate.DETECTED) throw new Error(`B2 ion ${i} not detected (fate ${trace.fate[i]})`);
      const ref = b2ReferenceFlightTime(ensemble.vz0_m_per_s[i]);
      maxRel = Math.max(maxRel, Math.abs(trace.flightTime_s[i] - ref) / ref);
    }
    return { seconds: best, steps, maxRel };
  };
  const integrated = timed(model);
  const { maxRel, steps } = integrated;
  const closed = timed(compiled.model);
  if (closed.steps !== 0) throw new Error('B2 closed form took integrator steps');
  const refIon = (v0: number) => traceSingleIon(model, 5000, 0, v0).t * 1e9;
  const odex = runB2Odex(ensemble.vz0_m_per_s.subarray(0, ODEX_IONS));
  const ionsPerSecond = Math.round(ensemble.count / integrated.seconds);
  const closedIonsPerSecond = Math.round(ensemble.count / closed.seconds);
  return {
    b2_ions_per_s: ionsPerSecond,
    b2_max_rel_err: maxRel,
    b2_t_ref_v0_200_ns: refIon(200),
    b2_t_ref_v0_500_ns: refIon(500),
    b2_t_ref_v0_800_ns: refIon(800),
    b2_steps_per_ion: steps / ensemble.count,
    ...odex,
    b2_speedup_vs_odex: Math.round((10 * ionsPerSecond) / odex.b2_odex_ions_per_s) / 10,
    b2_closed_form_ions_per_s: closedIonsPerSecond,
    b2_closed_form_max_rel_err: closed.maxRel,
    b2_closed_form_speedup_vs_odex: Math.round((10 * closedIonsPerSecond) / odex.b2_odex_ions_per_s) / 10,
  };
}
