/**
 * The mixed tracer's solved source: from the ion's start (position and velocity, transverse
 * included) through the repeller / extraction / ground plates, traced in 3-D in the field
 * φ(t) = Σ V_k(t) φ_k, where the repeller and extraction potentials follow the extraction waveform
 * (src/physics/waveforms.ts) by superposition of unit fields. The ion leaves through the region's
 * far plane into the drift (drift.length_m counts from there). Integration restarts at every jump
 * or kink of the waveform.
 */
import { SolvedExit, createSolvedIonState, struckElectrode, traceSolvedRegion, type SolvedRegion } from '../fields/solvedTracer';
import type { UnitFieldSet } from '../fields/unitSolutions';
import type { SourceModel } from './analyser';
import type { ExactPlan, IonState } from './exactEngine';
import { Fate } from './fates';
import { leftSolvedRegion, transverse } from './solvedMirror';
import { nextBreakpoint_s } from './waveforms';

export interface SolvedSourceModel {
  readonly region: SolvedRegion;
  readonly unitFields: UnitFieldSet;
  /** Drive voltages (relative to the drift potential) once the waveform has settled. */
  readonly driveVoltages_V: Float64Array;
  readonly referencePotential_V: number;
  /** Electrode index of the repeller (a strike there is "struck repeller"). */
  readonly repellerIndex: number;
  /** Mesh z of the repeller face: the ion's start position is measured from it. */
  readonly repellerFaceZ_m: number;
  /** The waveform's source (planes, delay, rise), for the restart times. */
  readonly timing: SourceModel;
}

const ion = createSolvedIonState();

/** From the start through the solved source; false with the fate set when the ion does not leave it. */
export function sourceSolved(st: IonState, plan: ExactPlan, source: SolvedSourceModel, tLimit_s: number): boolean {
  ion.t = st.t;
  ion.x = transverse.xRef + transverse.vxRef * (st.t - transverse.tRef);
  ion.y = transverse.yRef + transverse.vyRef * (st.t - transverse.tRef);
  ion.z = source.repellerFaceZ_m + st.z;
  ion.vx = transverse.vxRef;
  ion.vy = transverse.vyRef;
  ion.vz = st.v;
  if (st.z <= 0 && st.v < 0) {
    st.fate = Fate.STRUCK_REPELLER; // formed on the repeller moving into it
    return false;
  }
  let exit: number;
  while (true) {
    const tEnd = Math.min(nextBreakpoint_s(source.timing, ion.t), tLimit_s);
    exit = traceSolvedRegion(ion, source.region, plan.qOverM, tEnd);
    if (exit !== SolvedExit.TIME_LIMIT || !(ion.t < tLimit_s)) break;
  }
  st.t = ion.t;
  leftSolvedRegion(ion);
  switch (exit) {
    case SolvedExit.FAR:
      if (ion.t < source.timing.delay_s) {
        st.fate = Fate.LEFT_SOURCE_DURING_DELAY;
        return false;
      }
      st.v = ion.vz;
      st.z = 0;
      return true;
    case SolvedExit.STRUCK:
      st.fate = struckElectrode === source.repellerIndex ? Fate.STRUCK_REPELLER : Fate.STRUCK_ELECTRODE;
      return false;
    case SolvedExit.ENTRY:
      st.fate = Fate.STRUCK_REPELLER; // behind the repeller face: only through the repeller itself
      return false;
    case SolvedExit.FAILED:
      st.fate = Fate.INTEGRATION_FAILED;
      return false;
    default:
      st.fate = Fate.TIMED_OUT;
      return false;
  }
}
