/** Small builders shared by the tests: single-ion traces and hand-built analyser models. */
import type { AnalyserModel } from '../src/physics/analyser';
import { allocateEnsemble, allocateTraceResult } from '../src/ions/ensemble';
import { traceEnsemble } from '../src/physics/regions/driver';

export interface SingleTrace {
  t: number;
  fate: number;
  v: number;
}

export function traceOne(model: AnalyserModel, mz: number, z0_m: number, v0_m_per_s: number): SingleTrace {
  const ens = allocateEnsemble([{ label: 'test', mz, charge: 1, abundance: 1 }], [1]);
  ens.z0_m[0] = z0_m;
  ens.vz0_m_per_s[0] = v0_m_per_s;
  const out = allocateTraceResult(1);
  traceEnsemble(model, ens, out);
  return { t: out.flightTime_s[0], fate: out.fate[0], v: out.finalSpeed_m_per_s[0] };
}

export interface ModelOptions {
  repeller_V: number;
  grid_V?: number; // two-stage source when given
  gap1_m: number;
  gap2_m?: number;
  drift_m: number;
  driftPotential_V?: number;
  mirror?: { stages: { length_m: number; exitPotential_V: number }[]; returnLength_m: number } | null;
  post?: { gap_m: number; potential_V: number } | null;
  polarity?: 1 | -1;
  delay_s?: number;
  repellerHold_V?: number;
  gridHold_V?: number;
}

export function buildModel(o: ModelOptions): AnalyserModel {
  const drift = o.driftPotential_V ?? 0;
  const twoStage = o.grid_V !== undefined;
  const delay = o.delay_s ?? 0;
  const planes = [{ hold_V: delay > 0 ? (o.repellerHold_V ?? o.repeller_V) : o.repeller_V, final_V: o.repeller_V }];
  const stageLengths_m = [o.gap1_m];
  if (twoStage) {
    planes.push({ hold_V: delay > 0 ? (o.gridHold_V ?? o.grid_V!) : o.grid_V!, final_V: o.grid_V! });
    stageLengths_m.push(o.gap2_m!);
  }
  planes.push({ hold_V: drift, final_V: drift });
  return {
    polarity: o.polarity ?? 1,
    source: { stageLengths_m, planes, delay_s: delay, planeTransmission: planes.map(() => 1), rise: { kind: 'step' } },
    drift: { length_m: o.drift_m, potential_V: drift },
    mirror: o.mirror ? { entranceGridTransmission: 1, innerGridTransmission: o.mirror.stages.slice(1).map(() => 1), profile: null, ...o.mirror } : null,
    postAcceleration: o.post ? { gridTransmission: 1, ...o.post } : null,
    detectorAperture: null,
    maxFlightTime_s: 0.1,
    forceIntegrator: false,
  };
}

/** |a − b| ≤ tol·max(1, |a|, |b|)-style relative comparison used across the tests. */
export function relErr(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b));
}
