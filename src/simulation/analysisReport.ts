/**
 * The measurement side of a run: the digitized spectrum built from the ions (detector response,
 * jitter, sampling), peaks measured in it per species, the mass calibration from chosen calibrant
 * peaks with the unknowns' errors in ppm, and the focus analysis of a reference ion.
 */
import { fitCalibration, assessUnknowns, type CalibrationCoefficients } from '../analysis/calibration';
import { analyseFocus, findSpaceFocusPlane, type FocusAnalysis } from '../analysis/focus';
import { measurePeak, resolvingPowerFromWidth, type Peak } from '../analysis/peaks';
import { effectivePulseSd_s, GAUSSIAN_FWHM_PER_SD } from '../analysis/detectorResponse';
import { shotNoiseSmoothing, withoutSmoothing } from '../analysis/shotNoise';
import { GAUSSIAN_FWHM_FRACTION } from '../analysis/arrivalStats';
import { buildSpectrum, timeAxisToMz, type AcquisitionSettings, type Spectrum } from '../analysis/spectrum';
import type { AnalyserModel } from '../physics/analyser';
import { ATOMIC_MASS_CONSTANT_KG } from '../physics/constants';
import { Fate } from '../physics/fates';
import type { Ensemble, TraceResult } from '../ions/ensemble';
import type { PopulationSpec } from '../ions/population';
import type { Preset } from '../presets/schema';
import { traceSingleIon } from './singleIon';

export interface SpectrumPeakReport {
  readonly centroid_ns: number;
  readonly fwhm_ns: number | null;
  /** centroid/(2·FWHM) (IUPAC 2013, FWHM definition). */
  readonly resolvingPower: number | null;
  /** centroid/(2·full width at 5 % height): the 10 % valley definition for a single peak. */
  readonly resolvingPower10pctValley: number | null;
  readonly height: number;
  readonly area: number;
  /**
   * Extra gaussian smoothing (sd, ns) the peak was measured with because too few ions were traced
   * for a smooth peak top (0 with enough ions); the FWHM above is corrected for it in quadrature.
   */
  readonly shotNoiseSmoothing_ns: number;
  /** True when too few ions were traced for the peak's FWHM to be measured to about 2 % (trace more ions). */
  readonly shotNoiseLimited: boolean;
}

export interface CalibrationSection {
  readonly law: 't = t0 + a·sqrt(m/z)' | 't = t0 + a·sqrt(m/z) + b·(m/z)';
  readonly coefficients: { readonly t0_ns: number; readonly a_ns_per_sqrtTh: number; readonly b_ns_per_Th: number };
  readonly calibrantMz: number[];
  readonly residuals_ppm: number[];
  readonly rms_ppm: number;
  /** Calibrants minus fitted coefficients; 0 means the law passes through every calibrant, so the residuals are zero by construction. */
  readonly degreesOfFreedom: number;
  /** A word for the reader when the residuals say nothing (no degree of freedom left), else null. */
  readonly warning: string | null;
  /** Unknowns (every species that is not a calibrant): true m/z, calibrated m/z and error. */
  readonly unknowns: { readonly mz: number; readonly measuredMz: number | null; readonly error_ppm: number | null }[];
  /** Where the peak times came from. */
  readonly timesFrom: 'spectrum peak centroids' | 'mean ion flight times';
}

export interface FocusSection extends FocusAnalysis {
  readonly referenceMz: number;
  readonly referenceStart_mm: number;
  readonly referenceEnergy_eV: number;
  /** Drift length beyond the ground grid at which dT/dz0 = 0 for this source (linear flight), or null. */
  readonly spaceFocusPlane_mm: number | null;
  readonly spaceFocusNote: string | null;
}

export interface SpectrumSection {
  readonly sampleInterval_ns: number;
  readonly time_ns: Float64Array;
  readonly intensity: Float64Array;
  readonly mz: Float64Array | null;
}

