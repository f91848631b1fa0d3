/**
 * The digitized spectrum an accumulating digitizer records from an ion ensemble: intensity per
 * sample versus time, and the same axis converted to m/z by a calibration.
 *
 * Peak shapes come from the ions' own arrival times; the only shape added is the detector's
 * single-ion response (see detectorResponse.ts). Sample k holds the signal integrated over
 * [recordStart + k·dt, recordStart + (k+1)·dt), so the sum of all samples is the deposited
 * intensity (ion count × weights); its time stamp is the centre of that interval.
 */
import { Fate } from '../physics/fates';
import { mzFromTime, type CalibrationCoefficients } from './calibration';
import {
  checkDetectorSettings,
  depositGaussianPulse,
  effectivePulseSd_s,
  triggerOffsets_s,
  type DetectorSettings,
  type SettingIssue,
} from './detectorResponse';

/** Longest record accepted (2^24 samples, 128 MiB of Float64). */
export const MAX_RECORD_SAMPLES = 1 << 24;

export interface DigitizerSettings {
  readonly sampleInterval_s: number;
  /** Time of the leading edge of sample 0, measured from the nominal start (extraction) time. */
  readonly recordStart_s: number;
  readonly recordLength_s: number;
  /** Constant delay (cables, electronics) added to every recorded time; 0 when absent. */
  readonly timeOffset_s?: number;
}

export type AcquisitionSettings = DetectorSettings & DigitizerSettings;

export interface SpectrumInput {
  /** True arrival time per ion (s). */
  readonly arrival_s: Float64Array;
  /** Fate per ion; only Fate.DETECTED ions make signal. */
  readonly fate: Uint8Array;
  /** Intensity weight per ion (e.g. grid transmission); 1 for every ion when absent. */
  readonly weight?: Float64Array;
  /** Ion index range [from, to) to include, e.g. one species' block; the whole ensemble by default. */
  readonly from?: number;
  readonly to?: number;
}

export interface Spectrum {
  /** Centre time of each sample (s). */
  readonly time_s: Float64Array;
  /** Signal integrated over each sample, in ions × weight. */
  readonly intensity: Float64Array;
  readonly sampleInterval_s: number;
  readonly recordStart_s: number;
  /** Detected ions in the range (whether or not they fell inside the record). */
  readonly detectedIons: number;
  /** Detected ions whose recorded time lies outside the record (their pulse tails may still show). */
  readonly ionsOutsideRecord: number;
  /** Sum of the detected ions' weights. */
  readonly detectedIntensity: number;
  /** Part of that intensity that landed inside the record (= sum of `intensity`). */
  readonly recordedIntensity: number;
  /** Sd of the single-ion response actually used (pulse and detector jitter in quadrature). */
  readonly responseSd_s: number;
}

/** Number of samples in the record. */
export function recordSampleCount(d: DigitizerSettings): number {
  // The tolerance keeps a length that is an exact multiple in decimal from gaining a sample.
  return Math.ceil(d.recordLength_s / d.sampleInterval_s - 1e-9);
}

/** Problems with acquisition settings, each naming its field; empty when valid. */
export function checkAcquisitionSettings(s: AcquisitionSettings, prefix = 'acquisition'): SettingIssue[] {
  const issues = checkDetectorSettings(s, prefix);
  if (!Number.isFinite(s.sampleInterval_s) || s.sampleInterval_s <= 0) {
    issues.push({ path: `${prefix}.sampleInterval_s`, message: `must be a finite number > 0 (got ${s.sampleInterval_s})` });
  }
  if (s.timeOffset_s !== undefined && !Number.isFinite(s.timeOffset_s)) issues.push({ path: `${prefix}.timeOffset_s`, message: `must be finite (got ${s.timeOffset_s})` });
  if (!Number.isFinite(s.recordStart_s)) issues.push({ path: `${prefix}.recordStart_s`, message: `must be finite (got ${s.recordStart_s})` });
  if (!Number.isFinite(s.recordLength_s) || s.recordLength_s <= 0) {
    issues.push({ path: `${prefix}.recordLength_s`, message: `must be a finite number > 0 (got ${s.recordLength_s})` });
  } else if (issues.length === 0 && recordSampleCount(s) > MAX_RECORD_SAMPLES) {
    issues.push({
      path: `${prefix}.recordLength_s`,
      message: `gives ${recordSampleCount(s)} samples at this sampling interval; at most ${MAX_RECORD_SAMPLES} are allowed`,
    });
  }
  return issues;
}

