/**
 * What the detector and the recorder make of the ions of each shot, in one of two modes:
 *
 * - analog: a digitizer sums the detector current. Each ion that frees a secondary electron
 *   (detectionYield.ts) gives a gaussian pulse (detectorResponse.ts) whose area is its intensity
 *   weight times a gain factor from the Pólya (gamma) pulse-height distribution (randomLaws.ts).
 *   Within a shot the detector output saturates: no sample of one shot exceeds the height of
 *   `saturation_ions` coincident single-ion pulses. Baseline noise of sd `baselineNoise_ions`
 *   single-ion pulse heights per sample and shot is added after the detector (sums over shots of
 *   gaussians are drawn as one gaussian per sample). Detector timing jitter stays folded into the
 *   pulse (a many-shot expectation), as in the ideal spectrum.
 * - counting: a time-to-digital converter with `channels` independent channels (an ion strikes
 *   one of them at random, as on a multi-anode detector) and a non-paralysable dead time per
 *   channel (deadTime.ts); each event's time carries its own detector jitter draw; bins are the
 *   digitizer samples. The usual dead-time correction is applied to the summed histogram.
 *
 * In both modes the "ideal" record is the same ions without the effect under study (analog: no
 * gain spread, saturation or noise; counting: every event counted), so the effect can be read as
 * a difference. Ions of a shot share the shot's trigger offset.
 */
import { SeededRandom } from '../../ions/random';
import { Fate } from '../../physics/fates';
import { depositGaussianPulse, effectivePulseSd_s, PULSE_REACH_SD, PulseSteps, triggerOffsets_s } from '../detectorResponse';
import { measurePeak } from '../peaks';
import { recordSampleCount, type AcquisitionSettings } from '../spectrum';
import { correctDeadTime, countNonParalysable } from './deadTime';
import { detectionProbability, type DetectionYieldLaw } from './detectionYield';
import { sampleGain } from './randomLaws';
import type { ShotPartition } from './shots';

/** Stream index of the per-ion detection draws (yield, gain, channel, jitter). */
const DETECTION_STREAM = 0x0de7;
/** Stream index of the baseline noise. */
const NOISE_STREAM = 0x0b5e;

export interface AnalogMode {
  readonly mode: 'analog';
  /** Relative sd of the pulse-height distribution (Pólya/gamma law); 0 = every pulse alike. */
  readonly gainRelativeSd: number;
  /** Output saturates at the height of this many coincident single-ion pulses; null = never. */
  readonly saturation_ions: number | null;
  /** Baseline noise sd per sample and shot, in single-ion pulse heights. */
  readonly baselineNoise_ions: number;
}

export interface CountingMode {
  readonly mode: 'counting';
  readonly deadTime_s: number;
  readonly channels: number;
  readonly correction: boolean;
}

export interface DetectionConfig {
  readonly detector: AnalogMode | CountingMode;
  /** Velocity-dependent detection probability; null = every ion reaching the active area gives a pulse. */
  readonly yieldLaw: DetectionYieldLaw | null;
  readonly settings: AcquisitionSettings;
}

export interface DetectionInput {
  readonly arrival_s: Float64Array;
  readonly fate: Uint8Array;
  readonly weight: Float64Array;
  readonly finalSpeed_m_per_s: Float64Array;
  /** Block boundaries (ensemble species blocks), length blocks + 1. */
  readonly blockStart: Int32Array;
  readonly partition: ShotPartition;
}

export interface MeasuredPeak {
  /** Centroid above half height (as the spectrum peaks are measured). */
  readonly centroid_s: number;
  /** First moment over the whole window: steadier under counting noise, used for shifts. */
  readonly mean_s: number;
  readonly fwhm_s: number | null;
  readonly resolvingPower: number | null;
  readonly height: number;
  /** Sum of the record over the block's window. */
  readonly area: number;
}

export interface BlockDetection {
  /** Ions of the block that reached the active area. */
  readonly arrived: number;
  /** Of those, the ions that gave a pulse (detection yield, and in counting mode grid transmission, applied). */
  readonly events: number;
  /** Mean detection probability of the arrived ions from the yield law (1 without a law). */
  readonly meanEfficiency: number;
  /** Counting mode: events counted after dead time (else equal to events). */
  readonly counted: number;
  /** Window [from, to) of record samples over which the block's peak is measured; null when no event. */
  readonly window: readonly [number, number] | null;
  readonly ideal: MeasuredPeak | null;
  readonly measured: MeasuredPeak | null;
  readonly corrected: MeasuredPeak | null;
}

export interface DetectionResult {
  readonly mode: 'analog' | 'counting';
  readonly shots: number;
  /** Counting: shots × channels (independent trials of the correction). */
  readonly trials: number;
  readonly time_s: Float64Array;
  readonly ideal: Float64Array;
  readonly measured: Float64Array;
  readonly corrected: Float64Array | null;
  /** Counting: bins where every live trial counted, which the correction cannot restore. */
  readonly saturatedBins: number;
  /** Analog: samples of some shot clipped at the saturation level (summed over shots). */
  readonly clippedSamples: number;
  /** Events whose time fell outside the record. */
  readonly eventsOutsideRecord: number;
  readonly blocks: BlockDetection[];
}

