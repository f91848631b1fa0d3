/**
 * One run split over several workers with the numbers of one worker. Every worker samples the whole
 * population with the run's seed (sampling is cheap next to tracing, and a species' ions come from
 * its own stream, so every worker sees the same ions), traces one contiguous chunk of them in ion
 * order, and the chunks are concatenated in ion order; one worker then finishes the run on the
 * concatenated trace (detector plane, ion load, fragments, report, analysis: runRequest with
 * `traced`). Each ion's trace depends on that ion only, so the result is bit-identical to an
 * unsplit run (tests/simulation/runChunks.test.ts and the browser test check it).
 *
 * Runs through a solved field are not split: the mirror's transfer map learns from the run's first
 * ions in order (src/physics/solvedMirrorMap.ts), so chunks would each fit a map of their own and
 * give other numbers. Those runs go to one worker.
 */
import { allocateTraceResult } from '../ions/ensemble';
import { samplePopulation } from '../ions/population';
import { needsIntegrator } from '../physics/analyser';
import { traceEnsemble } from '../physics/regions/driver';
import { legacyTally } from '../physics/regions/legacyTally';
import { compilePreset } from '../presets/compile';
import type { RunRequest } from './runContract';
import { splitsOverWorkers, type TraceChunk } from './runChunkPlan';

export { chunkBounds, chunkCount, concatChunks, MIN_CHUNK_IONS, splitsOverWorkers, traceTransferables, type SplitRunTasks, type TraceChunk } from './runChunkPlan';

/** Sample the run's whole population and trace ions [from, to), as simulate() traces them. */
export function traceRunChunk(request: RunRequest, from: number, to: number, now: () => number = () => performance.now()): TraceChunk {
  const start = now();
  if (!splitsOverWorkers(request.preset)) throw new Error('a run through a solved field is not split over workers');
  const compiled = compilePreset(request.preset);
  const population = {
    ...compiled.population,
    totalIons: request.ions ?? compiled.population.totalIons,
    seed: request.seed ?? compiled.population.seed,
  };
  const ensemble = samplePopulation(population);
  if (!(from >= 0 && from <= to && to <= ensemble.count)) throw new Error(`chunk [${from}, ${to}) is outside the run's ${ensemble.count} ions`);
  const trace = allocateTraceResult(ensemble.count);
  // The same choices as traceMixed and traceExact (src/physics/tracer.ts, exactEngine.ts), for a range.
  if (needsIntegrator(compiled.model)) traceEnsemble(compiled.model, ensemble, trace, { engine: 'mixed', counters: legacyTally, from, to });
  else traceEnsemble(compiled.model, ensemble, trace, { counters: legacyTally, transferMap: false, from, to });
  return {
    from,
    to,
    flightTime_s: trace.flightTime_s.slice(from, to),
    fate: trace.fate.slice(from, to),
    finalSpeed_m_per_s: trace.finalSpeed_m_per_s.slice(from, to),
    weight: trace.weight.slice(from, to),
    detectorX_m: trace.detectorX_m.slice(from, to),
    detectorY_m: trace.detectorY_m.slice(from, to),
    elapsed_ms: now() - start,
  };
}

