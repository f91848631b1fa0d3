/**
 * Axial trajectory of one ion through the analyser, as a list of uniform-acceleration segments, for
 * drawing paths and animating packets. It follows the exact engine stage by stage with the same
 * closed-form kernels (src/physics/uniformField.ts), so its flight time and fate are the engine's.
 *
 * Positions are in the folded analyser frame: x is measured from the repeller along the axis
 * towards the drift tube and mirror; after the mirror turn the ion moves back (negative velocity)
 * down the return leg. Within segment k, x(t) = x0[k] + v0[k]·τ + a[k]·τ²/2 with τ = t − t0[k].
 */
import type { ExactPlan } from './exactEngine';
import { Fate } from './fates';
import { createMotion, crossForward, Crossing, enterStage, firstExit } from './uniformField';

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
  const k = tr.count++;
  tr.region[k] = region;
  tr.stage[k] = stage;
  tr.t0_s[k] = t0;
  tr.dt_s[k] = dt;
  tr.x0_m[k] = x0;
  tr.v0_m_per_s[k] = v0;
  tr.a_m_per_s2[k] = a;
}

const motion = createMotion();
/** Hold-phase grid crossings drawn before the path is given up (an ion pinned at a grid; see exactEngine). */
const MAX_DRAWN_HOLD_CROSSINGS = 10_000;

/**
 * Fill `tr` with the path of an ion of the plan's m/z starting at z0 (m from the repeller) with
 * axial velocity v0 (m/s) at t = 0. Mirrors `traceOneExact` step by step, including its time sums.
 */