export interface AnalysisSections {
  /** Per ensemble species block, the peak measured in that species' own spectrum (null without acquisition settings or signal). */
  readonly speciesPeaks: (SpectrumPeakReport | null)[];
  readonly calibration: CalibrationSection | { readonly error: string } | null;
  readonly focus: FocusSection | { readonly error: string } | null;
  readonly spectrum: SpectrumSection | null;
}

/** Acquisition settings for the ions in [from, to); an automatic record window spans just their arrivals. */
export function acquisitionSettings(preset: Preset, trace: TraceResult, from = 0, to = trace.fate.length): AcquisitionSettings | null {
  const acq = preset.acquisition;
  if (!acq) return null;
  const sample_s = acq.sampleInterval_ns * 1e-9;
  const offset_s = (acq.timeOffset_ns ?? 0) * 1e-9;
  let start = acq.recordStart_us === undefined ? undefined : acq.recordStart_us * 1e-6;
  let length = acq.recordLength_us === undefined ? undefined : acq.recordLength_us * 1e-6;
  if (start === undefined || length === undefined) {
    let lo = Infinity;
    let hi = -Infinity;
    // The arrays in locals: traces come in several object shapes, and a property load per ion then costs more than the loop.
    const fate = trace.fate;
    const time = trace.flightTime_s;
    for (let i = from; i < to; i++) {
      if (fate[i] !== Fate.DETECTED) continue;
      lo = Math.min(lo, time[i]);
      hi = Math.max(hi, time[i]);
    }
    if (!(hi >= lo)) return null;
    const margin = 8 * Math.hypot(acq.pulseWidth_ns / 2.3548, acq.detectorJitter_ns, acq.triggerJitter_ns) * 1e-9 + 20 * sample_s;
    lo += offset_s;
    hi += offset_s;
    start ??= Math.max(0, lo - margin);
    length ??= Math.min(hi + margin - start, sample_s * ((1 << 24) - 1));
  }
  return {
    pulseFwhm_s: acq.pulseWidth_ns * 1e-9,
    detectorJitterSd_s: acq.detectorJitter_ns * 1e-9,
    triggerJitterSd_s: acq.triggerJitter_ns * 1e-9,
    shots: acq.shots,
    seed: preset.run.seed,
    sampleInterval_s: sample_s,
    recordStart_s: start,
    recordLength_s: Math.max(length, sample_s),
    timeOffset_s: offset_s,
  };
}

/** A one-species spectrum holds one peak (or an unresolved group): measure it about its tallest sample. */
function tallestPeak(spectrum: Spectrum): Peak | null {
  const y = spectrum.intensity;
  if (y.length === 0) return null;
  let apex = 0;
  for (let k = 1; k < y.length; k++) if (y[k] > y[apex]) apex = k;
  return y[apex] > 0 ? measurePeak(spectrum.time_s, y, apex, 0, y.length - 1) : null;
}

const toNs = (s: number | null): number | null => (s === null ? null : s * 1e9);

/** Detected ions in [from, to) and their robust arrival-time sd (shortest 76.1 % interval / 2.3548, the sd of a gaussian). */
function ionSpread(trace: TraceResult, from: number, to: number): [number, number] {
  const fate = trace.fate;
  const time = trace.flightTime_s;
  let n = 0;
  for (let i = from; i < to; i++) if (fate[i] === Fate.DETECTED) n++;
  if (n < 2) return [n, 0];
  const t = new Float64Array(n);
  for (let i = from, k = 0; i < to; i++) if (fate[i] === Fate.DETECTED) t[k++] = time[i];
  return sortedSpread(t.sort());
}

/** ionSpread of the detected flight times already sorted ascending. */
function sortedSpread(t: Float64Array): [number, number] {
  const n = t.length;
  if (n < 2) return [n, 0];
  const inside = Math.max(1, Math.ceil(GAUSSIAN_FWHM_FRACTION * n) - 1);
  let shortest = Infinity;
  for (let i = 0; i + inside < n; i++) shortest = Math.min(shortest, t[i + inside] - t[i]);
  return [n, Number.isFinite(shortest) ? shortest / GAUSSIAN_FWHM_PER_SD : 0];
}

