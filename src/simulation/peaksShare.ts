/**
 * Which species blocks each worker measures when a run's spectrum peaks are shared out
 * (speciesPeaksPart, src/simulation/runOutput.ts). Every part traces the same run, so every part
 * can estimate every block's cost from that trace and all of them reach the same sharing without
 * talking to each other. The cost of a block's peak is its simulated digitizer's deposit: each
 * detected ion's gaussian pulse over ±PULSE_REACH_SD sd in samples, the pulse widened against shot
 * noise where the block has few ions (so a heavy species' broad peak costs more per ion than a
 * light one's), plus a fixed share per ion. Part 0 also finishes the run (report, calibration), so
 * it starts with that work as a head start. Which part measures a block does not change its peak.
 */
import { PULSE_REACH_SD, effectivePulseSd_s } from '../analysis/detectorResponse';
import { shotNoiseSmoothing } from '../analysis/shotNoise';
import type { TraceResult } from '../ions/ensemble';
import { Fate } from '../physics/fates';
import type { Preset } from '../presets/schema';
import { acquisitionSettings } from './analysisReport';

/**
 * Per detected ion, the work besides its pulse's samples, in units of one sample's deposit; and
 * part 0's finish per ion of the run in the same units. Both measured in Node 20 on the linear
 * delayed-extraction demo at 2·10^4 ions (4 species of 5000: the peak of a block took about
 * 0.87 ms + 0.064 ms per sample of pulse reach per 5000 ions; the finish on the kept trace, with
 * the population and the compiled preset kept as the worker keeps them, 3.2 ms of CPU).
 */
export const PEAK_COST_PER_ION = 14;
export const FINISH_COST_PER_ION = 13;

/** Exhaustive sharing up to this many blocks (2^n splits); a greedy one beyond. */
const EXHAUSTIVE_BLOCKS = 16;

/** Estimated cost of each species block's peak (0 for a block without detected ions or spectrum). */
export function peakBlockCosts(preset: Preset, trace: TraceResult, speciesStart: Int32Array): number[] {
  const costs: number[] = [];
  const fate = trace.fate;
  const time = trace.flightTime_s;
  for (let s = 0; s + 1 < speciesStart.length; s++) {
    const from = speciesStart[s];
    const to = speciesStart[s + 1];
    const own = acquisitionSettings(preset, trace, from, to);
    if (!own) {
      costs.push(0);
      continue;
    }
    // The arrival spread as a plain sd: an estimate only (the peak itself uses the robust one).
    let n = 0;
    let mean = 0;
    let m2 = 0;
    for (let i = from; i < to; i++) {
      if (fate[i] !== Fate.DETECTED) continue;
      n++;
      const d = time[i] - mean;
      mean += d / n;
      m2 += d * (time[i] - mean);
    }
    const response = effectivePulseSd_s(own);
    const smoothing = shotNoiseSmoothing(n, n > 1 ? Math.sqrt(m2 / (n - 1)) : 0, response).sd_s;
    const widened = Math.hypot(response, smoothing);
    const recordSamples = own.recordLength_s / own.sampleInterval_s;
    const reach = Math.min(recordSamples, (2 * PULSE_REACH_SD * widened) / own.sampleInterval_s + 1);
    costs.push(n * (PEAK_COST_PER_ION + reach));
  }
  return costs;
}

/**
 * The part (0 … parts−1) measuring each block, so that the most loaded part has the least work,
 * part 0 starting with `headStart`. Two parts and few blocks: every split tried (the first of equal
 * ones kept); otherwise the costliest block first to the least loaded part. Deterministic.
 */
export function shareBlocks(costs: readonly number[], parts: number, headStart: number): number[] {
  const n = costs.length;
  if (parts <= 1) return costs.map(() => 0);
  if (parts === 2 && n <= EXHAUSTIVE_BLOCKS) {
    let best = 0;
    let bestLoad = Infinity;
    for (let mask = 0; mask < 1 << n; mask++) {
      let one = 0;
      let zero = headStart;
      for (let b = 0; b < n; b++) if (mask & (1 << b)) one += costs[b];
      else zero += costs[b];
      const load = Math.max(zero, one);
      if (load < bestLoad) {
        bestLoad = load;
        best = mask;
      }
    }
    return costs.map((_, b) => (best & (1 << b) ? 1 : 0));
  }
  const load = Array.from({ length: parts }, (_, k) => (k === 0 ? headStart : 0));
  const owner = costs.map(() => 0);
  const order = costs.map((_, b) => b).sort((a, b) => costs[b] - costs[a] || a - b);
  for (const b of order) {
    let least = 0;
    for (let k = 1; k < parts; k++) if (load[k] < load[least]) least = k;
    load[least] += costs[b];
    owner[b] = least;
  }
  return owner;
}

/** The blocks part `part` of `parts` measures on this trace (true where it does). */
export function peakBlocksByCost(preset: Preset, trace: TraceResult, speciesStart: Int32Array, part: number, parts: number): boolean[] {
  const owner = shareBlocks(peakBlockCosts(preset, trace, speciesStart), parts, FINISH_COST_PER_ION * speciesStart[speciesStart.length - 1]);
  return owner.map((k) => k === part);
}
