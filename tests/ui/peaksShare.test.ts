/**
 * How an exact run's species peaks are shared over the page's two workers
 * (src/simulation/peaksShare.ts): by the estimated cost of each block's simulated digitizer
 * deposit, the finishing part starting with its finish as a head start.
 */
import { describe, expect, it } from 'vitest';
import { FINISH_COST_PER_ION, PEAK_COST_PER_ION, peakBlockCosts, shareBlocks } from '../../src/simulation/peaksShare';
import { speciesPeaksPart } from '../../src/simulation/runOutput';
import { simulate } from '../../src/simulation/run';
import { demoPreset } from './helpers';

const maxLoad = (costs: readonly number[], owner: readonly number[], parts: number, headStart: number): number => {
  const load = Array.from({ length: parts }, (_, k) => (k === 0 ? headStart : 0));
  owner.forEach((k, b) => (load[k] += costs[b]));
  return Math.max(...load);
};

describe('sharing species blocks over workers', () => {
  it('two parts: the split with the least loaded busiest part, worked out by hand', () => {
    // Costs 2, 2, 4, 7 and a head start of 3 on part 0: part 0 {1, 2} + 3 = 9, part 1 {0, 3} = 9;
    // no split does better (total 18 over two parts), and this is the first such split.
    expect(shareBlocks([2, 2, 4, 7], 2, 3)).toEqual([1, 0, 0, 1]);
    // A head start larger than all the work leaves it all to part 1.
    expect(shareBlocks([1, 1], 2, 5)).toEqual([1, 1]);
    expect(shareBlocks([5, 5], 1, 0)).toEqual([0, 0]);
  });

  it('many blocks or parts: within the longest-processing-time bound', () => {
    // Longest-processing-time-first list scheduling is within (4/3 − 1/(3m)) of the best makespan
    // (R. L. Graham, SIAM J. Appl. Math. 17 (1969) 416–429; from memory), and the best is at least
    // max(total/m, largest job).
    const costs = Array.from({ length: 23 }, (_, i) => ((i * 7919) % 101) + 1);
    for (const parts of [2, 3, 4]) {
      const owner = shareBlocks(costs, parts, 0);
      expect(owner.every((k) => Number.isInteger(k) && k >= 0 && k < parts)).toBe(true);
      const lower = Math.max(costs.reduce((a, b) => a + b, 0) / parts, Math.max(...costs));
      expect(maxLoad(costs, owner, parts, 0)).toBeLessThanOrEqual((4 / 3 - 1 / (3 * parts)) * lower + 1e-9);
    }
  });

  it('estimates a broad, shot-noise-widened peak as costlier per ion than a sharp one', () => {
    // The linear demo: four species of equal abundance; the heaviest arrive latest and widest, and
    // their few-ion peaks are widened against shot noise (their report says so).
    const preset = demoPreset('demo-linear-delayed');
    const request = { preset, ions: 4000, seed: 1, focus: false } as const;
    const first = speciesPeaksPart(request, 0, 2);
    const second = speciesPeaksPart(request, 1, 2);
    const trace = first.trace;
    const start = simulate(preset, { ions: 4000, seed: 1, analysis: false }).ensemble.speciesStart;
    const costs = peakBlockCosts(preset, trace, start);
    expect(costs).toHaveLength(start.length - 1);
    const perIon = costs.map((c, s) => c / (start[s + 1] - start[s]));
    const widened = first.peaks.map((p, s) => (p ?? second.peaks[s])?.shotNoiseSmoothing_ns ?? 0);
    const sharpest = widened.indexOf(Math.min(...widened));
    const broadest = widened.indexOf(Math.max(...widened));
    expect(widened[broadest]).toBeGreaterThan(widened[sharpest]);
    expect(perIon[broadest]).toBeGreaterThan(perIon[sharpest]);
    // Every ion costs at least its fixed share and one sample.
    for (const c of perIon) expect(c).toBeGreaterThan(PEAK_COST_PER_ION);
    expect(FINISH_COST_PER_ION).toBeGreaterThan(0);
  });
});
