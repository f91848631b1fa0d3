/**
 * The solved-field mirror's model under its earlier module name (the kernel is in
 * src/physics/regions/solvedKernels.ts, the transfer map in solvedMirrorMap.ts; both carry the
 * transverse state in each ion's IonState), and the one compatibility record left: the transverse
 * state of exactEngine.traceOneExact's single-ion calls. Nothing in this project's engine reads or
 * writes the record any more; it goes together with traceOneExact.
 */
import type { AxialState, IonState } from './regions/contract';
import type { SolvedMirrorModel } from './regions/solvedKernels';

export type { SolvedMirrorModel };

/** Transverse reference state (t, x, y, vx, vy) of traceOneExact's ion. */
export interface TransverseRecord {
  tRef: number;
  xRef: number;
  yRef: number;
  vxRef: number;
  vyRef: number;
}

export const transverse: TransverseRecord = { tRef: 0, xRef: 0, yRef: 0, vxRef: 0, vyRef: 0 };

/** A full IonState from an axial state and the record above (for traceOneExact). */
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
