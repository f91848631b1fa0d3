/**
 * The reference the solved-mirror map tests measure against: every `stride`-th detected ion whose
 * flight time the map changed, flown again with the mirror traced at FINE precision (rtol 1e-9),
 * and the rms flight-time errors of the mapped and of the direct run on those ions, relative to the
 * time inside the mirror (common practice, no source: a tighter-tolerance solution of the same
 * equations of motion).
 */
import { expect } from 'vitest';
import type { Ensemble, TraceResult } from '../../src/ions/ensemble';
import type { AnalyserModel } from '../../src/physics/analyser';
import { Fate } from '../../src/physics/fates';
import { createIonState, startIonState } from '../../src/physics/regions/contract';
import { createFlight } from '../../src/physics/regions/driver';
import { tracedMirrorPass, type SolvedMirrorModel } from '../../src/physics/regions/solvedKernels';
import { SolvedPrecision } from '../../src/physics/regions/solvedTracer';

export interface ChangedIonErrors {
  /** Reference ions compared. */
  changed: number;
  mappedRms: number;
  directRms: number;
}

export function changedIonErrors(model: AnalyserModel, mirror: SolvedMirrorModel, ens: Ensemble, mapped: TraceResult, direct: TraceResult, stride: number): ChangedIonErrors {
  let inside = 0;
  const fine = createFlight(model, { engine: 'mixed', mirrorMap: tracedMirrorPass(mirror, SolvedPrecision.FINE, (t) => (inside = t)) });
  const st = createIonState();
  let sumMapped = 0;
  let sumDirect = 0;
  let changed = 0;
  for (let s = 0; s < ens.species.length; s++) {
    fine.setMz(ens.species[s].mz);
    for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i += stride) {
      if (mapped.fate[i] !== Fate.DETECTED || mapped.flightTime_s[i] === direct.flightTime_s[i]) continue;
      startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i], ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
      fine.fly(st);
      expect(st.fate).toBe(Fate.DETECTED);
      sumMapped += ((mapped.flightTime_s[i] - st.t) / inside) ** 2;
      sumDirect += ((direct.flightTime_s[i] - st.t) / inside) ** 2;
      changed++;
    }
  }
  return { changed, mappedRms: Math.sqrt(sumMapped / Math.max(changed, 1)), directRms: Math.sqrt(sumDirect / Math.max(changed, 1)) };
}
