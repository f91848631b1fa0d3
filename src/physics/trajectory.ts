/**
 * Axial trajectory of one ion through the analyser, as a list of uniform-acceleration segments, for
 * drawing paths and animating packets. The segments are what the region kernels report to a
 * `SegmentObserver` as they fly the ion (src/physics/regions/), so its flight time and fate are the
 * engine's; `TrajectoryRecorder` turns them into this drawing frame and can be handed to the
 * driver (traceEnsemble / Flight.fly) to record paths with any kernel choice.
 *
 * Positions are in the folded analyser frame: x is measured from the repeller along the axis
 * towards the drift tube and mirror; after the mirror turn the ion moves back (negative velocity)
 * down the return leg. Within segment k, x(t) = x0[k] + v0[k]·τ + a[k]·τ²/2 with τ = t − t0[k].
 */
import { Fate } from './fates';
import { Section, SegmentKind, createIonState, type IonState, type SectionCode, type SegmentObserver } from './regions/contract';
import { flySections } from './regions/driver';
import { FieldFreeKernel, PostGapKernel, StageMirrorKernel, StaticSourceKernel } from './regions/uniformStages';
import type { RegionKernel } from './regions/contract';
import type { FlightPlan } from './regions/plan';

/** Which part of the analyser a segment lies in. */
export const Region = {
  HOLD: 0,
  SOURCE: 1,
  DRIFT: 2,
  MIRROR_IN: 3,
  MIRROR_OUT: 4,
  RETURN: 5,
  POST: 6,
} as const;

export type RegionCode = (typeof Region)[keyof typeof Region];

/** Enough for hold + 8 source stages + drift + 8 mirror stages in and out + return + post. */
export const MAX_SEGMENTS = 32;

export interface Trajectory {
  /** Segments in use. */
  count: number;
  readonly region: Uint8Array;
  /** Stage index within the region (source or mirror stage); 0 elsewhere. */
  readonly stage: Uint8Array;
  readonly t0_s: Float64Array;
  readonly dt_s: Float64Array;
  readonly x0_m: Float64Array;
  readonly v0_m_per_s: Float64Array;
  readonly a_m_per_s2: Float64Array;
  fate: number;
  /** The time the exact engine reports for this ion (arrival time when detected, capped at the time limit). */
  flightTime_s: number;
  /** Time at which the ion left the source (ground grid); NaN when it never did. */
  sourceExit_s: number;
  /** Axial speed in the field-free drift (m/s); 0 when it never got there. */
  driftSpeed_m_per_s: number;
}

export function createTrajectory(): Trajectory {
  return {
    count: 0,
    region: new Uint8Array(MAX_SEGMENTS),
    stage: new Uint8Array(MAX_SEGMENTS),
    t0_s: new Float64Array(MAX_SEGMENTS),
    dt_s: new Float64Array(MAX_SEGMENTS),
    x0_m: new Float64Array(MAX_SEGMENTS),
    v0_m_per_s: new Float64Array(MAX_SEGMENTS),
    a_m_per_s2: new Float64Array(MAX_SEGMENTS),
    fate: Fate.UNSET,
    flightTime_s: 0,
    sourceExit_s: NaN,
    driftSpeed_m_per_s: 0,
  };
}

function push(tr: Trajectory, region: RegionCode, stage: number, t0: number, dt: number, x0: number, v0: number, a: number): void {
  if (tr.count === MAX_SEGMENTS) {
    // Full (an integrated crossing restarted at many waveform breakpoints): the last segment becomes
    // the chord from its start to this segment's end, so the path still ends where the ion did.
    const k = MAX_SEGMENTS - 1;
    const span = t0 + dt - tr.t0_s[k];
    const xEnd = x0 + v0 * dt + 0.5 * a * dt * dt;
    tr.dt_s[k] = span;
    tr.a_m_per_s2[k] = span > 0 ? (2 * (xEnd - tr.x0_m[k] - tr.v0_m_per_s[k] * span)) / (span * span) : 0;
    return;
  }
  const k = tr.count++;
  tr.region[k] = region;
  tr.stage[k] = stage;
  tr.t0_s[k] = t0;
  tr.dt_s[k] = dt;
  tr.x0_m[k] = x0;
  tr.v0_m_per_s[k] = v0;
  tr.a_m_per_s2[k] = a;
}

