/**
 * Traces an ensemble shot by shot through the sheet engine: the ions of each shot (a shot
 * partition, src/analysis/acquisition/shots.ts) fly together and repel one another. Fills the same
 * TraceResult as the exact engine; the detector plane (active area) is applied afterwards as usual.
 */
import type { AnalyserModel } from '../analyser';
import type { Ensemble, TraceResult } from '../../ions/ensemble';
import type { ShotPartition } from '../../analysis/acquisition/shots';
import { SheetEngine } from './sheetEngine';

export interface SpaceChargeTraceStats {
  readonly shots: number;
  /** Sheet events handled (crossings, planes, switches, departures) over all shots. */
  readonly events: number;
  readonly largestShot: number;
}

export function traceWithSpaceCharge(model: AnalyserModel, ens: Ensemble, partition: ShotPartition, beamArea_m2: number, out: TraceResult): SpaceChargeTraceStats {
  const engine = new SheetEngine(model, beamArea_m2);
  // Block of each ion, for its m/z and charge.
  const blockOf = new Int32Array(ens.count);
  for (let s = 0; s < ens.species.length; s++) blockOf.fill(s, ens.speciesStart[s], ens.speciesStart[s + 1]);
  let largest = 0;
  for (let k = 0; k < partition.shots; k++) largest = Math.max(largest, partition.start[k + 1] - partition.start[k]);
  const mz = new Float64Array(largest);
  const charge = new Float64Array(largest);
  const z0 = new Float64Array(largest);
  const v0 = new Float64Array(largest);
  let events = 0;
  for (let k = 0; k < partition.shots; k++) {
    const from = partition.start[k];
    const to = partition.start[k + 1];
    if (to === from) continue;
    const ions = partition.ions.subarray(from, to);
    for (let j = 0; j < ions.length; j++) {
      const i = ions[j];
      const info = ens.species[blockOf[i]];
      mz[j] = info.mz;
      charge[j] = info.charge;
      z0[j] = ens.z0_m[i];
      v0[j] = ens.vz0_m_per_s[i];
    }
    engine.load(ions, mz.subarray(0, ions.length), charge.subarray(0, ions.length), z0.subarray(0, ions.length), v0.subarray(0, ions.length));
    engine.run(out);
    events += engine.events;
  }
  return { shots: partition.shots, events, largestShot: largest };
}
