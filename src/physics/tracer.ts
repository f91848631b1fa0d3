/**
 * Entry points of the mixed tracer under their earlier names: each region with the closed form
 * where its field allows it (source stages with rising potentials included), by numerical
 * integration where it does not (polynomial mirrors, solved fields), or everywhere when the model
 * asks for the integrator as a cross-check. A thin wrapper over the region model's driver
 * (src/physics/regions/driver.ts), kept only for the solved-field tests and benchmark that still
 * call it (the run and the other benchmarks call `traceEnsemble`).
 */
import type { AnalyserModel } from './analyser';
import { traceEnsemble } from './regions/driver';
import { legacyTally } from './regions/legacyTally';
import type { MirrorMapReport } from './solvedMirrorMap';
import type { Ensemble, TraceResult } from '../ions/ensemble';

/**
 * Trace every ion of `ens` with the mixed kernel choice, writing into `out`. Returns how the run's
 * transfer map crossed a solved mirror (ions mapped and traced, and why not), or null without one.
 */
export function traceMixed(model: AnalyserModel, ens: Ensemble, out: TraceResult): MirrorMapReport | null {
  let report: MirrorMapReport | null = null;
  traceEnsemble(model, ens, out, { engine: 'mixed', counters: legacyTally, onMirrorMap: (r) => (report = r) });
  return report;
}