/**
 * Builds the spectrum of the detected ions in [from, to). Throws a RangeError naming the field for
 * invalid settings or mismatched array lengths (callers that take user input run
 * checkAcquisitionSettings first).
 */
export function buildSpectrum(input: SpectrumInput, settings: AcquisitionSettings): Spectrum {
  const issues = checkAcquisitionSettings(settings);
  const n = input.arrival_s.length;
  if (input.fate.length !== n) issues.push({ path: 'fate', message: `length ${input.fate.length} differs from arrival_s length ${n}` });
  if (input.weight && input.weight.length !== n) issues.push({ path: 'weight', message: `length ${input.weight.length} differs from arrival_s length ${n}` });
  const from = input.from ?? 0;
  const to = input.to ?? n;
  if (!Number.isInteger(from) || !Number.isInteger(to) || from < 0 || to > n || from > to) {
    issues.push({ path: 'from/to', message: `must satisfy 0 ≤ from ≤ to ≤ ${n} (got ${from}, ${to})` });
  }
  if (issues.length > 0) throw new RangeError(issues.map((i) => `${i.path}: ${i.message}`).join('; '));

  const count = recordSampleCount(settings);
  const dt = settings.sampleInterval_s;
  const start = settings.recordStart_s;
  const intensity = new Float64Array(count);
  const time_s = new Float64Array(count);
  for (let k = 0; k < count; k++) time_s[k] = start + (k + 0.5) * dt;

  // Shots cover the whole ensemble so an ion's trigger offset does not depend on the range chosen:
  // ion i is shifted by its shot's offset as applyTriggerJitter does, for the ions of the range only.
  const offsets = triggerOffsets_s(settings);
  const shots = settings.shots;
  const sd = effectivePulseSd_s(settings);
  const weight = input.weight;
  const end = start + count * dt;
  const offset = settings.timeOffset_s ?? 0;
  let detectedIons = 0;
  let outside = 0;
  let detectedIntensity = 0;
  let recordedIntensity = 0;
  // The arrays in locals: callers pass inputs of several object shapes.
  const fate = input.fate;
  const arrival = input.arrival_s;
  for (let i = from; i < to; i++) {
    if (fate[i] !== Fate.DETECTED) continue;
    const t = arrival[i] + offsets[i % shots] + offset;
    const w = weight ? weight[i] : 1;
    if (!Number.isFinite(t) || !Number.isFinite(w)) throw new RangeError(`ion ${i}: arrival time or weight is not finite`);
    detectedIons++;
    detectedIntensity += w;
    if (t < start || t >= end) outside++;
    recordedIntensity += depositGaussianPulse(intensity, start, dt, t, sd, w);
  }
  return {
    time_s,
    intensity,
    sampleInterval_s: dt,
    recordStart_s: start,
    detectedIons,
    ionsOutsideRecord: outside,
    detectedIntensity,
    recordedIntensity,
    responseSd_s: sd,
  };
}

export interface MzAxis {
  /** m/z (Th) of each time; 0 where the calibration has no m/z (before t0). */
  readonly mz: Float64Array;
  /** Number of times that had no m/z and hold 0. */
  readonly invalidCount: number;
}

/** Converts a time axis to m/z with a calibration (t = t0 + a·√(m/z) + b·(m/z)). */
export function timeAxisToMz(time_s: Float64Array, calibration: CalibrationCoefficients): MzAxis {
  const mz = new Float64Array(time_s.length);
  let invalid = 0;
  for (let k = 0; k < time_s.length; k++) {
    const value = mzFromTime(time_s[k], calibration);
    if (value === null) invalid++;
    else mz[k] = value;
  }
  return { mz, invalidCount: invalid };
}
