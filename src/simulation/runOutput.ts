/** Turns a simulation result into the run contract's `RunOutput` (shared by the worker and in-process callers). */
import { focusScan } from '../analysis/focusScan';
import { allocateTraceResult, type TraceResult } from '../ions/ensemble';
import { applyDetectorPlane } from '../physics/exactEngine';
import { traceEnsemble } from '../physics/regions/driver';
import type { MirrorMapReport } from '../physics/solvedMirrorMap';
import type { RunExtras, RunExtrasRequest, RunOutput, RunRequest } from './runContract';
import { compilePresetKept } from '../presets/compileCache';
import { samplePopulation } from '../ions/population';
import { compileFragments } from '../presets/compileFragments';
import { acquisitionSettings, focusSection, measureSpeciesPeak, type SpectrumPeakReport } from './analysisReport';
import { peakBlocksByCost } from './peaksShare';
import { pulseReach } from './pulseReach';
import { simulate } from './run';
import { speciesIonStart } from './report';
import { runScene } from './scene/runScene';
import { sceneTransferables } from './scene/sceneData';
import { productArrays, productTransferables } from './productArrays';
import { traceFragmentScene } from './fragmentScene';
import { fragmentSceneTransferables } from './fragmentSceneData';

/** `traced`: the run's per-ion trace when it was computed elsewhere (a split run, src/simulation/runChunks.ts); `mirrorMap`: then how it crossed a solved mirror. */
export function runRequest(request: RunRequest, now: () => number = () => performance.now(), traced?: TraceResult, mirrorMap?: MirrorMapReport): RunOutput {
  const start = now();
  const result = simulate(request.preset, {
    ions: request.ions,
    seed: request.seed,
    analysis: request.analysis,
    focus: request.focus,
    givenPeaks: request.givenPeaks,
    ...(traced ? { traced } : {}),
    ...(mirrorMap ? { mirrorMap } : {}),
  });
  const elapsed_ms = now() - start;
  const scene = request.scene ? runScene(request.preset, result.compiled, request.scene) : null;
  return {
    report: result.report,
    flightTime_s: result.trace.flightTime_s,
    fate: result.trace.fate,
    // Per reported species (a species' isotope peaks together), matching report.species.
    speciesStart: speciesIonStart(result.ensemble),
    // The engine's time for the run itself (the status line's figure); the extras below are not in it.
    elapsed_ms,
    ...(request.pulseReach ? { pulseReach: pulseReach(request.preset, { ions: request.ions, seed: request.seed }) } : {}),
    ...(request.focusScan ? { focusScan: focusScan(result.compiled.model, request.preset) } : {}),
    ...(scene ? { scene } : {}),
    ...(scene && result.fragments ? { fragmentScene: traceFragmentScene(result.compiled, result.fragments.model, scene.layout) } : {}),
    ...(result.fragments ? { products: productArrays(result.fragments.trace, result.fragments.report, (d) => result.fragments!.model.blocks[d].species) } : {}),
  };
}

/**
 * The parts of a run that read nothing of its per-ion trace: the focus section, the focus scan, the
 * scene (and the decay products' paths). Each is what runRequest would have put in its output for
 * the same request (the same functions on the same compiled model), so a page may draw the run's
 * charts first and these when they come.
 */
export function runExtras(request: RunExtrasRequest, now: () => number = () => performance.now()): RunExtras {
  const start = now();
  const compiled = compilePresetKept(request.preset);
  const population = { ...compiled.population, totalIons: request.ions ?? compiled.population.totalIons, seed: request.seed ?? compiled.population.seed };
  const withPopulation = { ...compiled, population };
  const scene = request.scene ? runScene(request.preset, withPopulation, request.scene) : null;
  // The decay model is per species block of the ensemble (isotope peaks included); the worker keeps its last samples.
  const fragments = scene && request.preset.ions.species.some((s) => s.decay) ? compileFragments(request.preset, samplePopulation(population).species) : null;
  return {
    ...(request.focus ? { focus: focusSection(request.preset, compiled.model, population) } : {}),
    ...(request.focusScan ? { focusScan: focusScan(compiled.model, request.preset) } : {}),
    ...(scene ? { scene } : {}),
    ...(scene && fragments ? { fragmentScene: traceFragmentScene(withPopulation, fragments, scene.layout) } : {}),
    elapsed_ms: now() - start,
  };
}

/**
 * The spectrum peaks of part `part` of `parts` of a run's species blocks (peakBlocksByCost, by their estimated cost on this trace; null for
 * the other blocks, and for blocks without a detected ion), each as the run measures it, and the
 * trace they were measured on (which the finishing run may take as `traced`). Only for runs whose
 * trace is simulate()'s trace, detector plane applied, and nothing more (no ion load, no decay, no
 * solved region): the page shares the most costly part of an exact run, the
 * simulated digitizer's spectra, over two workers, then finishes it with `givenPeaks`.
 */
export function speciesPeaksPart(request: RunRequest, part: number, parts: number): { readonly peaks: (SpectrumPeakReport | null)[]; readonly trace: TraceResult } {
  // simulate()'s trace without its report: sample, trace, detector plane (runs that share their
  // peaks have no ion load, decay or solved region, so nothing else changes the trace).
  const compiled = compilePresetKept(request.preset);
  const ensemble = samplePopulation({ ...compiled.population, totalIons: request.ions ?? compiled.population.totalIons, seed: request.seed ?? compiled.population.seed });
  const trace = allocateTraceResult(ensemble.count);
  traceEnsemble(compiled.model, ensemble, trace);
  applyDetectorPlane(compiled.model, ensemble, trace);
  const mine = peakBlocksByCost(request.preset, trace, ensemble.speciesStart, part, parts);
  const peaks = mine.map((wanted, s) => {
    if (!wanted) return null;
    const from = ensemble.speciesStart[s];
    const to = ensemble.speciesStart[s + 1];
    const own = acquisitionSettings(request.preset, trace, from, to);
    return own ? measureSpeciesPeak(trace, from, to, own) : null;
  });
  return { peaks, trace };
}


/** Buffers of RunExtras, for zero-copy transfer out of a worker. */
export function runExtrasTransferables(out: RunExtras): ArrayBuffer[] {
  return [...(out.scene ? sceneTransferables(out.scene) : []), ...(out.fragmentScene ? fragmentSceneTransferables(out.fragmentScene) : [])] as ArrayBuffer[];
}

/** Buffers of a RunOutput, for zero-copy transfer out of a worker. */
export function runOutputTransferables(out: RunOutput): ArrayBuffer[] {
  return [out.flightTime_s.buffer, out.fate.buffer, out.speciesStart.buffer, ...(out.scene ? sceneTransferables(out.scene) : []), ...(out.products ? productTransferables(out.products) : []), ...(out.fragmentScene ? fragmentSceneTransferables(out.fragmentScene) : [])] as ArrayBuffer[];
}