/**
 * Records the segments the kernels report into a `Trajectory`, in the folded drawing frame: the
 * source from the repeller, the drift from the ground grid, the mirror from its entrance grid
 * (in, then out again time-reversed), the return leg and the post-acceleration gap back towards
 * the detector. Mirror and return positions are summed here in flight order from the frame's
 * origin, so a path is the same to the bit whichever closed-form kernel reported it. A chord (an
 * integrated or solved crossing: exact end points, the acceleration that joins them) is placed
 * as reported, the mirror's depth counted from its entrance grid.
 */
export class TrajectoryRecorder implements SegmentObserver {
  private plan: FlightPlan | null = null;
  private driftStart = 0;
  private mirrorEntrance = 0;
  private depth = 0;
  private lastIn = -1;
  private mirrored = false;

  constructor(public tr: Trajectory) {}

  /** Start recording an ion of `plan` (call before flying it). */
  reset(plan: FlightPlan): void {
    this.plan = plan;
    const tr = this.tr;
    tr.count = 0;
    tr.fate = Fate.UNSET;
    tr.sourceExit_s = NaN;
    tr.driftSpeed_m_per_s = 0;
    tr.flightTime_s = 0;
    this.driftStart = plan.sourcePlane_m[plan.sourceStageCount];
    this.mirrorEntrance = this.driftStart + plan.driftLength_m;
    this.depth = this.mirrorEntrance;
    this.lastIn = -1;
    this.mirrored = false;
  }

  enter(section: SectionCode, st: Readonly<IonState>): void {
    if (section === Section.DRIFT) {
      this.tr.sourceExit_s = st.t;
      this.tr.driftSpeed_m_per_s = st.v;
    } else if (section === Section.MIRROR) this.mirrored = true;
  }

  segment(section: SectionCode, stage: number, t0: number, dt: number, z0: number, v0: number, a: number, kind?: number): void {
    const tr = this.tr;
    const plan = this.plan!;
    if (section === Section.MIRROR && kind === SegmentKind.CHORD) {
      push(tr, v0 > 0 ? Region.MIRROR_IN : Region.MIRROR_OUT, stage, t0, dt, this.mirrorEntrance + z0, v0, a);
      return;
    }
    switch (section) {
      case Section.SOURCE:
        push(tr, t0 < plan.delay_s ? Region.HOLD : Region.SOURCE, stage, t0, dt, z0, v0, a);
        return;
      case Section.DRIFT:
        push(tr, Region.DRIFT, 0, t0, dt, this.driftStart + z0, v0, 0);
        return;
      case Section.MIRROR:
        if (v0 > 0) {
          this.lastIn = tr.count;
          push(tr, Region.MIRROR_IN, stage, t0, dt, this.depth, v0, a);
          this.depth += plan.mirrorLength_m[stage];
        } else if (v0 === 0 && this.lastIn >= 0) {
          // The turning point: the way back starts at rest at the depth where the ion stopped.
          const k = this.lastIn;
          push(tr, Region.MIRROR_OUT, stage, t0, dt, tr.x0_m[k] + (tr.v0_m_per_s[k] * tr.v0_m_per_s[k]) / (-2 * a), 0, a);
        } else {
          // Way out through stage `stage`: its way in, time-reversed.
          const kIn = findSegment(tr, Region.MIRROR_IN, stage);
          const dtk = tr.dt_s[kIn];
          const vEnd = tr.v0_m_per_s[kIn] + tr.a_m_per_s2[kIn] * dtk;
          const xEnd = tr.x0_m[kIn] + tr.v0_m_per_s[kIn] * dtk + 0.5 * tr.a_m_per_s2[kIn] * dtk * dtk;
          push(tr, Region.MIRROR_OUT, stage, t0, dtk, xEnd, -vEnd, tr.a_m_per_s2[kIn]);
        }
        return;
      case Section.RETURN:
        push(tr, Region.RETURN, 0, t0, dt, this.mirrorEntrance - z0, -v0, 0);
        return;
      case Section.POST: {
        const origin = this.mirrored ? (plan.returnLength_m > 0 ? this.mirrorEntrance - plan.returnLength_m : this.mirrorEntrance) : this.mirrorEntrance;
        const direction = this.mirrored ? -1 : 1;
        push(tr, Region.POST, 0, t0, dt, origin + direction * z0, direction * v0, direction * a);
        return;
      }
    }
  }

