/**
 * One simulation run of a validated preset: compile, sample the population, trace, report.
 * Shared by the CLI, the worker and the tests, so all give identical numbers for the same seed.
 */
import type { CompiledPreset } from '../presets/compile';
import { compilePresetKept } from '../presets/compileCache';
import type { Preset } from '../presets/schema';
import { allocateTraceResult, type Ensemble, type TraceResult } from '../ions/ensemble';
import { samplePopulation } from '../ions/population';
import { applyDetectorPlane } from '../physics/exactEngine';
import { traceEnsemble } from '../physics/regions/driver';
import type { MirrorMapReport } from '../physics/solvedMirrorMap';
import type { SourceMapReport } from '../physics/solvedSourceMap';
import { attachAnalysis, buildReport, type RunReport } from './report';
import { buildAnalysisSections, type AnalysisSections, type SpectrumPeakReport } from './analysisReport';
import { ionLoadSections, traceIonLoad, type IonLoadReport } from './ionLoad';
import { compileFragments } from '../presets/compileFragments';
import type { FragmentModel } from '../physics/fragments/decayModel';
import { traceFragments, type FragmentTrace } from '../physics/fragments/traceFragments';
import { buildFragmentReports, withProducts, type SpeciesFragmentReport } from './fragmentReport';

export interface RunOptions {
  /** Override the preset's ion count. */
  readonly ions?: number;
  /** Override the preset's seed. */
  readonly seed?: number;
  /** Also return the whole simulated spectrum (needs the preset's acquisition settings). */
  readonly withSpectrum?: boolean;
  /**
   * Build the measurement sections (simulated spectrum, peaks, calibration, focus); default true.
   * Scans, tunes and quick previews that read only the ion statistics turn it off; 'peaks' builds
   * only the per-species spectrum peaks (what a scan ranked by the measured R needs).
   */
  readonly analysis?: boolean | 'peaks';
  /** With the analysis: also its focus section (default true); a page that draws the headline first asks for it apart. */
  readonly focus?: boolean;
  /** Per ensemble species block, its spectrum peak already measured on this run's trace (src/simulation/runOutput.ts, speciesPeaksPart). */
  readonly givenPeaks?: readonly (SpectrumPeakReport | null)[];
  /**
   * The per-ion trace of this run's population, already computed (a run split over workers:
   * src/simulation/runChunks.ts); used in place of tracing. Not for a solved source.
   */
  readonly traced?: TraceResult;
  /** With `traced` through a solved mirror's shared transfer map: how the ions crossed it (the split run's merged report). */
  readonly mirrorMap?: MirrorMapReport;
}

export interface SimulationResult {
  readonly compiled: CompiledPreset;
  readonly ensemble: Ensemble;
  readonly trace: TraceResult;
  readonly report: RunReport;
  readonly analysis: AnalysisSections;
  /** Shots, detector modes and space charge (preset section `ionLoad`); null without it. */
  readonly ionLoad: IonLoadReport | null;
  /** Decay in flight (preset species' `decay`): the model, the traced products and their report; null without decays. */
  readonly fragments: { readonly model: FragmentModel; readonly trace: FragmentTrace; readonly report: SpeciesFragmentReport[] } | null;
}

export function simulate(preset: Preset, options: RunOptions = {}): SimulationResult {
  const compiled = compilePresetKept(preset);
  const population = {
    ...compiled.population,
    totalIons: options.ions ?? compiled.population.totalIons,
    seed: options.seed ?? compiled.population.seed,
  };
  const ensemble = samplePopulation(population);
  const trace = options.traced ?? allocateTraceResult(ensemble.count);
  // The closed form wherever the field allows it (over blocks of ions); ion by ion when some region needs integration.
  const map: { report: MirrorMapReport | null; source: SourceMapReport | null } = { report: null, source: null };
  if (!options.traced) traceEnsemble(compiled.model, ensemble, trace, { onMirrorMap: (r) => (map.report = r), onSourceMap: (r) => (map.source = r) });
  const mirrorMap = options.traced ? (options.mirrorMap ?? null) : map.report;
  const sourceMap = map.source;
  applyDetectorPlane(compiled.model, ensemble, trace);
  // With space charge on, the ions are retraced shot by shot (the headline then includes it).
  const load = traceIonLoad(preset, compiled.model, ensemble, trace, population.seed);
  // Metastable decay: precursors that fall apart become DECAYED, their products are traced on.
  const fragmentModel = compileFragments(preset, ensemble.species);
  const fragmentTrace = fragmentModel ? traceFragments(compiled.model, fragmentModel, ensemble, trace, population.seed) : null;
  const sortedTimes: Float64Array[] = [];
  const report = buildReport(ensemble, trace, sortedTimes);
  const analysis =
    options.analysis === false
      ? noAnalysis(ensemble)
      : buildAnalysisSections(
          preset,
          compiled.model,
          population,
          ensemble,
          trace,
          report.species.map((s) => (s.flightTime_ns === null ? null : s.flightTime_ns * 1e-9)),
          {
            withSpectrum: options.withSpectrum,
            peaksOnly: options.analysis === 'peaks',
            focus: options.focus,
            sortedTimes,
            givenPeaks: options.givenPeaks,
            ...(fragmentTrace ? { spectrumTrace: withProducts(trace, fragmentTrace) } : {}),
          },
        );
  const ionLoad = load && options.analysis !== false ? ionLoadSections(preset, compiled.model, ensemble, trace, load, population.seed) : null;
  const analysed = { ...attachAnalysis(report, analysis), ...(ionLoad ? { ionLoad } : {}), ...(mirrorMap ? { solvedMirrorMap: mirrorMap } : {}), ...(sourceMap ? { solvedSourceMap: sourceMap } : {}) };
  const fragmentReport = fragmentModel && fragmentTrace ? buildFragmentReports(preset, fragmentModel, fragmentTrace, ensemble, analysed) : null;
  const withFragments = fragmentReport
    ? { ...analysed, species: analysed.species.map((s, k) => ({ ...s, ...withChannels(fragmentReport, k) })) }
    : analysed;
  return {
    compiled: { ...compiled, population },
    ensemble,
    trace,
    report: withFragments,
    analysis,
    ionLoad,
    fragments: fragmentModel && fragmentTrace && fragmentReport ? { model: fragmentModel, trace: fragmentTrace, report: fragmentReport } : null,
  };
}

function withChannels(reports: readonly SpeciesFragmentReport[], species: number) {
  const own = reports.find((r) => r.species === species);
  return own ? { fragments: own.channels } : {};
}

function noAnalysis(ensemble: Ensemble): AnalysisSections {
  return { speciesPeaks: ensemble.species.map(() => null), calibration: null, focus: null, spectrum: null };
}