/**
 * The peak of the ions in [from, to) in their own simulated spectrum, measured about its tallest
 * sample; with few ions, with the response widened against shot noise (see ../analysis/shotNoise.ts).
 */
export function measureSpeciesPeak(
  trace: TraceResult,
  from: number,
  to: number,
  own: AcquisitionSettings,
  /** Ions under the peak and their arrival sd, when not all of [from, to) belong to it (fragments: src/simulation/fragmentReport.ts). */
  spread: readonly [number, number] = ionSpread(trace, from, to),
): SpectrumPeakReport | null {
  // Few ions under a narrow pulse make a ragged peak top (see ../analysis/shotNoise.ts): widen the response then.
  const smoothing = shotNoiseSmoothing(spread[0], spread[1], effectivePulseSd_s(own));
  const smoothing_s = smoothing.sd_s;
  const measured = smoothing_s > 0 ? { ...own, pulseFwhm_s: GAUSSIAN_FWHM_PER_SD * Math.hypot(own.pulseFwhm_s / GAUSSIAN_FWHM_PER_SD, smoothing_s) } : own;
  const spec = buildSpectrum({ arrival_s: trace.flightTime_s, fate: trace.fate, weight: trace.weight, from, to }, measured);
  const peak = spec.detectedIons > 0 ? tallestPeak(spec) : null;
  const fwhm_s = peak && withoutSmoothing(peak.fwhm_s, GAUSSIAN_FWHM_PER_SD * smoothing_s);
  // Full width at 5 % of a gaussian: 2·sqrt(2 ln 20)·sd.
  const width5_s = peak && withoutSmoothing(peak.width5pct_s, 2 * Math.sqrt(2 * Math.log(20)) * smoothing_s);
  return peak && {
    centroid_ns: peak.centroid_s * 1e9,
    fwhm_ns: toNs(fwhm_s),
    resolvingPower: resolvingPowerFromWidth(peak.centroid_s, fwhm_s),
    resolvingPower10pctValley: resolvingPowerFromWidth(peak.centroid_s, width5_s),
    height: peak.height,
    area: peak.area,
    shotNoiseSmoothing_ns: smoothing_s * 1e9,
    shotNoiseLimited: smoothing.limited,
  };
}

export function buildAnalysisSections(
  preset: Preset,
  model: AnalyserModel,
  population: PopulationSpec,
  ens: Ensemble,
  trace: TraceResult,
  meanFlightTime_s: readonly (number | null)[],
  options: {
    readonly withSpectrum?: boolean;
    readonly peaksOnly?: boolean;
    readonly spectrumTrace?: TraceResult;
    /** Build the focus section (default true); the page asks for it apart (src/simulation/runOutput.ts, runExtras). */
    readonly focus?: boolean;
    /** Per ensemble species block, its detected flight times of `trace` sorted ascending (buildReport's sortedOut), to spare sorting them again. */
    readonly sortedTimes?: readonly Float64Array[];
    /** Per ensemble species block, its peak already measured on this trace (speciesPeaksPart: the page's runs share the peaks out over two workers). */
    readonly givenPeaks?: readonly (SpectrumPeakReport | null)[];
  } = {},
): AnalysisSections {
  // The full spectrum also records what else reached the detector (fragment ions: src/simulation/fragmentReport.ts).
  const recorded = options.spectrumTrace ?? trace;
  const settings = acquisitionSettings(preset, recorded);
  const speciesPeaks: (SpectrumPeakReport | null)[] = ens.species.map(() => null);
  if (settings && options.givenPeaks) {
    for (let s = 0; s < ens.species.length; s++) speciesPeaks[s] = options.givenPeaks[s] ?? null;
  } else if (settings) {
    for (let s = 0; s < ens.species.length; s++) {
      const from = ens.speciesStart[s];
      const to = ens.speciesStart[s + 1];
      const own = acquisitionSettings(preset, trace, from, to);
      if (!own) continue; // no detected ion of this species
      const sorted = options.sortedTimes?.[s];
      speciesPeaks[s] = measureSpeciesPeak(trace, from, to, own, sorted ? sortedSpread(sorted) : undefined);
    }
  }

  if (options.peaksOnly) return { speciesPeaks, calibration: null, focus: null, spectrum: null };

  const peakTime_s = ens.species.map((_, s) => {
    const p = speciesPeaks[s];
    return settings ? (p ? p.centroid_ns * 1e-9 : null) : meanFlightTime_s[s];
  });
  const calibration = calibrate(preset, ens, peakTime_s, settings ? 'spectrum peak centroids' : 'mean ion flight times');

  let spectrum: SpectrumSection | null = null;
  if (settings && options.withSpectrum) {
    const full = buildSpectrum({ arrival_s: recorded.flightTime_s, fate: recorded.fate, weight: recorded.weight }, settings);
    const coeffs = calibration && 'coefficients' in calibration ? toSeconds(calibration.coefficients) : null;
    spectrum = {
      sampleInterval_ns: settings.sampleInterval_s * 1e9,
      time_ns: full.time_s.map((t) => t * 1e9),
      intensity: full.intensity,
      mz: coeffs ? timeAxisToMz(full.time_s, coeffs).mz : null,
    };
  }
  return { speciesPeaks, calibration, focus: options.focus === false ? null : focusSection(preset, model, population), spectrum };
}

