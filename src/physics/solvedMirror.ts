/**
 * Compatibility entry points of the solved-field mirror (the kernel is in
 * src/physics/regions/solvedKernels.ts): single crossings for tests and benchmarks, and the
 * transverse record that the solved-mirror transfer map (src/physics/solvedMirrorMap.ts) reads.
 * In the engine the transverse state travels in each ion's IonState; the driver hands it to this
 * record and back around each pass of the map, and nothing else in the engine reads it.
 */
import { createIonState, type AxialState, type IonState } from './regions/contract';
import type { FlightPlan } from './regions/plan';
import { crossSolvedMirror, type SolvedMirrorModel } from './regions/solvedKernels';
import { SolvedFieldTracer, createSolvedIonState } from './regions/solvedTracer';
import { legacyTally } from './regions/legacyTally';
import { Exit } from './fates';

export type { SolvedMirrorModel };

/** Transverse state of the ion being traced: its start, and where it last left a solved region. */
export interface TransverseRecord {
  x0: number;
  y0: number;
  vx0: number;
  vy0: number;
  /** Reference point of the straight transverse motion after the last solved region (t, x, y, vx, vy). */
  tRef: number;
  xRef: number;
  yRef: number;
  vxRef: number;
  vyRef: number;
}

export const transverse: TransverseRecord = { x0: 0, y0: 0, vx0: 0, vy0: 0, tRef: 0, xRef: 0, yRef: 0, vxRef: 0, vyRef: 0 };

/** A full IonState from an axial state and the compatibility transverse record (for the wrappers' single-ion calls). */
export function loadWithTransverse(full: IonState, st: AxialState, z: number): void {
  full.t = st.t;
  full.z = z;
  full.v = st.v;
  full.fate = st.fate;
  full.w = st.w;
  full.tRef = transverse.tRef;
  full.xRef = transverse.xRef;
  full.yRef = transverse.yRef;
  full.vxRef = transverse.vxRef;
  full.vyRef = transverse.vyRef;
}

/** The ion left a solved region: its straight transverse motion continues from this state. */
export function leftSolvedRegion(ion: { readonly t: number; readonly x: number; readonly y: number; readonly vx: number; readonly vy: number }): void {
  transverse.tRef = ion.t;
  transverse.xRef = ion.x;
  transverse.yRef = ion.y;
  transverse.vxRef = ion.vx;
  transverse.vyRef = ion.vy;
}

/** Set the start of the next ion's transverse motion (zeros for an on-axis ion). */
export function startTransverse(x0: number, y0: number, vx0: number, vy0: number): void {
  transverse.x0 = transverse.xRef = x0;
  transverse.y0 = transverse.yRef = y0;
  transverse.vx0 = transverse.vxRef = vx0;
  transverse.vy0 = transverse.vyRef = vy0;
  transverse.tRef = 0;
}

/** Transverse position at time t (straight motion from the last reference state). */
export function transverseX(t: number): number {
  return transverse.xRef + transverse.vxRef * (t - transverse.tRef);
}
export function transverseY(t: number): number {
  return transverse.yRef + transverse.vyRef * (t - transverse.tRef);
}

const tracer = new SolvedFieldTracer(legacyTally);
const ion = createSolvedIonState();
const full = createIonState();

/**
 * Through the solved mirror, from its entry plane (the ion's axial state: time t, speed v > 0)
 * and back out, with the transverse state of the record above. Returns false with the fate set
 * when the ion does not come back out.
 */
export function mirrorSolved(st: AxialState, plan: FlightPlan, mirror: SolvedMirrorModel, tLimit_s: number): boolean {
  loadWithTransverse(full, st, 0);
  const exit = crossSolvedMirror(full, plan, mirror, tLimit_s, tracer, ion);
  st.t = full.t;
  st.v = full.v;
  st.fate = full.fate;
  leftSolvedRegion(ion);
  return exit === Exit.FAR;
}
