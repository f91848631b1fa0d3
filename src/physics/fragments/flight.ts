/**
 * Flight of one ion (or neutral) through the ideal-grid analyser leg by leg, from ANY state (leg,
 * stage, position, velocity, time) and optionally only up to a stop time. A precursor is flown to
 * its decay time; each product continues from that state with its own charge-to-mass ratio.
 *
 * Why a walker of its own: the engine's region kernels (src/physics/exactEngine.ts) cross whole
 * regions from their entry plane, while a product starts anywhere inside one, possibly moving
 * backwards (kinetic-energy release) or pushed back across a grid by its new field. Each uniform stage
 * is crossed in closed form (firstExit: the first plane reached, either side); a source with rising
 * potentials uses the engine's closed form under pulses (crossSourceStageClosed) and a polynomial
 * mirror is integrated (the caller's AxialIntegrator: its first-step memory belongs to one run), both with the stop time as their end time. Solved-field
 * regions are not walked here: solvedDecay.ts crosses them with the solved-field tracer and uses this
 * walker only inside the ideal sections of such a model.
 *
 * Coordinates per leg: source z from the repeller (as the engine); drift, return drift and post gap
 * the distance from the leg's entry plane along the flight; mirror (and behind it) the depth from the
 * entrance grid, velocity positive inwards.
 */
import type { AnalyserModel } from '../analyser';
import { holdExactUntil, type ExactPlan, type IonState } from '../exactEngine';
import { Fate } from '../fates';
import { Exit } from '../numericRegions';
import type { AxialIntegrator } from '../regions/axialIntegrator';
import { crossSourceStageClosed } from '../pulsedStage';
import { createMotion, firstExit } from '../uniformField';
import { settleTime_s, switchStart_s } from '../waveforms';
import { Leg, type BehindMirrorDetectorModel } from './decayModel';

export interface FlightState extends IonState {
  /** Leg (Leg.*) and stage within it (source or mirror stage). */
  leg: number;
  stage: number;
  /** Time the ion entered each leg (s); NaN for legs not (yet) reached. Filled as it flies. */
  readonly legEntry_s: Float64Array;
}

export function createFlightState(): FlightState {
  return { t: 0, z: 0, v: 0, fate: Fate.UNSET, w: 1, leg: Leg.SOURCE, stage: 0, legEntry_s: new Float64Array(6).fill(NaN) };
}

/** Put `st` at the start of a flight: in the source at z (m from the repeller) with axial velocity v at t = 0. */
export function startFlight(st: FlightState, z_m: number, v_m_per_s: number): FlightState {
  st.t = 0;
  st.z = z_m;
  st.v = v_m_per_s;
  st.fate = Fate.UNSET;
  st.w = 1;
  st.leg = Leg.SOURCE;
  st.stage = 0;
  st.legEntry_s.fill(NaN);
  st.legEntry_s[Leg.SOURCE] = 0;
  return st;
}

export function copyFlightState(out: FlightState, from: FlightState): FlightState {
  out.t = from.t;
  out.z = from.z;
  out.v = from.v;
  out.fate = from.fate;
  out.w = from.w;
  out.leg = from.leg;
  out.stage = from.stage;
  out.legEntry_s.set(from.legEntry_s);
  return out;
}

/** Outcome of `fly`. */
export const Flight = {
  /** Alive at the stop time; the state is where the ion is then. */
  STOPPED: 0,
  /** The ion met its fate (detected or lost) before the stop time; `fate` and `t` say which and when. */
  ENDED: 1,
} as const;

const motion = createMotion();
/** Grid crossings in one leg before an ion held at a grid by fields pushing from both sides is given up. */
const MAX_CROSSINGS = 10_000;

function enter(st: FlightState, leg: number, stage: number, z: number): void {
  st.leg = leg;
  st.stage = stage;
  st.z = z;
  if (Number.isNaN(st.legEntry_s[leg])) st.legEntry_s[leg] = st.t;
}

function end(st: FlightState, fate: number, tLimit: number): number {
  st.fate = fate;
  if (fate === Fate.TIMED_OUT || !(st.t <= tLimit)) {
    st.fate = Fate.TIMED_OUT;
    st.t = tLimit;
  }
  return Flight.ENDED;
}

/** Advance by dt at constant acceleration a (within a stage, no plane reached). */
function coast(st: FlightState, dt: number, a: number): void {
  st.z += st.v * dt + 0.5 * a * dt * dt;
  st.v += a * dt;
  st.t += dt;
}

/**
 * Fly `st` with the charge-to-mass ratio of `plan` (qOverM 0 for a neutral) until `tStop` or its fate.
 * `behind` is the linear detector behind the mirror, if the analyser has one.
 */