function toSeconds(c: CalibrationSection['coefficients']): CalibrationCoefficients {
  return { t0_s: c.t0_ns * 1e-9, a_s_per_sqrtTh: c.a_ns_per_sqrtTh * 1e-9, b_s_per_Th: c.b_ns_per_Th * 1e-9 };
}

function calibrate(
  preset: Preset,
  ens: Ensemble,
  peakTime_s: readonly (number | null)[],
  timesFrom: CalibrationSection['timesFrom'],
): CalibrationSection | { readonly error: string } | null {
  const wanted = preset.analysis?.calibrantMz;
  if (!wanted || wanted.length === 0) return null;
  const isCalibrant = ens.species.map(() => false);
  for (const mz of wanted) {
    let best = -1;
    ens.species.forEach((sp, s) => {
      if (best < 0 || Math.abs(sp.mz - mz) < Math.abs(ens.species[best].mz - mz)) best = s;
    });
    isCalibrant[best] = true;
  }
  const calibrants = ens.species.flatMap((sp, s) => (isCalibrant[s] && peakTime_s[s] !== null ? [{ mz: sp.mz, time_s: peakTime_s[s]! }] : []));
  const fit = fitCalibration(calibrants, { quadratic: preset.analysis?.quadraticCalibration ?? false });
  if (!fit.ok) return { error: fit.issues.map((i) => `${i.path}: ${i.message}`).join('; ') };
  const c = fit.report.coefficients;
  const unknowns = assessUnknowns(
    ens.species.flatMap((sp, s) => (!isCalibrant[s] && peakTime_s[s] !== null ? [{ mz: sp.mz, time_s: peakTime_s[s]! }] : [])),
    c,
  );
  return {
    law: fit.report.model === 'sqrt' ? 't = t0 + a·sqrt(m/z)' : 't = t0 + a·sqrt(m/z) + b·(m/z)',
    coefficients: { t0_ns: c.t0_s * 1e9, a_ns_per_sqrtTh: c.a_s_per_sqrtTh * 1e9, b_ns_per_Th: c.b_s_per_Th * 1e9 },
    calibrantMz: calibrants.map((x) => x.mz),
    residuals_ppm: fit.report.residuals_ppm,
    rms_ppm: fit.report.rms_ppm,
    degreesOfFreedom: fit.report.degreesOfFreedom,
    warning: calibrationWarning(fit.report.degreesOfFreedom, calibrants.length),
    unknowns: unknowns.map((u) => ({ mz: u.mz, measuredMz: u.measuredMz, error_ppm: u.error_ppm })),
    timesFrom,
  };
}

