/**
 * Which ions arrive together: the traced ensemble split into shots (laser or pusher pulses).
 *
 * - `poisson` (a real source): in each shot, species block s holds K_s ~ Poisson(μ·f_s) ions,
 *   μ the mean ions per shot over all species and f_s the block's share of the ensemble; the ions
 *   are taken in order from each block until every block is used up (the last shots may then
 *   hold fewer than their draw). Every traced ion belongs to exactly one shot.
 * - `fixed`: shot k holds the ions i with i mod S = k, S = ceil(ions/μ) — the rule the
 *   accumulated spectrum has always used; with μ = 1 each ion is alone in its shot.
 *
 * The result is compressed-row: shot k holds ions `ions[start[k] .. start[k+1]-1]`.
 */
import { SeededRandom } from '../../ions/random';
import type { Ensemble } from '../../ions/ensemble';
import { samplePoisson } from './randomLaws';

/** Stream index of the per-shot counts, apart from the population and trigger streams. */
const SHOT_STREAM = 0x5407;

export type CountLaw = 'poisson' | 'fixed';

export interface ShotPartition {
  readonly shots: number;
  /** Length shots + 1. */
  readonly start: Int32Array;
  readonly ions: Int32Array;
  /** Shot index of every ion of the ensemble. */
  readonly shotOfIon: Int32Array;
}

/** Shots of `fixed` law with a given shot count: ion i in shot i mod shots. */
export function moduloShots(count: number, shots: number): ShotPartition {
  const start = new Int32Array(shots + 1);
  for (let k = 0; k < shots; k++) start[k + 1] = start[k] + Math.max(0, Math.ceil((count - k) / shots));
  const ions = new Int32Array(count);
  const shotOfIon = new Int32Array(count);
  const fill = start.slice(0, shots);
  for (let i = 0; i < count; i++) {
    const k = i % shots;
    shotOfIon[i] = k;
    ions[fill[k]++] = i;
  }
  return { shots, start, ions, shotOfIon };
}

export function partitionShots(ens: Ensemble, meanIonsPerShot: number, law: CountLaw, seed: number): ShotPartition {
  if (!(meanIonsPerShot > 0) || !Number.isFinite(meanIonsPerShot)) throw new RangeError(`ionsPerShot: must be a finite number > 0 (got ${meanIonsPerShot})`);
  if (ens.count === 0) return { shots: 0, start: new Int32Array(1), ions: new Int32Array(0), shotOfIon: new Int32Array(0) };
  if (law === 'fixed') return moduloShots(ens.count, Math.max(1, Math.ceil(ens.count / meanIonsPerShot)));
  const blocks = ens.species.length;
  const cursor = Int32Array.from(ens.speciesStart.subarray(0, blocks));
  const mean = new Float64Array(blocks);
  for (let s = 0; s < blocks; s++) mean[s] = (meanIonsPerShot * (ens.speciesStart[s + 1] - ens.speciesStart[s])) / ens.count;
  const rng = new SeededRandom(seed, SHOT_STREAM);
  const starts: number[] = [0];
  const ions = new Int32Array(ens.count);
  const shotOfIon = new Int32Array(ens.count);
  let placed = 0;
  while (placed < ens.count) {
    const shot = starts.length - 1;
    for (let s = 0; s < blocks; s++) {
      const k = samplePoisson(rng, mean[s]);
      const end = Math.min(cursor[s] + k, ens.speciesStart[s + 1]);
      for (let i = cursor[s]; i < end; i++) {
        ions[placed++] = i;
        shotOfIon[i] = shot;
      }
      cursor[s] = end;
    }
    starts.push(placed);
  }
  return { shots: starts.length - 1, start: Int32Array.from(starts), ions, shotOfIon };
}