export function fly(st: FlightState, plan: ExactPlan, model: AnalyserModel, behind: BehindMirrorDetectorModel | null, tStop: number, integrator: AxialIntegrator): number {
  const tLimit = model.maxFlightTime_s;
  const stop = Math.min(tStop, tLimit);
  for (let guard = 0; guard < 64; guard++) {
    if (st.t >= stop) return st.t >= tLimit ? end(st, Fate.TIMED_OUT, tLimit) : Flight.STOPPED;
    let r: number;
    switch (st.leg) {
      case Leg.SOURCE:
        r = flySource(st, plan, model, stop);
        break;
      case Leg.DRIFT:
        r = flyFieldFree(st, plan.driftLength_m, stop, plan.mirrorStageCount > 0 || model.mirror?.profile ? Leg.MIRROR : Leg.POST);
        if (r < 0 && (st.leg as number) === Leg.MIRROR) st.w *= model.mirror?.entranceGridTransmission ?? 1;
        break;
      case Leg.MIRROR:
        r = model.mirror?.profile ? flyProfileMirror(st, plan, model, stop, integrator) : flyStageMirror(st, plan, stop);
        break;
      case Leg.BEHIND:
        r = flyBehind(st, plan, behind, stop);
        break;
      case Leg.RETURN:
        r = flyFieldFree(st, plan.returnLength_m, stop, Leg.POST);
        break;
      default:
        r = flyPost(st, plan, stop);
    }
    if (r === Flight.STOPPED) return st.t >= tLimit ? end(st, Fate.TIMED_OUT, tLimit) : Flight.STOPPED;
    if (r === Flight.ENDED) return end(st, st.fate, tLimit);
    // r < 0: entered the next leg; go on.
  }
  return end(st, Fate.INTEGRATION_FAILED, tLimit); // more leg changes than any path has: a defect, reported
}

/** Returned by the leg walkers when the ion entered another leg. */
const NEXT = -1;

function sourceStageOf(plan: ExactPlan, z: number, v: number): number {
  let j = 0;
  while (j < plan.sourceStageCount - 1 && (z > plan.sourcePlane_m[j + 1] || (z === plan.sourcePlane_m[j + 1] && v >= 0))) j++;
  return j;
}

function flySource(st: FlightState, plan: ExactPlan, model: AnalyserModel, stop: number): number {
  const src = model.source;
  const stepped = src.rise.kind === 'step';
  // Hold phase: static hold fields until the potentials start to change (the engine's own kernel).
  const holdEnd = stepped ? plan.delay_s : switchStart_s(src);
  if (st.t < holdEnd) {
    if (!holdExactUntil(st, plan, Math.min(holdEnd, stop))) return Flight.ENDED;
    if (st.t >= stop) return Flight.STOPPED;
  }
  const last = plan.sourceStageCount - 1;
  let j = sourceStageOf(plan, st.z, st.v);
  const settle = stepped ? 0 : settleTime_s(src);
  for (let crossings = 0; crossings < MAX_CROSSINGS; crossings++) {
    const lo = plan.sourcePlane_m[j];
    const hi = plan.sourcePlane_m[j + 1];
    let side: number;
    if (st.t < settle) {
      const exit = crossSourceStageClosed(st, src, plan.qOverM, j, lo, hi, Math.min(stop, settle));
      if (exit === Exit.TIME_LIMIT) {
        if (st.t >= stop) return Flight.STOPPED;
        continue; // settled: static fields from here on
      }
      side = exit === Exit.HIGH ? 1 : -1;
    } else {
      const a = plan.sourceAcceleration[j];
      side = firstExit(motion, st.z, st.v, a, lo, hi);
      if (side === 0) {
        st.fate = Fate.TIMED_OUT; // at rest in a field-free stage
        return Flight.ENDED;
      }
      if (st.t + motion.dt > stop) {
        coast(st, stop - st.t, a);
        return Flight.STOPPED;
      }
      st.t += motion.dt;
      st.v = motion.v;
      st.z = side > 0 ? hi : lo;
    }
    if (side > 0) {
      st.w *= plan.sourceExitTransmission[j];
      if (j === last) {
        if (st.t < plan.delay_s) {
          st.fate = Fate.LEFT_SOURCE_DURING_DELAY;
          return Flight.ENDED;
        }
        enter(st, Leg.DRIFT, 0, 0);
        return NEXT;
      }
      j++;
    } else {
      if (j === 0) {
        st.fate = Fate.STRUCK_REPELLER;
        return Flight.ENDED;
      }
      j--;
      st.w *= plan.sourceExitTransmission[j]; // back through the grid between the stages
    }
    st.stage = j;
  }
  st.fate = Fate.TIMED_OUT; // held at a grid by fields pushing from both sides
  return Flight.ENDED;
}