/** No degree of freedom left: the residuals are zero by construction and test nothing. */
export function calibrationWarning(degreesOfFreedom: number, calibrants: number): string | null {
  if (degreesOfFreedom > 0) return null;
  return `no degree of freedom left: ${calibrants} calibrants for ${calibrants - degreesOfFreedom} coefficients, so the law passes through every calibrant and their residuals (0 ppm) test nothing; add a calibrant to see the fit's error`;
}

/** Reference start position, its spread, and the axial start energy and spread of the population. */
function referenceStart(population: PopulationSpec, mass_kg: number) {
  const p = population.startPosition;
  const z0 = p.kind === 'surface' ? p.z_m : p.kind === 'uniform' ? (p.from_m + p.to_m) / 2 : p.mean_m;
  const zSpread = p.kind === 'surface' ? 1e-6 : p.kind === 'uniform' ? (p.to_m - p.from_m) / 2 : p.sd_m;
  const v = population.startVelocity;
  let U0: number;
  let USpread: number;
  if (v.kind === 'normal') {
    U0 = 0.5 * mass_kg * Math.max(v.mean_m_per_s, 0) ** 2;
    USpread = mass_kg * Math.abs(v.mean_m_per_s) * v.sd_m_per_s;
  } else if (v.kind === 'energy') {
    U0 = v.mean_J;
    USpread = v.sd_J;
  } else {
    U0 = 0.5 * 1.380649e-23 * v.temperature_K;
    USpread = U0;
  }
  return { z0, zSpread, U0, USpread };
}

/** The focus analysis of the preset's reference ion (single ions traced on the run's model; no ensemble needed). */
export function focusSection(preset: Preset, model: AnalyserModel, population: PopulationSpec): FocusSection | { readonly error: string } {
  const refMz = preset.analysis?.focusReferenceMz;
  const species =
    refMz === undefined ? population.species[0] : population.species.reduce((a, b) => (Math.abs(b.mz - refMz) < Math.abs(a.mz - refMz) ? b : a));
  const mass_kg = species.mz * species.charge * ATOMIC_MASS_CONSTANT_KG;
  const { z0, zSpread, U0, USpread } = referenceStart(population, mass_kg);
  const gap = model.source.stageLengths_m[0];
  const flightTime = (z: number, U: number): number => {
    const r = traceSingleIon(model, species.mz, z, Math.sqrt((2 * Math.max(U, 0)) / mass_kg));
    return r.fate === Fate.DETECTED ? r.t : NaN;
  };
  const probe = {
    z0_m: z0,
    U0_J: U0,
    lengthScale_m: gap,
    z0Range_m: [0, gap * (1 - 1e-9)] as const,
    positionSpread_m: zSpread,
    energySpread_J: USpread,
  };
  const result = analyseFocus(flightTime, probe);
  if (!result.ok) return { error: result.reason };
  // Space-focus plane of the source alone: a linear drift of variable length behind the ground grid.
  // One model object per drift length: the five stencil ions of a slope then share one flight
  // (traceSingleIon keeps the flight of the last model; building one costs more than the ion).
  let linearModel: AnalyserModel | null = null;
  const linear = (drift_m: number): AnalyserModel => {
    if (linearModel === null || linearModel.drift.length_m !== drift_m) {
      linearModel = { ...model, drift: { ...model.drift, length_m: drift_m }, mirror: null, postAcceleration: null, detectorAperture: null };
    }
    return linearModel;
  };
  const plane = findSpaceFocusPlane(
    (z, D) => {
      const r = traceSingleIon(linear(D), species.mz, z, Math.sqrt((2 * U0) / mass_kg));
      return r.fate === Fate.DETECTED ? r.t : NaN;
    },
    z0,
    [1e-4, 10],
    { lengthScale_m: gap, z0Range_m: [0, gap * (1 - 1e-9)], scanPoints: 64 },
  );
  return {
    ...result.focus,
    referenceMz: species.mz,
    referenceStart_mm: z0 * 1e3,
    referenceEnergy_eV: U0 / 1.602176634e-19,
    spaceFocusPlane_mm: plane.driftLength_m === null ? null : plane.driftLength_m * 1e3,
    spaceFocusNote: plane.driftLength_m === null ? plane.reason : null,
  };
}
