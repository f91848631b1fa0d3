/**
 * The region model of the engine: the contract every region kernel and the one ensemble driver keep.
 * Later changes to this file are additive only (other work builds on it).
 *
 * The flight is a fixed sequence of sections along the unfolded flight path: source, drift,
 * mirror (reflectron) and return drift when there is one, post-acceleration gap when there is
 * one, then the detector plane. Each section present in the model has one `RegionKernel`, chosen
 * from the model by the driver (closed form where the field allows it, integration where it does
 * not or where the model asks for the integrator, 3-D tracing through a solved field). A kernel
 * crosses its section from an `IonState` and reports either the exit (the ion goes on to the next
 * section) or the ion's fate. Everything an ion carries from region to region is in its `IonState`:
 * no module holds per-ion state.
 *
 * Coordinates: `z` is measured inside the current section from its entry plane along the section's
 * own axis (in the source from the repeller, in the mirror the depth behind the entrance grid), `v`
 * along that axis; at the entry of every section after the source z = 0 and v > 0 along the flight.
 * Transverse motion is straight between solved regions, x(t) = xRef + vxRef·(t − tRef); a solved
 * region moves the reference to where the ion left it. SI units throughout.
 *
 * Starting anywhere: `Flight.fly(st, start)` flies an ion from any section with any state (a
 * fragment formed in the drift, say), after `Flight.setChargeToMass(q/m)` for its charge-to-mass
 * ratio. To stop a parent ion at a given time, record its path with a `SegmentObserver`: each
 * segment names its section and holds the state on it, from which the state at any time inside it
 * follows.
 */
import type { Ensemble, TraceResult } from '../../ions/ensemble';
import type { AnalyserModel } from '../analyser';
import { Fate, type FateCode, type RegionExit } from '../fates';
import type { FlightPlan } from './plan';

/** The sections of the unfolded flight, in flight order. */
export const Section = {
  SOURCE: 0,
  DRIFT: 1,
  MIRROR: 2,
  /** Field-free path from the mirror entrance grid back to the detector side. */
  RETURN: 3,
  POST: 4,
} as const;

export type SectionCode = (typeof Section)[keyof typeof Section];

/** Number of sections; `Section` codes index arrays of this length. */
export const SECTION_COUNT = 5;

/** The axial part of an ion's state: what the closed-form kernels read and write. */
export interface AxialState {
  /** Time since ion formation (s). */
  t: number;
  /** Position inside the current section from its entry plane (m); see the coordinates above. */
  z: number;
  /** Velocity along the current section's axis (m/s). */
  v: number;
  /** Fate code (src/physics/fates.ts); Fate.UNSET while in flight. */
  fate: number;
  /** Intensity weight: product of the transmissions of the grids passed so far. */
  w: number;
}

/** Everything one ion carries from region to region. */
export interface IonState extends AxialState {
  /** Reference state of the straight transverse motion (since the start or the last solved region). */
  tRef: number;
  xRef: number;
  yRef: number;
  vxRef: number;
  vyRef: number;
  /** Electrode index of the last strike in a solved region (−1: the grounded wall or none). */
  struckElectrode: number;
}

export function createIonState(): IonState {
  return { t: 0, z: 0, v: 0, fate: Fate.UNSET, w: 1, tRef: 0, xRef: 0, yRef: 0, vxRef: 0, vyRef: 0, struckElectrode: -1 };
}

/** Reset `st` to an ion formed at t = 0 at (x0, y0, z0) with velocity (vx0, vy0, vz0). */
export function startIonState(st: IonState, z0_m: number, vz0_m_per_s: number, x0_m = 0, y0_m = 0, vx0_m_per_s = 0, vy0_m_per_s = 0): IonState {
  st.t = 0;
  st.z = z0_m;
  st.v = vz0_m_per_s;
  st.fate = Fate.UNSET;
  st.w = 1;
  st.tRef = 0;
  st.xRef = x0_m;
  st.yRef = y0_m;
  st.vxRef = vx0_m_per_s;
  st.vyRef = vy0_m_per_s;
  st.struckElectrode = -1;
  return st;
}

/** Transverse position at time t (straight motion from the reference state). */
export function transverseXAt(st: IonState, t: number): number {
  return st.xRef + st.vxRef * (t - st.tRef);
}
export function transverseYAt(st: IonState, t: number): number {
  return st.yRef + st.vyRef * (t - st.tRef);
}

/** How a segment describes the path. */
export const SegmentKind = {
  /** Exact: x(τ) = z0 + v0·τ + a·τ²/2 for τ in [0, dt]. */
  CLOSED_FORM: 0,
  /** An integrated or solved crossing drawn as one chord: end points exact, the acceleration the one that joins them. */
  CHORD: 1,
} as const;

export type SegmentKindCode = (typeof SegmentKind)[keyof typeof SegmentKind];

/**
 * Receives the path of each ion as the kernels cross the regions (for drawing, packet animation,
 * or the state of a parent ion at a decay time). Optional: without one the kernels report nothing.
 */
