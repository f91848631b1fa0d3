/**
 * The ion-load part of a run (preset section `ionLoad`): the ensemble split into shots, the
 * space-charge trace that replaces the lone-ion trace when the sheet model is on (the lone-ion
 * trace is kept as the comparison), the detector modes, and the report sections `detection` and
 * `spaceCharge` (with the resolving-power-versus-load sweep). Units at this boundary: ns, mm, ppm.
 */
import { buildSpectrum } from '../analysis/spectrum';
import { measurePeak } from '../analysis/peaks';
import { simulateDetection, type MeasuredPeak } from '../analysis/acquisition/detection';
import { partitionShots, type ShotPartition } from '../analysis/acquisition/shots';
import type { DetectionYieldLaw } from '../analysis/acquisition/detectionYield';
import { allocateTraceResult, type Ensemble, type TraceResult } from '../ions/ensemble';
import type { AnalyserModel } from '../physics/analyser';
import { applyDetectorPlane } from '../physics/exactEngine';
import { Fate } from '../physics/fates';
import { traceWithSpaceCharge } from '../physics/spaceCharge/traceShots';
import type { Preset } from '../presets/schema';
import { acquisitionSettings } from './analysisReport';
import { buildReport, type SpeciesReport } from './report';

export interface IonLoadTrace {
  readonly partition: ShotPartition;
  /** The same ions flown alone (no space charge); null when space charge is off. */
  readonly alone: TraceResult | null;
  readonly sheetEvents: number;
  readonly largestShot: number;
}

export interface PeakFigures {
  /** Centroid above half height. */
  readonly centroid_ns: number;
  /** First moment over the species' window (the shifts below compare these). */
  readonly mean_ns: number;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  readonly height: number;
  readonly area: number;
}

export interface DetectionSpecies {
  readonly label: string;
  readonly mz: number;
  /** Ions that reached the active area, and of those the ones that gave a pulse (detection yield applied). */
  readonly arrived: number;
  readonly events: number;
  readonly detectionEfficiency: number;
  /** Counting: events counted after dead time, and the part lost. */
  readonly counted: number;
  readonly countsLost: number;
  readonly countsLostFraction: number;
  /** The peak without the effect under study (every event counted; analog: no gain spread, saturation or noise). */
  readonly ideal: PeakFigures | null;
  /** The peak the instrument records. */
  readonly measured: PeakFigures | null;
  /** Counting with the dead-time correction: the corrected peak. */
  readonly corrected: PeakFigures | null;
  /** measured − ideal first moment, and the m/z error it causes with an unchanged calibration (2Δt/t). */
  readonly peakShift_ns: number | null;
  readonly peakShift_ppm: number | null;
  readonly correctedShift_ns: number | null;
  readonly correctedShift_ppm: number | null;
  /** Corrected area / ideal area (1 = fully restored). */
  readonly correctedAreaRatio: number | null;
}

export interface DetectionSection {
  readonly mode: 'analog' | 'counting';
  readonly shots: number;
  readonly trials: number;
  readonly deadTime_ns: number | null;
  readonly channels: number | null;
  readonly saturatedBins: number;
  readonly clippedSamples: number;
  readonly eventsOutsideRecord: number;
  readonly species: DetectionSpecies[];
}

export interface LoadSpeciesPoint {
  readonly label: string;
  readonly mz: number;
  readonly transmission: number;
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  /** From the ions' arrival times (ideal detector). */
  readonly resolvingPower: number | null;
  /** From the simulated spectrum's peak (with "acquisition"); null otherwise. */
  readonly spectrumResolvingPower: number | null;
}

export interface SpaceChargeSection {
  readonly beamRadius_mm: number;
  readonly ionsPerShot: number;
  readonly shots: number;
  readonly largestShot: number;
  readonly sheetEvents: number;
  /** Per species: with space charge (as in the headline), alone, and the mean flight-time shift. */
  readonly species: (LoadSpeciesPoint & { readonly alone: LoadSpeciesPoint; readonly shift_ns: number | null; readonly shift_ppm: number | null })[];
  /** R, FWHM and flight time against ions per shot (same ions, same seed). */
  readonly sweep: { readonly ionsPerShot: number; readonly species: LoadSpeciesPoint[] }[];
}

export interface IonLoadReport {
  readonly ionsPerShot: number;
  readonly countLaw: 'poisson' | 'fixed';
  readonly shots: number;
  readonly detection: DetectionSection | { readonly error: string } | null;
  readonly spaceCharge: SpaceChargeSection | { readonly error: string } | null;
}

