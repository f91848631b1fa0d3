/**
 * Closed-form crossings of the ideal-grid regions: uniform static fields between planes
 * (src/physics/uniformField.ts), so each crossing is exact to rounding. The source's hold phase and
 * extraction, field-free paths, the gridded stage mirror and the post-acceleration gap. Each takes
 * the ion's state, the per-q/m plan, a caller-owned `Motion` scratch and an optional observer that
 * receives the path; each either returns true (the ion left the region forward) or sets the fate
 * and returns false. Without an observer they do exactly the arithmetic the engine always did.
 */
import { Exit, Fate } from '../fates';
import { crossForward, enterStage, firstExit, type Motion } from '../uniformField';
import { Section, SegmentKind, type AxialState, type SegmentObserver } from './contract';
import type { FlightPlan } from './plan';

/** Grid crossings allowed during the hold; only an ion resting on a grid between two fields pushing it back reaches it. */
export const MAX_HOLD_CROSSINGS = 10_000;

/**
 * Hold phase of delayed extraction up to time `until` (s since ion formation): the ion moves in the
 * static hold fields, stage by stage: an ion that crosses the extraction grid during the delay flies
 * on into the next stage under that stage's hold potentials (as a solved source field does), and is
 * extracted from wherever it is at the pulse. Returns false (fate set) if it reaches the repeller,
 * or leaves the whole source through the ground grid before the pulse (it is then never extracted).
 */
export function holdUntil(st: AxialState, plan: FlightPlan, until: number, motion: Motion, observer: SegmentObserver | null): boolean {
  const last = plan.sourceStageCount - 1;
  let crossings = 0;
  let j = 0;
  while (j < last && (st.z > plan.sourcePlane_m[j + 1] || (st.z === plan.sourcePlane_m[j + 1] && st.v > 0))) j++;
  for (;;) {
    const duration = until - st.t;
    if (duration <= 0) return true;
    const lo = plan.sourcePlane_m[j];
    const hi = plan.sourcePlane_m[j + 1];
    const a = plan.sourceHoldAcceleration[j];
    const side = firstExit(motion, st.z, st.v, a, lo, hi);
    if (side === 0 || motion.dt > duration) {
      if (observer !== null) observer.segment(Section.SOURCE, j, st.t, duration, st.z, st.v, a, SegmentKind.CLOSED_FORM);
      st.z += st.v * duration + 0.5 * a * duration * duration;
      st.v += a * duration;
      st.t = until;
      return true;
    }
    if (++crossings > MAX_HOLD_CROSSINGS) {
      st.t += motion.dt;
      st.v = motion.v;
      st.fate = Fate.TIMED_OUT; // held at a grid by fields pushing from both sides: it never settles
      return false;
    }
    if (observer !== null) observer.segment(Section.SOURCE, j, st.t, motion.dt, st.z, st.v, a, SegmentKind.CLOSED_FORM);
    st.t += motion.dt;
    st.v = motion.v;
    if (side < 0) {
      st.z = lo;
      if (j === 0) {
        st.fate = Fate.STRUCK_REPELLER;
        return false;
      }
      j--; // back through a grid into the previous stage
      continue;
    }
    st.z = hi;
    st.w *= plan.sourceExitTransmission[j];
    if (j === last) {
      st.fate = Fate.LEFT_SOURCE_DURING_DELAY;
      return false;
    }
    j++;
  }
}

/** From the ion's current position (any source stage, static extraction fields) through the remaining stages to the ground grid. */
export function extract(st: AxialState, plan: FlightPlan, motion: Motion, observer: SegmentObserver | null): boolean {
  let j = 0;
  while (j < plan.sourceStageCount - 1 && (st.z > plan.sourcePlane_m[j + 1] || (st.z === plan.sourcePlane_m[j + 1] && st.v >= 0))) j++;
  for (; j < plan.sourceStageCount; j++) {
    const start = plan.sourcePlane_m[j];
    const end = plan.sourcePlane_m[j + 1];
    const a = plan.sourceAcceleration[j];
    const crossing = crossForward(motion, st.v, a, end - st.z, st.z - start);
    if (crossing !== Exit.FAR) {
      if (observer !== null && crossing === Exit.ENTRY) {
        // Drawn until it leaves the stage backwards; the ion's time stays at the stage entry.
        const side = firstExit(motion, st.z, st.v, a, start, end);
        if (side !== 0 && Number.isFinite(motion.dt)) observer.segment(Section.SOURCE, j, st.t, motion.dt, st.z, st.v, a, SegmentKind.CLOSED_FORM);
      }
      st.fate = crossing === Fate.TIMED_OUT ? Fate.TIMED_OUT : j === 0 ? Fate.STRUCK_REPELLER : Fate.TURNED_BACK;
      return false;
    }
    // A zero-length crossing (already on the exit plane moving on) is no segment of the path.
    if (observer !== null && !(st.z >= end && st.v >= 0)) observer.segment(Section.SOURCE, j, st.t, motion.dt, st.z, st.v, a, SegmentKind.CLOSED_FORM);
    st.t += motion.dt;
    st.v = motion.v;
    st.z = end;
    st.w *= plan.sourceExitTransmission[j];
  }
  return true;
}