function flyFieldFree(st: FlightState, length: number, stop: number, nextLeg: number): number {
  if (!(st.v > 0)) {
    // At rest, or sent backwards by a large release: in a field-free tube it never reaches the detector.
    st.fate = st.v < 0 ? Fate.TURNED_BACK : Fate.TIMED_OUT;
    return Flight.ENDED;
  }
  const dt = (length - st.z) / st.v;
  if (st.t + dt > stop) {
    coast(st, stop - st.t, 0);
    return Flight.STOPPED;
  }
  st.t += dt;
  enter(st, nextLeg, 0, 0);
  return NEXT;
}

/** Gridded mirror of uniform stages, from any depth and direction. */
function flyStageMirror(st: FlightState, plan: ExactPlan, stop: number): number {
  const n = plan.mirrorStageCount;
  let j = st.stage;
  let lo = 0;
  for (let k = 0; k < j; k++) lo += plan.mirrorLength_m[k];
  for (let crossings = 0; crossings < MAX_CROSSINGS; crossings++) {
    const hi = lo + plan.mirrorLength_m[j];
    const a = plan.mirrorAcceleration[j];
    const side = firstExit(motion, st.z, st.v, a, lo, hi);
    if (side === 0) {
      st.fate = Fate.TIMED_OUT;
      return Flight.ENDED;
    }
    if (st.t + motion.dt > stop) {
      coast(st, stop - st.t, a);
      st.stage = j;
      return Flight.STOPPED;
    }
    st.t += motion.dt;
    st.v = motion.v;
    if (side > 0) {
      st.z = hi;
      if (j === n - 1) {
        enter(st, Leg.BEHIND, 0, hi);
        return NEXT;
      }
      j++;
      st.w *= plan.mirrorEntryTransmission[j];
      lo = hi;
    } else {
      st.z = lo;
      st.w *= plan.mirrorEntryTransmission[j];
      if (j === 0) {
        st.v = -st.v; // out of the mirror: speed along the (unfolded) return path
        enter(st, Leg.RETURN, 0, 0);
        return NEXT;
      }
      j--;
      lo -= plan.mirrorLength_m[j];
    }
    st.stage = j;
  }
  st.fate = Fate.TIMED_OUT;
  return Flight.ENDED;
}

function flyProfileMirror(st: FlightState, plan: ExactPlan, model: AnalyserModel, stop: number, integrator: AxialIntegrator): number {
  const mirror = model.mirror!;
  const exit = integrator.crossProfile(st, mirror.profile!, plan.qOverM, stop);
  if (exit === Exit.TIME_LIMIT) return Flight.STOPPED;
  if (exit === Exit.FAILED) {
    st.fate = Fate.INTEGRATION_FAILED;
    return Flight.ENDED;
  }
  if (exit === Exit.HIGH) {
    enter(st, Leg.BEHIND, 0, mirror.profile!.depth_m);
    return NEXT;
  }
  st.w *= mirror.entranceGridTransmission;
  st.v = -st.v;
  enter(st, Leg.RETURN, 0, 0);
  return NEXT;
}

/** Past the back plate: field-free to the linear detector behind the mirror, if there is one. */
function flyBehind(st: FlightState, plan: ExactPlan, behind: BehindMirrorDetectorModel | null, stop: number): number {
  if (behind === null) {
    st.fate = plan.qOverM === 0 ? Fate.NEUTRAL_LOST : Fate.PASSED_THROUGH_MIRROR;
    return Flight.ENDED;
  }
  if (!(st.v > 0)) {
    st.fate = Fate.TIMED_OUT;
    return Flight.ENDED;
  }
  const dt = (behind.distance_m - st.z) / st.v;
  if (st.t + dt > stop) {
    coast(st, stop - st.t, 0);
    return Flight.STOPPED;
  }
  st.t += dt;
  st.z = behind.distance_m;
  st.fate = Fate.DETECTED_BEHIND_MIRROR;
  return Flight.ENDED;
}

function flyPost(st: FlightState, plan: ExactPlan, stop: number): number {
  if (plan.postGap_m <= 0) {
    st.fate = Fate.DETECTED;
    return Flight.ENDED;
  }
  const a = plan.postAcceleration;
  const side = firstExit(motion, st.z, st.v, a, 0, plan.postGap_m);
  if (side === 0) {
    st.fate = Fate.TIMED_OUT;
    return Flight.ENDED;
  }
  if (st.t + motion.dt > stop) {
    coast(st, stop - st.t, a);
    return Flight.STOPPED;
  }
  st.t += motion.dt;
  st.v = motion.v;
  if (side < 0) {
    st.fate = Fate.TURNED_BACK;
    return Flight.ENDED;
  }
  st.z = plan.postGap_m;
  st.w *= plan.postGridTransmission;
  st.fate = Fate.DETECTED;
  return Flight.ENDED;
}