const beamArea_m2 = (radius_mm: number): number => Math.PI * (radius_mm * 1e-3) ** 2;

/**
 * Splits the ensemble into shots and, with space charge on, retraces it shot by shot in the
 * sheet model, writing into `trace` (the lone-ion trace is returned as `alone`).
 */
export function traceIonLoad(preset: Preset, model: AnalyserModel, ens: Ensemble, trace: TraceResult, seed: number): IonLoadTrace | null {
  const load = preset.ionLoad;
  if (!load) return null;
  const partition = partitionShots(ens, load.ionsPerShot, load.countLaw, seed);
  if (!load.spaceCharge) return { partition, alone: null, sheetEvents: 0, largestShot: largest(partition) };
  const alone = copyTrace(trace);
  const stats = traceWithSpaceCharge(model, ens, partition, beamArea_m2(load.spaceCharge.beamRadius_mm), trace);
  applyDetectorPlane(model, ens, trace);
  return { partition, alone, sheetEvents: stats.events, largestShot: stats.largestShot };
}

export function ionLoadSections(preset: Preset, model: AnalyserModel, ens: Ensemble, trace: TraceResult, run: IonLoadTrace, seed: number): IonLoadReport {
  const load = preset.ionLoad!;
  return {
    ionsPerShot: load.ionsPerShot,
    countLaw: load.countLaw,
    shots: run.partition.shots,
    detection: load.detection ? detectionSection(preset, ens, trace, run.partition) : null,
    spaceCharge: load.spaceCharge ? spaceChargeSection(preset, model, ens, trace, run, seed) : null,
  };
}

function detectionSection(preset: Preset, ens: Ensemble, trace: TraceResult, partition: ShotPartition): DetectionSection | { error: string } {
  const d = preset.ionLoad!.detection!;
  const settings = acquisitionSettings(preset, trace);
  if (!settings) return { error: 'no ion reached the detector, or the preset has no "acquisition" section' };
  const y = preset.ionLoad!.detectionYield;
  const yieldLaw: DetectionYieldLaw | null = y
    ? { thresholdSpeed_m_per_s: y.thresholdSpeed_km_per_s * 1e3, slope_per_m_per_s: y.yieldSlope_per_km_per_s * 1e-3, openAreaFraction: y.openAreaFraction }
    : null;
  const result = simulateDetection(
    { arrival_s: trace.flightTime_s, fate: trace.fate, weight: trace.weight, finalSpeed_m_per_s: trace.finalSpeed_m_per_s, blockStart: ens.speciesStart, partition },
    {
      detector:
        d.mode === 'analog'
          ? { mode: 'analog', gainRelativeSd: d.gainRelativeSd, saturation_ions: d.saturation_ions ?? null, baselineNoise_ions: d.baselineNoise_ions }
          : { mode: 'counting', deadTime_s: d.deadTime_ns * 1e-9, channels: d.channels, correction: d.deadTimeCorrection },
      yieldLaw,
      settings,
    },
  );
  const species = result.blocks.map((b, s): DetectionSpecies => {
    const ideal = b.ideal;
    const shift = (p: MeasuredPeak | null): number | null => (p && ideal ? p.mean_s - ideal.mean_s : null);
    const ppm = (dt: number | null): number | null => (dt === null || !ideal ? null : ((2 * dt) / ideal.mean_s) * 1e6);
    return {
      label: ens.species[s].label,
      mz: ens.species[s].mz,
      arrived: b.arrived,
      events: b.events,
      detectionEfficiency: b.meanEfficiency,
      counted: b.counted,
      countsLost: b.events - b.counted,
      countsLostFraction: b.events > 0 ? (b.events - b.counted) / b.events : 0,
      ideal: figures(b.ideal),
      measured: figures(b.measured),
      corrected: figures(b.corrected),
      peakShift_ns: nsOrNull(shift(b.measured)),
      peakShift_ppm: ppm(shift(b.measured)),
      correctedShift_ns: nsOrNull(shift(b.corrected)),
      correctedShift_ppm: ppm(shift(b.corrected)),
      correctedAreaRatio: b.corrected && ideal && ideal.area > 0 ? b.corrected.area / ideal.area : null,
    };
  });
  return {
    mode: result.mode,
    shots: result.shots,
    trials: result.trials,
    deadTime_ns: d.mode === 'counting' ? d.deadTime_ns : null,
    channels: d.mode === 'counting' ? d.channels : null,
    saturatedBins: result.saturatedBins,
    clippedSamples: result.clippedSamples,
    eventsOutsideRecord: result.eventsOutsideRecord,
    species,
  };
}

