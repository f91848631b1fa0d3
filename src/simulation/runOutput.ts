/** Turns a simulation result into the engine service's `RunOutput` (shared by the worker and in-process callers). */
import type { RunOutput, RunRequest } from '../tuning/api';
import { pulseReach } from './pulseReach';
import { simulate } from './run';
import { speciesIonStart } from './report';

export function runRequest(request: RunRequest, now: () => number = () => performance.now()): RunOutput {
  const start = now();
  const result = simulate(request.preset, { ions: request.ions, seed: request.seed, analysis: request.analysis });
  return {
    report: result.report,
    flightTime_s: result.trace.flightTime_s,
    fate: result.trace.fate,
    // Per reported species (a species' isotope peaks together), matching report.species.
    speciesStart: speciesIonStart(result.ensemble),
    elapsed_ms: now() - start,
    ...(request.pulseReach ? { pulseReach: pulseReach(request.preset, { ions: request.ions, seed: request.seed }) } : {}),
  };
}

/** Buffers of a RunOutput, for zero-copy transfer out of a worker. */
export function runOutputTransferables(out: RunOutput): ArrayBuffer[] {
  return [out.flightTime_s.buffer, out.fate.buffer, out.speciesStart.buffer] as ArrayBuffer[];
}
