/**
 * One run split over several workers with the numbers of one worker. Every worker samples the whole
 * population with the run's seed (sampling is cheap next to tracing, and a species' ions come from
 * its own stream, so every worker sees the same ions), traces one contiguous chunk of them in ion
 * order, and the chunks are concatenated in ion order; one worker then finishes the run on the
 * concatenated trace (detector plane, ion load, fragments, report, analysis: runRequest with
 * `traced`). Each ion's trace depends on that ion only, so the result is bit-identical to an
 * unsplit run (tests/simulation/runChunks.test.ts and the browser test check it).
 *
 * A solved mirror's transfer map learns from the run's first ions of each species in order
 * (src/physics/solvedMirrorMap.ts), so chunks fitting maps of their own would give other numbers
 * (measured before this: 4 chunks moved 8454 of 2·10^4 flight times of the gridless demo, by up to
 * 1.8e-6). Instead the map of each species is fitted by one worker (fitRunMap: the species' ions
 * in order until its map is decided, as the unsplit run traces them; the species spread over the
 * workers, mergeMapFits joins them) and every worker restores the snapshot (plain arrays); from
 * there on every ion's crossing depends on that ion alone, so the chunks, skipping the ions the
 * fitting worker traced, give the unsplit run's numbers bit for bit. Runs through a solved source,
 * and runs whose integrator carries its first step from ion to ion, are not split (splitRefusal).
 */
import { allocateTraceResult, type Ensemble, type TraceResult } from '../ions/ensemble';
import { samplePopulation } from '../ions/population';
import { needsIntegrator, type AnalyserModel } from '../physics/analyser';
import { traceEnsemble, usesTransferMap } from '../physics/regions/driver';
import { chargeToMassIn } from '../physics/regions/plan';
import { legacyTally } from '../physics/regions/legacyTally';
import { SolvedFieldTracer } from '../physics/regions/solvedTracer';
import { SolvedMirrorMapper } from '../physics/solvedMirrorMap';
import { compilePresetKept } from '../presets/compileCache';
import type { RunRequest } from './runContract';
import { splitRefusal, type RunMapFit, type RunMapShare, type TraceChunk } from './runChunkPlan';

export {
  balancedBounds,
  chunkBounds,
  chunkCount,
  concatChunks,
  hasSolvedMirror,
  mapFitTransferables,
  mapShare,
  mergeMapFits,
  mergeMirrorMapReports,
  MIN_CHUNK_IONS,
  overlayFitted,
  splitRefusal,
  splitsOverWorkers,
  traceTransferables,
  type RunMapFit,
  type RunMapShare,
  type SplitRunTasks,
  type TraceChunk,
} from './runChunkPlan';

/** Ions the fitting worker traces between checks whether every species' map is decided. */
const FIT_BLOCK_IONS = 100;

/** The run's model and its whole population, as simulate() samples it. */
function sampleRun(request: RunRequest): { model: AnalyserModel; ensemble: Ensemble } {
  const refusal = splitRefusal(request.preset);
  if (refusal !== null) throw new Error(refusal);
  const compiled = compilePresetKept(request.preset);
  const population = {
    ...compiled.population,
    totalIons: request.ions ?? compiled.population.totalIons,
    seed: request.seed ?? compiled.population.seed,
  };
  return { model: compiled.model, ensemble: samplePopulation(population) };
}

function chunkOf(trace: TraceResult, from: number, to: number, elapsed_ms: number): TraceChunk {
  return {
    from,
    to,
    flightTime_s: trace.flightTime_s.slice(from, to),
    fate: trace.fate.slice(from, to),
    finalSpeed_m_per_s: trace.finalSpeed_m_per_s.slice(from, to),
    weight: trace.weight.slice(from, to),
    detectorX_m: trace.detectorX_m.slice(from, to),
    detectorY_m: trace.detectorY_m.slice(from, to),
    elapsed_ms,
  };
}

/**
 * Sample the run's whole population and trace ions [from, to), as simulate() traces them. With a
 * solved mirror's transfer map the run must pass `map` (from fitRunMap on the same request): the
 * chunk's ions that the fitting worker traced are skipped (left zero), the others cross by the
 * restored map, and the chunk says how (`mirrorMap`).
 */