/** Field-free flight over `length` (m) from z inside it (0 at its entry). */
export function fieldFree(st: AxialState, length: number, section: number, observer: SegmentObserver | null): boolean {
  const remaining = length - st.z;
  if (length <= 0) return true;
  if (!(st.v > 0)) {
    st.fate = Fate.TIMED_OUT; // at rest in a field-free region: it never arrives
    st.t = Infinity;
    return false;
  }
  const dt = remaining / st.v;
  if (observer !== null) observer.segment(section as 1 | 3, 0, st.t, dt, st.z, st.v, 0, SegmentKind.CLOSED_FORM);
  st.t += dt;
  st.z += remaining;
  return true;
}

/**
 * Gridded mirror of uniform stages, entered at its entrance grid (z = 0, v > 0): in, turned in the
 * first stage it cannot cross, and out again with its entry speed (static fields are
 * time-reversible, so the way out mirrors the way in). On return st.v is the speed on the return leg.
 */
export function stageMirror(st: AxialState, plan: FlightPlan, motion: Motion, observer: SegmentObserver | null): boolean {
  if (observer !== null) return stageMirrorObserved(st, plan, motion, observer);
  let v = st.v;
  let elapsed = 0;
  for (let j = 0; j < plan.mirrorStageCount; j++) {
    const gridT = plan.mirrorEntryTransmission[j];
    const through = enterStage(motion, v, plan.mirrorAcceleration[j], plan.mirrorLength_m[j]);
    if (!through) {
      st.t += 2 * elapsed + motion.dt;
      st.w *= gridT * gridT; // through this stage's entry grid and back out
      return true; // speed on exit equals entry speed: st.v unchanged
    }
    st.w *= gridT * gridT;
    elapsed += motion.dt;
    v = motion.v;
  }
  st.t += elapsed;
  st.v = v;
  st.fate = Fate.PASSED_THROUGH_MIRROR;
  return false;
}

/** stageMirror with the path reported: the same sums, plus the segments in and (time-reversed) out. */
function stageMirrorObserved(st: AxialState, plan: FlightPlan, motion: Motion, observer: SegmentObserver): boolean {
  const tIn = st.t;
  let v = st.v;
  let elapsed = 0;
  let depth = 0;
  for (let j = 0; j < plan.mirrorStageCount; j++) {
    const gridT = plan.mirrorEntryTransmission[j];
    const a = plan.mirrorAcceleration[j];
    const through = enterStage(motion, v, a, plan.mirrorLength_m[j]);
    if (!through) {
      // Turning point inside stage j: half the in-and-out time each way; the way back starts at rest.
      const half = motion.dt / 2;
      observer.segment(Section.MIRROR, j, tIn + elapsed, half, depth, v, a, SegmentKind.CLOSED_FORM);
      observer.segment(Section.MIRROR, j, tIn + elapsed + half, half, depth + (v * v) / (-2 * a), 0, a, SegmentKind.CLOSED_FORM);
      // Way out: the stages crossed on the way in, in reverse, time-reversed.
      const dtTurn = motion.dt;
      let tOut = tIn + elapsed + dtTurn;
      let zOut = depth;
      for (let k = j - 1; k >= 0; k--) {
        const dtk = stageTimeIn(plan, st.v, k, motion);
        const vEnd = speedIn(plan, st.v, k + 1, motion);
        observer.segment(Section.MIRROR, k, tOut, dtk, zOut, -vEnd, plan.mirrorAcceleration[k], SegmentKind.CLOSED_FORM);
        tOut += dtk;
        zOut -= plan.mirrorLength_m[k];
      }
      st.t += 2 * elapsed + dtTurn;
      st.w *= gridT * gridT;
      return true;
    }
    observer.segment(Section.MIRROR, j, tIn + elapsed, motion.dt, depth, v, a, SegmentKind.CLOSED_FORM);
    st.w *= gridT * gridT;
    elapsed += motion.dt;
    depth += plan.mirrorLength_m[j];
    v = motion.v;
  }
  st.t += elapsed;
  st.v = v;
  st.fate = Fate.PASSED_THROUGH_MIRROR;
  return false;
}