export function simulateDetection(input: DetectionInput, config: DetectionConfig): DetectionResult {
  const s = config.settings;
  const { partition } = input;
  const n = input.arrival_s.length;
  const count = recordSampleCount(s);
  const dt = s.sampleInterval_s;
  const start = s.recordStart_s;
  const time_s = new Float64Array(count);
  for (let k = 0; k < count; k++) time_s[k] = start + (k + 0.5) * dt;
  const offsets = triggerOffsets_s({ ...s, shots: Math.max(1, partition.shots) });
  const rng = new SeededRandom(s.seed, DETECTION_STREAM);

  // Per ion: recorded time (trigger offset added) and whether it makes a pulse.
  const recorded = new Float64Array(n);
  const pulse = new Uint8Array(n);
  const efficiencySum = new Float64Array(input.blockStart.length - 1);
  const counting = config.detector.mode === 'counting';
  const jitter = s.detectorJitterSd_s;
  for (let i = 0; i < n; i++) {
    recorded[i] = input.arrival_s[i] + offsets[partition.shotOfIon[i]];
    if (input.fate[i] !== Fate.DETECTED) continue;
    const p = config.yieldLaw ? detectionProbability(config.yieldLaw, input.finalSpeed_m_per_s[i]) : 1;
    // Counting sees an ion or not: a grid's transmission is then a probability too.
    const chance = counting ? p * input.weight[i] : p;
    if (chance >= 1 || rng.uniform() < chance) pulse[i] = 1;
    if (counting && jitter > 0) recorded[i] += jitter * rng.normal();
  }
  for (let b = 0; b + 1 < input.blockStart.length; b++) {
    for (let i = input.blockStart[b]; i < input.blockStart[b + 1]; i++) {
      if (input.fate[i] === Fate.DETECTED) efficiencySum[b] += config.yieldLaw ? detectionProbability(config.yieldLaw, input.finalSpeed_m_per_s[i]) : 1;
    }
  }

  const ideal = new Float64Array(count);
  const measured = new Float64Array(count);
  let corrected: Float64Array | null = null;
  let saturatedBins = 0;
  let clippedSamples = 0;
  let outside = 0;
  const countedFlag = new Uint8Array(n);
  let trials = partition.shots;

  if (config.detector.mode === 'analog') {
    const a = config.detector;
    const sd = effectivePulseSd_s(s);
    const height1 = singlePulseHeight(dt, sd);
    const satLevel = a.saturation_ions === null ? Infinity : a.saturation_ions * height1;
    const scratch = new Float64Array(count);
    const order = new Int32Array(maxShotSize(partition));
    const reach = Math.ceil((PULSE_REACH_SD * sd) / dt) + 1;
    const steps = new PulseSteps(2 * reach + 2);
    for (let k = 0; k < partition.shots; k++) {
      if (satLevel === Infinity) {
        // No saturation: each pulse's sample shares are computed once and added to both records
        // (the ideal with the ion's weight, the measured with its gain too; the same bits as two
        // deposits, and the gains drawn in the same order).
        for (let j = partition.start[k]; j < partition.start[k + 1]; j++) {
          const i = partition.ions[j];
          if (!pulse[i]) continue;
          const t = recorded[i];
          if (t < start || t >= start + count * dt) outside++;
          steps.set(count, start, dt, t, sd);
          steps.addTo(ideal, input.weight[i]);
          steps.addTo(measured, input.weight[i] * sampleGain(rng, a.gainRelativeSd));
        }
        continue;
      }
      let m = 0;
      for (let j = partition.start[k]; j < partition.start[k + 1]; j++) {
        const i = partition.ions[j];
        if (!pulse[i]) continue;
        const t = recorded[i];
        if (t < start || t >= start + count * dt) outside++;
        depositGaussianPulse(ideal, start, dt, t, sd, input.weight[i]);
        order[m++] = i;
      }
      if (m === 0) continue;
      // Saturation acts within a shot: deposit the shot's pulses, clip each overlapping group, add.
      const shotOrder = order.subarray(0, m).sort((p, q) => recorded[p] - recorded[q]);
      let lo = Infinity;
      let hi = -Infinity;
      const flush = (): void => {
        const from = Math.max(0, lo);
        const to = Math.min(count - 1, hi);
        for (let q = from; q <= to; q++) {
          const v = scratch[q];
          if (v > satLevel) {
            measured[q] += satLevel;
            clippedSamples++;
          } else measured[q] += v;
          scratch[q] = 0;
        }
      };
      for (let j = 0; j < m; j++) {
        const i = shotOrder[j];
        const c = Math.floor((recorded[i] - start) / dt);
        if (c - reach > hi && hi >= lo) flush();
        if (c - reach > hi) lo = c - reach;
        hi = Math.max(hi, c + reach);
        depositGaussianPulse(scratch, start, dt, recorded[i], sd, input.weight[i] * sampleGain(rng, a.gainRelativeSd));
      }
      if (hi >= lo) flush();
    }
    if (a.baselineNoise_ions > 0 && partition.shots > 0) {
      const noise = new SeededRandom(s.seed, NOISE_STREAM);
      const noiseSd = a.baselineNoise_ions * height1 * Math.sqrt(partition.shots);
      for (let q = 0; q < count; q++) measured[q] += noiseSd * noise.normal();
    }
  } else {
    const c = config.detector;
    trials = partition.shots * c.channels;
    const channel = new Uint16Array(n);
    for (let i = 0; i < n; i++) if (pulse[i] && c.channels > 1) channel[i] = Math.min(c.channels - 1, Math.floor(rng.uniform() * c.channels));
    const order = new Int32Array(maxShotSize(partition));
    const key = (i: number): number => channel[i] + recorded[i]; // flight times are < 1 s: channel is the major key
    for (let k = 0; k < partition.shots; k++) {
      let m = 0;
      for (let j = partition.start[k]; j < partition.start[k + 1]; j++) {
        const i = partition.ions[j];
        if (pulse[i]) order[m++] = i;
      }
      if (m === 0) continue;
      const shotOrder = order.subarray(0, m);
      if (m > 1) shotOrder.sort((p, q) => key(p) - key(q));
      let from = 0;
      while (from < m) {
        let to = from + 1;
        while (to < m && channel[shotOrder[to]] === channel[shotOrder[from]]) to++;
        countNonParalysable(recorded, shotOrder, from, to, c.deadTime_s, countedFlag);
        from = to;
      }
      for (let j = 0; j < m; j++) {
        const i = shotOrder[j];
        const bin = Math.floor((recorded[i] - start) / dt);
        if (bin < 0 || bin >= count) {
          outside++;
          continue;
        }
        ideal[bin] += 1;
        if (countedFlag[i]) measured[bin] += 1;
      }
    }
    if (c.correction) {
      const result = correctDeadTime(measured, trials, c.deadTime_s / dt);
      corrected = result.corrected;
      saturatedBins = result.saturatedBins;
    }
  }

  const blocks: BlockDetection[] = [];
  const margin = Math.ceil((4 * effectivePulseSd_s(s) + (counting ? 4 * jitter : 0)) / dt) + 2;
  for (let b = 0; b + 1 < input.blockStart.length; b++) {
    let arrived = 0;
    let events = 0;
    let counted = 0;
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = input.blockStart[b]; i < input.blockStart[b + 1]; i++) {
      if (input.fate[i] !== Fate.DETECTED) continue;
      arrived++;
      if (!pulse[i]) continue;
      events++;
      if (!counting || countedFlag[i]) counted++;
      if (recorded[i] < lo) lo = recorded[i];
      if (recorded[i] > hi) hi = recorded[i];
    }
    let window: [number, number] | null = null;
    if (events > 0) {
      const from = Math.max(0, Math.floor((lo - start) / dt) - margin);
      const to = Math.min(count, Math.floor((hi - start) / dt) + margin + 1);
      if (to > from) window = [from, to];
    }
    blocks.push({
      arrived,
      events,
      meanEfficiency: arrived > 0 ? efficiencySum[b] / arrived : 0,
      counted,
      window,
      ideal: window ? peakIn(time_s, ideal, window) : null,
      measured: window ? peakIn(time_s, measured, window) : null,
      corrected: window && corrected ? peakIn(time_s, corrected, window) : null,
    });
  }
  return { mode: config.detector.mode, shots: partition.shots, trials, time_s, ideal, measured, corrected, saturatedBins, clippedSamples, eventsOutsideRecord: outside, blocks };
}

/** Largest sample of one pulse centred in a sample: the unit of saturation and noise. */
export function singlePulseHeight(dt: number, sd: number): number {
  const one = new Float64Array(1);
  depositGaussianPulse(one, 0, dt, 0.5 * dt, sd, 1);
  return one[0];
}

function maxShotSize(p: ShotPartition): number {
  let m = 0;
  for (let k = 0; k < p.shots; k++) m = Math.max(m, p.start[k + 1] - p.start[k]);
  return m;
}

/** The peak of one block measured about the tallest sample of its window. */
function peakIn(time_s: Float64Array, y: Float64Array, window: readonly [number, number]): MeasuredPeak | null {
  const [from, to] = window;
  let apex = from;
  let area = 0;
  let moment = 0;
  for (let k = from; k < to; k++) {
    area += y[k];
    moment += y[k] * time_s[k];
    if (y[k] > y[apex]) apex = k;
  }
  if (!(y[apex] > 0)) return null;
  const p = measurePeak(time_s, y, apex, from, to - 1);
  return { centroid_s: p.centroid_s, mean_s: moment / area, fwhm_s: p.fwhm_s, resolvingPower: p.resolvingPowerFwhm, height: p.height, area };
}