export interface SegmentObserver {
  /** Before the first segment of ion `ion` (its index in the ensemble; 0 for a single ion). */
  begin?(ion: number): void;
  /** The ion arrives at the entry of `section` (for the source: at its start). */
  enter?(section: SectionCode, st: Readonly<IonState>): void;
  /**
   * One piece of the path inside `section` (`stage`: the source or mirror stage, else 0), in the
   * section's own coordinates: it starts at time t0_s at z0_m with velocity v0_m_per_s and lasts dt_s.
   */
  segment(section: SectionCode, stage: number, t0_s: number, dt_s: number, z0_m: number, v0_m_per_s: number, a_m_per_s2: number, kind: SegmentKindCode): void;
  /** After the ion's fate is decided (st.fate set, st.t capped at the time limit). */
  end?(ion: number, st: Readonly<IonState>): void;
}

/**
 * One region's crossing. `cross` starts from `st` on or inside the section (see the coordinates
 * above) with `plan` prepared for the ion's q/m, and returns
 *  - Exit.FAR when the ion leaves onto the next section: st.t is the time then, st.v the speed
 *    along the next section (> 0 on the unfolded path; out of a mirror it is the speed on the
 *    return leg), st.w the weight after the grids passed; the driver then sets st.z = 0;
 *  - a fate code (neither UNSET nor DETECTED) when the ion is lost in the section, with st.fate
 *    set to it and st.t the time it was decided.
 * Kernels allocate nothing per ion: scratch objects belong to the kernel, which the driver creates
 * per call. They report their path to `observer` when one is given.
 */
export interface RegionKernel {
  readonly section: SectionCode;
  /** What the kernel does, for diagnostics (e.g. "uniform stages, closed form"). */
  readonly name: string;
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit;
}

/** Integration effort, summed over a call (diagnostics only: they change no number). */
export interface TraceCounters {
  /** Axial integrator (numeric regions): accepted steps and right-hand-side evaluations. */
  axialSteps: number;
  axialEvaluations: number;
  /** 3-D tracing through solved fields: accepted and rejected steps, field evaluations. */
  solvedSteps: number;
  solvedRejected: number;
  solvedEvaluations: number;
  /** Message of the last failed integration ('' when none failed). */
  lastMessage: string;
}

export function createTraceCounters(): TraceCounters {
  return { axialSteps: 0, axialEvaluations: 0, solvedSteps: 0, solvedRejected: 0, solvedEvaluations: 0, lastMessage: '' };
}

/**
 * Which kernels the driver chooses: 'auto' is what a run does (closed form wherever the model's
 * fields allow it, the region-by-region mixed choice when some region needs integration, see
 * `needsIntegrator`); 'mixed' takes the mixed choice even for an all-closed-form model (same
 * closed-form kernels, ion by ion instead of over blocks).
 */
export type EngineChoice = 'auto' | 'mixed';

export interface FlightOptions {
  readonly engine?: EngineChoice;
  /** Where the integration effort is summed; none when omitted. */
  readonly counters?: TraceCounters | null;
  /** Ions the flight will carry (sizes the solved-mirror transfer map when the model asks for one). */
  readonly ions?: number;
}

/** The kernels chosen for one model, ready to fly single ions from any section. */
export interface Flight {
  readonly model: AnalyserModel;
  /** Kernel per section (index: `Section` code); null for a section the model does not have. */
  readonly kernels: readonly (RegionKernel | null)[];
  /** The per-q/m constants in use (filled by setChargeToMass / setMz). */
  readonly plan: FlightPlan;
  /** Prepare every region for ions of signed charge-to-mass ratio q/m (C/kg); cheap when unchanged. */
  setChargeToMass(qOverM_C_per_kg: number): void;
  /** setChargeToMass for an ion of m/z `mz` (the model's polarity gives the sign). */
  setMz(mz: number): void;
  /**
   * Fly the ion in `st` from section `start` (default: the source) to its fate: fills st.fate,
   * st.t (capped at the model's time limit, fate TIMED_OUT beyond it), st.v (the speed at the
   * detector when detected), st.w and the transverse reference. Returns the fate.
   */
  fly(st: IonState, start?: SectionCode, observer?: SegmentObserver | null): FateCode;
}

export type CreateFlight = (model: AnalyserModel, options?: FlightOptions) => Flight;

export interface TraceOptions extends FlightOptions {
  /** Ions [from, to) of the ensemble (default: all); the others in `out` are left untouched. */
  readonly from?: number;
  readonly to?: number;
  /** Receives every ion's path; the driver then flies ion by ion. */
  readonly observer?: SegmentObserver | null;
}

/**
 * The one ensemble driver: trace ions of `ensemble` through `model` into `out` (flight time, fate,
 * final speed, weight; the detector-plane position too when the model has a solved region, else
 * `applyDetectorPlane` computes it from the straight transverse motion).
 */
export type TraceEnsemble = (model: AnalyserModel, ensemble: Ensemble, out: TraceResult, options?: TraceOptions) => void;