/** Time to cross mirror stage k on the way in, for an ion that entered the mirror at speed v0. */
function stageTimeIn(plan: FlightPlan, v0: number, k: number, motion: Motion): number {
  let v = v0;
  for (let j = 0; j < k; j++) {
    enterStage(motion, v, plan.mirrorAcceleration[j], plan.mirrorLength_m[j]);
    v = motion.v;
  }
  enterStage(motion, v, plan.mirrorAcceleration[k], plan.mirrorLength_m[k]);
  return motion.dt;
}

/** Speed at the entry of mirror stage k on the way in, for an ion that entered the mirror at speed v0. */
function speedIn(plan: FlightPlan, v0: number, k: number, motion: Motion): number {
  let v = v0;
  for (let j = 0; j < k; j++) {
    enterStage(motion, v, plan.mirrorAcceleration[j], plan.mirrorLength_m[j]);
    v = motion.v;
  }
  return v;
}

/**
 * The stage mirror from any state inside it (a fragment formed there, say): walked stage by stage
 * with the first exit of each uniform stage. Crossing the grid at the entry of stage j, either way,
 * multiplies the weight by that grid's transmission.
 */
export function stageMirrorFromInside(st: AxialState, plan: FlightPlan, motion: Motion, observer: SegmentObserver | null): boolean {
  const n = plan.mirrorStageCount;
  let j = 0;
  let lo = 0;
  while (j < n - 1 && (st.z > lo + plan.mirrorLength_m[j] || (st.z === lo + plan.mirrorLength_m[j] && st.v > 0))) lo += plan.mirrorLength_m[j++];
  for (;;) {
    const hi = lo + plan.mirrorLength_m[j];
    const a = plan.mirrorAcceleration[j];
    const side = firstExit(motion, st.z, st.v, a, lo, hi);
    if (side === 0) {
      st.fate = Fate.TIMED_OUT; // at rest with no field
      st.t = Infinity;
      return false;
    }
    if (observer !== null) observer.segment(Section.MIRROR, j, st.t, motion.dt, st.z, st.v, a, SegmentKind.CLOSED_FORM);
    st.t += motion.dt;
    st.v = motion.v;
    if (side > 0) {
      st.z = hi;
      if (j === n - 1) {
        st.fate = Fate.PASSED_THROUGH_MIRROR;
        return false;
      }
      j++;
      lo = hi;
      st.w *= plan.mirrorEntryTransmission[j];
      continue;
    }
    st.z = lo;
    st.w *= plan.mirrorEntryTransmission[j];
    if (j === 0) {
      st.v = -st.v; // out through the entrance grid: speed along the return leg
      return true;
    }
    j--;
    lo -= plan.mirrorLength_m[j];
  }
}

/** The post-acceleration gap in front of the detector, from z inside it (0 at its grid). */
export function postGap(st: AxialState, plan: FlightPlan, motion: Motion, observer: SegmentObserver | null): boolean {
  if (plan.postGap_m <= 0) return true;
  const crossing = crossForward(motion, st.v, plan.postAcceleration, plan.postGap_m - st.z, st.z);
  if (crossing !== Exit.FAR) {
    st.fate = crossing === Fate.TIMED_OUT ? Fate.TIMED_OUT : Fate.TURNED_BACK;
    return false;
  }
  if (observer !== null) observer.segment(Section.POST, 0, st.t, motion.dt, st.z, st.v, plan.postAcceleration, SegmentKind.CLOSED_FORM);
  st.t += motion.dt;
  st.v = motion.v;
  st.w *= plan.postGridTransmission;
  return true;
}