export function traceTrajectory(tr: Trajectory, plan: ExactPlan, z0: number, v0: number): Trajectory {
  tr.count = 0;
  tr.fate = Fate.UNSET;
  tr.sourceExit_s = NaN;
  tr.driftSpeed_m_per_s = 0;
  let t = 0;
  let z = z0;
  let v = v0;
  const finish = (fate: number): Trajectory => {
    tr.fate = fate;
    tr.flightTime_s = t;
    if (fate === Fate.TIMED_OUT || !(t <= plan.maxFlightTime_s)) {
      tr.fate = Fate.TIMED_OUT;
      tr.flightTime_s = plan.maxFlightTime_s;
    }
    return tr;
  };

  // Hold phase of delayed extraction, stage by stage in the hold fields (exactEngine.holdExactUntil).
  if (plan.delay_s > 0) {
    const last = plan.sourceStageCount - 1;
    let j = 0;
    for (let crossing = 0; ; crossing++) {
      const duration = plan.delay_s - t;
      if (duration <= 0) break;
      const lo = plan.sourcePlane_m[j];
      const hi = plan.sourcePlane_m[j + 1];
      const a = plan.sourceHoldAcceleration[j];
      const side = firstExit(motion, z, v, a, lo, hi);
      if (side === 0 || motion.dt > duration) {
        push(tr, Region.HOLD, j, t, duration, z, v, a);
        z += v * duration + 0.5 * a * duration * duration;
        v += a * duration;
        t = plan.delay_s;
        break;
      }
      if (crossing >= MAX_DRAWN_HOLD_CROSSINGS) return finish(Fate.TIMED_OUT);
      push(tr, Region.HOLD, j, t, motion.dt, z, v, a);
      t += motion.dt;
      v = motion.v;
      z = side < 0 ? lo : hi;
      if (side < 0 && j === 0) return finish(Fate.STRUCK_REPELLER);
      if (side > 0 && j === last) return finish(Fate.LEFT_SOURCE_DURING_DELAY);
      j += side;
    }
  }

  // Source stages (exactEngine.extractExact).
  for (let j = 0; j < plan.sourceStageCount; j++) {
    const start = plan.sourcePlane_m[j];
    const end = plan.sourcePlane_m[j + 1];
    if (z >= end && v >= 0) continue;
    const a = plan.sourceAcceleration[j];
    const crossing = crossForward(motion, v, a, end - z, z - start);
    if (crossing !== Crossing.FORWARD) {
      if (crossing === Crossing.NEVER) return finish(Fate.TIMED_OUT);
      // Drawn until it leaves the stage backwards; the engine's time stays at the stage entry.
      const side = firstExit(motion, z, v, a, start, end);
      if (side !== 0 && Number.isFinite(motion.dt)) push(tr, Region.SOURCE, j, t, motion.dt, z, v, a);
      return finish(j === 0 ? Fate.STRUCK_REPELLER : Fate.TURNED_BACK);
    }
    push(tr, Region.SOURCE, j, t, motion.dt, z, v, a);
    t += motion.dt;
    v = motion.v;
    z = end;
  }
  tr.sourceExit_s = t;
  tr.driftSpeed_m_per_s = v;

  // Drift (exactEngine.driftExact).
  const driftStart = z;
  if (plan.driftLength_m > 0) {
    if (!(v > 0)) {
      t = Infinity;
      return finish(Fate.TIMED_OUT);
    }
    const dt = plan.driftLength_m / v;
    push(tr, Region.DRIFT, 0, t, dt, z, v, 0);
    t += dt;
    z += plan.driftLength_m;
  }
  const mirrorEntrance = driftStart + plan.driftLength_m;

  let direction = 1;
  if (plan.mirrorStageCount > 0) {
    // Mirror (exactEngine.mirrorExact): in, turned, out with the entry speed.
    const tIn = t;
    let speed = v;
    let elapsed = 0;
    let depth = mirrorEntrance;
    let turned = false;
    for (let j = 0; j < plan.mirrorStageCount; j++) {
      const a = plan.mirrorAcceleration[j];
      const through = enterStage(motion, speed, a, plan.mirrorLength_m[j]);
      if (!through) {
        // Turning point inside stage j: half the in-and-out time each way; the way back starts at rest.
        const half = motion.dt / 2;
        push(tr, Region.MIRROR_IN, j, tIn + elapsed, half, depth, speed, a);
        push(tr, Region.MIRROR_OUT, j, tIn + elapsed + half, half, depth + (speed * speed) / (-2 * a), 0, a);
        // Way out: the stages crossed on the way in, in reverse, time-reversed.
        const tTurnEnd = tIn + elapsed + motion.dt;
        let tOut = tTurnEnd;
        for (let k = j - 1; k >= 0; k--) {
          const kIn = findSegment(tr, Region.MIRROR_IN, k);
          const dtk = tr.dt_s[kIn];
          const vEnd = tr.v0_m_per_s[kIn] + tr.a_m_per_s2[kIn] * dtk;
          const xEnd = tr.x0_m[kIn] + tr.v0_m_per_s[kIn] * dtk + 0.5 * tr.a_m_per_s2[kIn] * dtk * dtk;
          push(tr, Region.MIRROR_OUT, k, tOut, dtk, xEnd, -vEnd, tr.a_m_per_s2[kIn]);
          tOut += dtk;
        }
        t = tIn + (2 * elapsed + motion.dt); // same sum as the engine
        turned = true;
        break;
      }
      push(tr, Region.MIRROR_IN, j, tIn + elapsed, motion.dt, depth, speed, a);
      elapsed += motion.dt;
      depth += plan.mirrorLength_m[j];
      speed = motion.v;
    }
    if (!turned) {
      t += elapsed;
      return finish(Fate.PASSED_THROUGH_MIRROR);
    }
    direction = -1;
    z = mirrorEntrance;
    // Return drift (speed unchanged by the static mirror).
    if (plan.returnLength_m > 0) {
      const dt = plan.returnLength_m / v;
      push(tr, Region.RETURN, 0, t, dt, z, -v, 0);
      t += dt;
      z -= plan.returnLength_m;
    }
  }

  // Post-acceleration gap (exactEngine.postAccelerateExact), along the current direction.
  if (plan.postGap_m > 0) {
    const a = plan.postAcceleration;
    const crossing = crossForward(motion, v, a, plan.postGap_m, 0);
    if (crossing !== Crossing.FORWARD) return finish(crossing === Crossing.NEVER ? Fate.TIMED_OUT : Fate.TURNED_BACK);
    push(tr, Region.POST, 0, t, motion.dt, z, direction * v, direction * a);
    t += motion.dt;
  }
  return finish(Fate.DETECTED);
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