function spaceChargeSection(preset: Preset, model: AnalyserModel, ens: Ensemble, trace: TraceResult, run: IonLoadTrace, seed: number): SpaceChargeSection {
  const load = preset.ionLoad!;
  const radius = load.spaceCharge!.beamRadius_mm;
  const withLoad = loadPoints(preset, ens, trace);
  const alone = loadPoints(preset, ens, run.alone!);
  const species = withLoad.map((p, s) => {
    const a = alone[s];
    const shift = p.flightTime_ns !== null && a.flightTime_ns !== null ? p.flightTime_ns - a.flightTime_ns : null;
    return { ...p, alone: a, shift_ns: shift, shift_ppm: shift !== null && a.flightTime_ns ? ((2 * shift) / a.flightTime_ns) * 1e6 : null };
  });
  const values = [...new Set([...(load.sweepIonsPerShot ?? []), load.ionsPerShot])].sort((x, y) => x - y);
  const sweep = values.map((n) => {
    if (n === load.ionsPerShot) return { ionsPerShot: n, species: withLoad };
    const out = allocateTraceResult(ens.count);
    traceWithSpaceCharge(model, ens, partitionShots(ens, n, load.countLaw, seed), beamArea_m2(radius), out);
    applyDetectorPlane(model, ens, out);
    return { ionsPerShot: n, species: loadPoints(preset, ens, out) };
  });
  return { beamRadius_mm: radius, ionsPerShot: load.ionsPerShot, shots: run.partition.shots, largestShot: run.largestShot, sheetEvents: run.sheetEvents, species, sweep };
}

/** Per reported species: flight time, FWHM, R from the ions, and R from the species' own spectrum peak. */
function loadPoints(preset: Preset, ens: Ensemble, trace: TraceResult): LoadSpeciesPoint[] {
  const report = buildReport(ens, trace);
  return report.species.map((s: SpeciesReport) => ({
    label: s.label,
    mz: s.mz,
    transmission: s.transmission,
    flightTime_ns: s.flightTime_ns,
    fwhm_ns: s.fwhm_ns,
    resolvingPower: s.resolvingPower,
    spectrumResolvingPower: spectrumR(preset, ens, trace, s.mainBlock),
  }));
}

function spectrumR(preset: Preset, ens: Ensemble, trace: TraceResult, block: number): number | null {
  const from = ens.speciesStart[block];
  const to = ens.speciesStart[block + 1];
  const settings = acquisitionSettings(preset, trace, from, to);
  if (!settings) return null;
  const spec = buildSpectrum({ arrival_s: trace.flightTime_s, fate: trace.fate, weight: trace.weight, from, to }, settings);
  const y = spec.intensity;
  let apex = 0;
  for (let k = 1; k < y.length; k++) if (y[k] > y[apex]) apex = k;
  return y.length > 0 && y[apex] > 0 ? measurePeak(spec.time_s, y, apex, 0, y.length - 1).resolvingPowerFwhm : null;
}

function figures(p: MeasuredPeak | null): PeakFigures | null {
  return p && { centroid_ns: p.centroid_s * 1e9, mean_ns: p.mean_s * 1e9, fwhm_ns: nsOrNull(p.fwhm_s), resolvingPower: p.resolvingPower, height: p.height, area: p.area };
}

const nsOrNull = (s: number | null): number | null => (s === null ? null : s * 1e9);

function largest(p: ShotPartition): number {
  let m = 0;
  for (let k = 0; k < p.shots; k++) m = Math.max(m, p.start[k + 1] - p.start[k]);
  return m;
}

function copyTrace(t: TraceResult): TraceResult {
  return {
    flightTime_s: t.flightTime_s.slice(),
    fate: t.fate.slice(),
    finalSpeed_m_per_s: t.finalSpeed_m_per_s.slice(),
    weight: t.weight.slice(),
    detectorX_m: t.detectorX_m.slice(),
    detectorY_m: t.detectorY_m.slice(),
  };
}

/** Detected-ion count of a trace (for tests and summaries). */
export function detectedCount(trace: TraceResult): number {
  let n = 0;
  for (let i = 0; i < trace.fate.length; i++) if (trace.fate[i] === Fate.DETECTED) n++;
  return n;
}
