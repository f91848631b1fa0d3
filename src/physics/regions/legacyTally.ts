/**
 * A process-wide tally of integration effort for the callers that read the engine's older
 * counters (numericRegions `counters`, the solved tracer's `solvedCounters`: an existing test and
 * benchmarks read them after a run). Only the compatibility entry points (traceExact, traceMixed,
 * the single-crossing functions) add to it; the driver writes to the counters its caller passes.
 * It is a diagnostic sum: no number of a trace depends on it.
 */
import { createTraceCounters } from './contract';

export const legacyTally = createTraceCounters();
