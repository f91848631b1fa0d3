/**
 * The solved-mirror map tests' shared parts: the gridless demo run through its transfer map, and
 * the reference they measure against.
 *
 * The reference: the solved-mirror map tests measure against: every `stride`-th detected ion whose
 * flight time the map changed, flown again with the mirror traced at FINE precision (rtol 1e-9),
 * and the rms flight-time errors of the mapped and of the direct run on those ions, relative to the
 * time inside the mirror (common practice, no source: a tighter-tolerance solution of the same
 * equations of motion).
 */
import { readFileSync } from 'node:fs';
import { expect } from 'vitest';
import { allocateTraceResult, type Ensemble, type TraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import type { AnalyserModel } from '../../src/physics/analyser';
import { Fate } from '../../src/physics/fates';
import { createIonState, startIonState } from '../../src/physics/regions/contract';
import { createFlight } from '../../src/physics/regions/driver';
import { tracedMirrorPass, type SolvedMirrorModel } from '../../src/physics/regions/solvedKernels';
import { SolvedPrecision } from '../../src/physics/regions/solvedTracer';
import type { MirrorMapReport } from '../../src/physics/solvedMirrorMap';
import { traceMixed } from '../../src/physics/tracer';
import { compilePreset, type CompiledPreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';

export interface MappedDemoRun {
  compiled: CompiledPreset;
  mirror: SolvedMirrorModel;
  ens: Ensemble;
  mapped: TraceResult;
  report: MirrorMapReport;
}

/** presets/demo-gridless-mirror.json (its back plate at `backPlate_V` when given), `ions` of its own population traced through the transfer map. */
export function mappedDemoRun(ions: number, backPlate_V?: number): MappedDemoRun {
  const raw = JSON.parse(readFileSync(new URL('../../presets/demo-gridless-mirror.json', import.meta.url), 'utf8'));
  if (backPlate_V !== undefined) raw.mirror.backPlate.potential_V = backPlate_V;
  const valid = validatePreset(raw);
  if (!valid.ok) throw new Error(`preset invalid: ${JSON.stringify(valid.issues)}`);
  const compiled = compilePreset(valid.value);
  const mirror = compiled.model.mirror!.solved!;
  const ens = samplePopulation({ ...compiled.population, totalIons: ions });
  const mapped = allocateTraceResult(ens.count);
  const report = traceMixed(compiled.model, ens, mapped)!;
  return { compiled, mirror, ens, mapped, report };
}

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