export function traceRunChunk(request: RunRequest, from: number, to: number, map?: RunMapShare, now: () => number = () => performance.now()): TraceChunk {
  const start = now();
  const { model, ensemble } = sampleRun(request);
  if (!(from >= 0 && from <= to && to <= ensemble.count)) throw new Error(`chunk [${from}, ${to}) is outside the run's ${ensemble.count} ions`);
  const trace = allocateTraceResult(ensemble.count);
  const mirror = model.mirror?.solved;
  if (mirror && usesTransferMap(model, ensemble.count)) {
    if (!map) throw new Error("a chunk of a run through a solved mirror needs the run's transfer map (fitRunMap)");
    const mapper = SolvedMirrorMapper.restore(mirror, map.snapshot, new SolvedFieldTracer(legacyTally));
    for (const [a, b] of rangesBesides(from, to, map.fittedRanges)) traceEnsemble(model, ensemble, trace, { counters: legacyTally, from: a, to: b, mirrorMap: mapper });
    return { ...chunkOf(trace, from, to, now() - start), mirrorMap: { ...mapper.report, species: mapper.report.species.map((s) => ({ ...s })) } };
  }
  // The same choices as traceMixed and traceExact (src/physics/tracer.ts, exactEngine.ts), for a range.
  if (needsIntegrator(model) || mirror) traceEnsemble(model, ensemble, trace, { engine: 'mixed', counters: legacyTally, transferMap: false, from, to });
  else traceEnsemble(model, ensemble, trace, { counters: legacyTally, transferMap: false, from, to });
  return chunkOf(trace, from, to, now() - start);
}

/** [from, to) less the ([a, b) pairs) ranges `skip`, as ranges in order. */
function rangesBesides(from: number, to: number, skip: readonly number[]): Array<[number, number]> {
  const pairs: Array<[number, number]> = [];
  for (let k = 0; k < skip.length; k += 2) pairs.push([skip[k], skip[k + 1]]);
  pairs.sort((p, q) => p[0] - q[0]);
  const out: Array<[number, number]> = [];
  let at = from;
  for (const [a, b] of pairs) {
    if (b <= at || a >= to) continue;
    if (a > at) out.push([at, a]);
    at = Math.max(at, b);
  }
  if (at < to) out.push([at, to]);
  return out;
}

/**
 * The run's solved-mirror transfer map fitted on one worker: each species' ions traced in order,
 * as the unsplit run traces them, until its map is decided (in use or refused; checked every
 * FIT_BLOCK_IONS ions), then the snapshot. Null when the run uses no map (every ion traced on its own).
 */
export function fitRunMap(request: RunRequest, part = 0, parts = 1, now: () => number = () => performance.now()): RunMapFit | null {
  const start = now();
  const { model, ensemble } = sampleRun(request);
  const mirror = model.mirror?.solved;
  if (!mirror || !usesTransferMap(model, ensemble.count)) return null;
  const mapper = new SolvedMirrorMapper(mirror, new SolvedFieldTracer(legacyTally), model.mirror?.returnLength_m ?? 0);
  const trace = allocateTraceResult(ensemble.count);
  const ranges: Array<[number, number]> = [];
  const rest: number[] = [];
  // One map per q/m (the flight's, chargeToMassIn): species sharing one are fitted together, groups spread over the parts.
  const ks = ensemble.species.map((sp) => chargeToMassIn(model, sp.mz));
  const groups = [...new Set(ks)];
  for (let s = 0; s < ensemble.species.length; s++) {
    if (groups.indexOf(ks[s]) % parts !== part) continue;
    const a = ensemble.speciesStart[s];
    const end = ensemble.speciesStart[s + 1];
    let b = a;
    while (b < end && !mapper.settled(ks[s])) {
      const next = Math.min(end, b + FIT_BLOCK_IONS);
      traceEnsemble(model, ensemble, trace, { counters: legacyTally, from: b, to: next, mirrorMap: mapper });
      b = next;
    }
    if (b > a) ranges.push([a, b]);
    if (b < end && mapper.settled(ks[s])) rest.push(b, end);
  }
  const elapsed_ms = now() - start;
  const species = mapper.report.species.map((s) => ({ ...s }));
  return {
    fitted: ranges.map(([a, b]) => chunkOf(trace, a, b, elapsed_ms)),
    snapshot: mapper.snapshot(),
    report: { ...mapper.report, species },
    firstIon: species.map((r) => ensemble.speciesStart[ks.indexOf(r.qOverM_C_per_kg)]),
    open: species.map((r) => !mapper.settled(r.qOverM_C_per_kg)),
    tracedShare: species.map((r) => mapper.tracedShare(r.qOverM_C_per_kg)),
    rest,
  };
}
