/**
 * The mixed tracer's solved-field mirror: the ion leaves the ideal regions on the mirror's entry
 * plane, is traced in 3-D through the solved field (src/fields/solvedTracer.ts) and comes back
 * out through the same plane onto the (unfolded) return path.
 *
 * Ideal regions leave the transverse velocity unchanged, so the transverse position at the entry
 * plane is x0 + vx0·t. The solved field changes it; the state where the ion left the solved region
 * is kept here, and the detector-plane position is x_exit + vx_exit·(t_det − t_exit).
 * One module-level transverse record is reused: no allocation per ion.
 */
import type { UnitFieldSet } from '../fields/unitSolutions';
import { SolvedExit, createSolvedIonState, traceSolvedRegion, type SolvedRegion } from '../fields/solvedTracer';
import type { ExactPlan, IonState } from './exactEngine';
import { Fate } from './fates';

/** A mirror whose field is solved rather than ideal; see src/presets/compileFields.ts. */
export interface SolvedMirrorModel {
  readonly region: SolvedRegion;
  /** Unit fields (cached per geometry) and the drive voltages (relative to the drift potential) of `region.map`. */
  readonly unitFields: UnitFieldSet;
  readonly driveVoltages_V: Float64Array;
  /** Drift potential added to the solved (relative) potential for display. */
  readonly referencePotential_V: number;
}

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

const ion = createSolvedIonState();

/**
 * Through the solved mirror, from its entry plane (the ion's axial state: time t, speed v > 0)
 * and back out. Returns false with the fate set when the ion does not come back out.
 */
export function mirrorSolved(st: IonState, plan: ExactPlan, mirror: SolvedMirrorModel, tLimit_s: number): boolean {
  const region = mirror.region;
  ion.t = st.t;
  ion.x = transverseX(st.t);
  ion.y = transverseY(st.t);
  ion.z = region.entryZ_m;
  ion.vx = transverse.vxRef;
  ion.vy = transverse.vyRef;
  ion.vz = st.v;
  const exit = traceSolvedRegion(ion, region, plan.qOverM, tLimit_s);
  st.t = ion.t;
  leftSolvedRegion(ion);
  switch (exit) {
    case SolvedExit.ENTRY:
      st.v = -ion.vz; // speed along the unfolded return path
      return true;
    case SolvedExit.STRUCK:
      st.fate = Fate.STRUCK_ELECTRODE;
      return false;
    case SolvedExit.FAR:
      st.fate = Fate.PASSED_THROUGH_MIRROR;
      return false;
    case SolvedExit.FAILED:
      st.fate = Fate.INTEGRATION_FAILED;
      return false;
    default:
      st.fate = Fate.TIMED_OUT;
      return false;
  }
}