  end(_ion: number, st: Readonly<IonState>): void {
    this.tr.fate = st.fate;
    this.tr.flightTime_s = st.t;
  }
}

/** The ideal-grid kernels a drawn path follows (a solved region is drawn as its ideal-grid equivalent, as before). */
class DrawnKernels {
  private readonly kernels: (RegionKernel | null)[] = [new StaticSourceKernel(), new FieldFreeKernel(Section.DRIFT), new StageMirrorKernel(), new FieldFreeKernel(Section.RETURN), new PostGapKernel()];
  private readonly view: (RegionKernel | null)[] = this.kernels.slice();
  for(plan: FlightPlan): readonly (RegionKernel | null)[] {
    const mirror = plan.mirrorStageCount > 0;
    this.view[Section.MIRROR] = mirror ? this.kernels[Section.MIRROR] : null;
    this.view[Section.RETURN] = mirror ? this.kernels[Section.RETURN] : null;
    return this.view;
  }
}

const drawn = new DrawnKernels();
const state = createIonState();
const recorder = new TrajectoryRecorder(createTrajectory());

/**
 * Fill `tr` with the path of an ion of the plan's m/z starting at z0 (m from the repeller) with
 * axial velocity v0 (m/s) at t = 0, flown by the closed-form kernels.
 */
export function traceTrajectory(tr: Trajectory, plan: FlightPlan, z0: number, v0: number): Trajectory {
  recorder.tr = tr;
  recorder.reset(plan);
  state.t = 0;
  state.z = z0;
  state.v = v0;
  state.fate = Fate.UNSET;
  state.w = 1;
  state.tRef = state.xRef = state.yRef = state.vxRef = state.vyRef = 0;
  flySections(drawn.for(plan), state, plan, Section.SOURCE, plan.maxFlightTime_s, recorder);
  recorder.end(0, state);
  return tr;
}

function findSegment(tr: Trajectory, region: RegionCode, stage: number): number {
  for (let k = 0; k < tr.count; k++) if (tr.region[k] === region && tr.stage[k] === stage) return k;
  return -1;
}

/** Index of the segment covering time t (the last one when t is past the end; −1 before the start or with no segments). */
export function segmentAt(tr: Trajectory, t: number): number {
  if (tr.count === 0 || t < tr.t0_s[0]) return -1;
  let lo = 0;
  let hi = tr.count - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (tr.t0_s[mid] <= t) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** Time at which the drawn path ends (arrival, or the moment the ion was lost). */
export function pathEnd_s(tr: Trajectory): number {
  if (tr.count === 0) return 0;
  const k = tr.count - 1;
  return tr.t0_s[k] + tr.dt_s[k];
}

/** Axial position (folded frame, m) at time t, held at the ends of the path. */
export function axialPositionAt(tr: Trajectory, t: number): number {
  const k = segmentAt(tr, t);
  if (k < 0) return tr.count ? tr.x0_m[0] : 0;
  const tau = Math.min(Math.max(t - tr.t0_s[k], 0), tr.dt_s[k]);
  return tr.x0_m[k] + tr.v0_m_per_s[k] * tau + 0.5 * tr.a_m_per_s2[k] * tau * tau;
}

/** Axial velocity (folded frame, m/s) at time t inside the path. */
export function axialVelocityAt(tr: Trajectory, t: number): number {
  const k = segmentAt(tr, t);
  if (k < 0) return tr.count ? tr.v0_m_per_s[0] : 0;
  const tau = Math.min(Math.max(t - tr.t0_s[k], 0), tr.dt_s[k]);
  return tr.v0_m_per_s[k] + tr.a_m_per_s2[k] * tau;
}
