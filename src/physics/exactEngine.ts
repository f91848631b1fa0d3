/**
 * Exact engine: flight times through an analyser of ideal grids with uniform static fields in each
 * stage (the source field may switch once, as an ideal step, at the extraction delay). Every
 * stage crossing is closed-form (src/physics/uniformField.ts), so the result is exact to rounding.
 *
 * The region kernels are exported so that a tracer that integrates some regions numerically can
 * use the closed form for the others. All of them work on one `IonState` scratch object and a
 * per-species `ExactPlan`, both reused, so the per-ion loop allocates nothing.
 */
import type { AnalyserModel } from './analyser';
import { hasSolvedRegion } from './analyser';
import { chargeToMass_C_per_kg } from './constants';
import { traceSpeciesBatch } from './exactBatch';
import { Fate } from './fates';
import { mirrorSolved, startTransverse, transverseX, transverseY, type SolvedMirrorModel } from './solvedMirror';
import { sourceSolved, type SolvedSourceModel } from './solvedSource';
import { createMotion, crossForward, Crossing, enterStage, firstExit } from './uniformField';
import type { Ensemble, TraceResult } from '../ions/ensemble';

export interface IonState {
  t: number;
  z: number;
  v: number;
  fate: number;
  /** Intensity weight: product of the transmissions of the grids passed so far. */
  w: number;
}

export function createIonState(): IonState {
  return { t: 0, z: 0, v: 0, fate: Fate.UNSET, w: 1 };
}

/** Per-species constants of the exact engine: accelerations of every stage for this m/z. */
export interface ExactPlan {
  /** Signed charge-to-mass ratio (C/kg). */
  qOverM: number;
  delay_s: number;
  /** Acceleration in the first source stage while the extraction is held (m/s²). */
  holdAcceleration: number;
  /** Acceleration in each source stage while the extraction is held (the hold potentials; m/s²). */
  readonly sourceHoldAcceleration: Float64Array;
  sourceStageCount: number;
  /** Axial position of each source plane: [0, z1, (z2)] (m). */
  readonly sourcePlane_m: Float64Array;
  readonly sourceAcceleration: Float64Array;
  /** Transmission of the plane closing each source stage. */
  readonly sourceExitTransmission: Float64Array;
  driftLength_m: number;
  mirrorStageCount: number;
  readonly mirrorLength_m: Float64Array;
  readonly mirrorAcceleration: Float64Array;
  /** Transmission of the grid at the entry of each mirror stage (entrance grid first). */
  readonly mirrorEntryTransmission: Float64Array;
  returnLength_m: number;
  postGap_m: number;
  postAcceleration: number;
  postGridTransmission: number;
  maxFlightTime_s: number;
  /** Gridless mirror with a solved field (traced in 3-D, src/physics/solvedMirror.ts); null otherwise. */
  solvedMirror: SolvedMirrorModel | null;
  /** Source with a solved field (traced in 3-D from the start, src/physics/solvedSource.ts); null otherwise. */
  solvedSource: SolvedSourceModel | null;
}

// Enough for tabulated mirror profiles, which become one uniform stage per table segment.
const MAX_STAGES = 256;

export function createExactPlan(): ExactPlan {
  return {
    qOverM: 0,
    delay_s: 0,
    holdAcceleration: 0,
    sourceStageCount: 0,
    sourcePlane_m: new Float64Array(MAX_STAGES + 1),
    sourceAcceleration: new Float64Array(MAX_STAGES),
    sourceHoldAcceleration: new Float64Array(MAX_STAGES),
    sourceExitTransmission: new Float64Array(MAX_STAGES),
    driftLength_m: 0,
    mirrorStageCount: 0,
    mirrorLength_m: new Float64Array(MAX_STAGES),
    mirrorAcceleration: new Float64Array(MAX_STAGES),
    mirrorEntryTransmission: new Float64Array(MAX_STAGES),
    returnLength_m: 0,
    postGap_m: 0,
    postAcceleration: 0,
    postGridTransmission: 1,
    maxFlightTime_s: 0,
    solvedMirror: null,
    solvedSource: null,
  };
}

/** Fill `plan` for ions of the given m/z in `model`. */
export function prepareExactPlan(plan: ExactPlan, model: AnalyserModel, mz: number): ExactPlan {
  const k = model.polarity * chargeToMass_C_per_kg(mz);
  const src = model.source;
  plan.qOverM = k;
  plan.delay_s = src.delay_s;
  plan.sourceStageCount = src.stageLengths_m.length;
  plan.sourcePlane_m[0] = 0;
  for (let j = 0; j < src.stageLengths_m.length; j++) {
    const gap = src.stageLengths_m[j];
    plan.sourcePlane_m[j + 1] = plan.sourcePlane_m[j] + gap;
    plan.sourceAcceleration[j] = (k * (src.planes[j].final_V - src.planes[j + 1].final_V)) / gap;
    plan.sourceHoldAcceleration[j] = (k * (src.planes[j].hold_V - src.planes[j + 1].hold_V)) / gap;
    plan.sourceExitTransmission[j] = src.planeTransmission[j + 1] ?? 1;
  }
  plan.holdAcceleration = (k * (src.planes[0].hold_V - src.planes[1].hold_V)) / src.stageLengths_m[0];
  plan.driftLength_m = model.drift.length_m;
  const mirror = model.mirror;
  plan.mirrorStageCount = mirror ? mirror.stages.length : 0;
  plan.returnLength_m = mirror ? mirror.returnLength_m : 0;
  if (mirror) {
    let entry = model.drift.potential_V;
    for (let j = 0; j < mirror.stages.length; j++) {
      const stage = mirror.stages[j];
      plan.mirrorLength_m[j] = stage.length_m;
      plan.mirrorAcceleration[j] = (k * (entry - stage.exitPotential_V)) / stage.length_m;
      plan.mirrorEntryTransmission[j] = j === 0 ? mirror.entranceGridTransmission : (mirror.innerGridTransmission[j - 1] ?? 1);
      entry = stage.exitPotential_V;
    }
  }
  const post = model.postAcceleration;
  plan.postGap_m = post ? post.gap_m : 0;
  plan.postAcceleration = post ? (k * (model.drift.potential_V - post.potential_V)) / post.gap_m : 0;
  plan.postGridTransmission = post ? post.gridTransmission : 1;
  plan.maxFlightTime_s = model.maxFlightTime_s;
  plan.solvedMirror = model.mirror?.solved ?? null;
  plan.solvedSource = model.source.solved ?? null;
  return plan;
}

const motion = createMotion();

/**
 * Hold phase of delayed extraction: until the delay ends the ion moves in the hold fields, stage
 * by stage: an ion that crosses the extraction grid during the delay flies on into the next stage
 * under that stage's hold potentials (as a solved source field does), and is extracted from wherever
 * it is at the pulse. Returns false (fate set) if it reaches the repeller, or leaves the whole source
 * through the ground grid before the pulse (it is then never extracted).
 */
export function holdExact(st: IonState, plan: ExactPlan): boolean {
  return holdExactUntil(st, plan, plan.delay_s);
}

/** Grid crossings allowed during the hold; only an ion resting on a grid between two fields pushing it back reaches it. */
const MAX_HOLD_CROSSINGS = 10_000;

/** The hold phase up to time `until` (s since ion formation), in the static hold fields. */
export function holdExactUntil(st: IonState, plan: ExactPlan, until: number): boolean {
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
      st.z += st.v * duration + 0.5 * a * duration * duration;
      st.v += a * duration;
      st.t = until;
      return true;
    }
    st.t += motion.dt;
    st.v = motion.v;
    if (++crossings > MAX_HOLD_CROSSINGS) {
      st.fate = Fate.TIMED_OUT; // held at a grid by fields pushing from both sides: it never settles
      return false;
    }
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
export function extractExact(st: IonState, plan: ExactPlan): boolean {
  let j = 0;
  while (j < plan.sourceStageCount - 1 && (st.z > plan.sourcePlane_m[j + 1] || (st.z === plan.sourcePlane_m[j + 1] && st.v >= 0))) j++;
  for (; j < plan.sourceStageCount; j++) {
    const start = plan.sourcePlane_m[j];
    const end = plan.sourcePlane_m[j + 1];
    const crossing = crossForward(motion, st.v, plan.sourceAcceleration[j], end - st.z, st.z - start);
    if (crossing !== Crossing.FORWARD) {
      st.fate = crossing === Crossing.NEVER ? Fate.TIMED_OUT : j === 0 ? Fate.STRUCK_REPELLER : Fate.TURNED_BACK;
      return false;
    }
    st.t += motion.dt;
    st.v = motion.v;
    st.z = end;
    st.w *= plan.sourceExitTransmission[j];
  }
  return true;
}

/** Field-free flight over `length` (m). */
export function driftExact(st: IonState, length: number): boolean {
  if (length <= 0) return true;
  if (!(st.v > 0)) {
    st.fate = Fate.TIMED_OUT; // at rest in a field-free region: it never arrives
    st.t = Infinity;
    return false;
  }
  st.t += length / st.v;
  st.z += length;
  return true;
}

/**
 * Gridded mirror of uniform stages: in, turned in the first stage it cannot cross, and out again
 * with its entry speed (static fields are time-reversible, so the way out mirrors the way in).
 */
export function mirrorExact(st: IonState, plan: ExactPlan): boolean {
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

/** Optional post-acceleration gap in front of the detector. */
export function postAccelerateExact(st: IonState, plan: ExactPlan): boolean {
  if (plan.postGap_m <= 0) return true;
  const crossing = crossForward(motion, st.v, plan.postAcceleration, plan.postGap_m, 0);
  if (crossing !== Crossing.FORWARD) {
    st.fate = crossing === Crossing.NEVER ? Fate.TIMED_OUT : Fate.TURNED_BACK;
    return false;
  }
  st.t += motion.dt;
  st.v = motion.v;
  st.w *= plan.postGridTransmission;
  return true;
}

/** Everything after the source: drift, mirror and return drift (if any), post-acceleration, detector. */
export function flyAfterSourceExact(st: IonState, plan: ExactPlan): void {
  if (!driftExact(st, plan.driftLength_m)) return;
  if (plan.mirrorStageCount > 0 || plan.solvedMirror !== null) {
    // A solved mirror has no closed form: it is traced in 3-D (the rest stays closed-form).
    if (!(plan.solvedMirror === null ? mirrorExact(st, plan) : mirrorSolved(st, plan, plan.solvedMirror, plan.maxFlightTime_s))) return;
    if (!driftExact(st, plan.returnLength_m)) return;
  }
  if (!postAccelerateExact(st, plan)) return;
  st.fate = Fate.DETECTED;
}

/** One ion from its start to its fate, entirely in closed form. */
export function traceOneExact(st: IonState, plan: ExactPlan): void {
  const leftSource = plan.solvedSource === null ? holdExact(st, plan) && extractExact(st, plan) : sourceSolved(st, plan, plan.solvedSource, plan.maxFlightTime_s);
  if (leftSource) flyAfterSourceExact(st, plan);
  if (st.fate === Fate.TIMED_OUT || !(st.t <= plan.maxFlightTime_s)) {
    st.fate = Fate.TIMED_OUT;
    st.t = plan.maxFlightTime_s;
  }
}

const scratchPlan = createExactPlan();
const scratchState = createIonState();

/** Trace every ion of `ens` through `model` with the exact engine, writing into `out`. */
export function traceExact(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  const { z0_m, vz0_m_per_s } = ens;
  const { flightTime_s, fate, finalSpeed_m_per_s, weight } = out;
  const st = scratchState;
  // Solved regions bend transverse paths: the detector-plane position comes from where the ion left them.
  const solved = hasSolvedRegion(model);
  for (let s = 0; s < ens.species.length; s++) {
    const plan = prepareExactPlan(scratchPlan, model, ens.species[s].mz);
    const end = ens.speciesStart[s + 1];
    if (!solved) {
      traceSpeciesBatch(plan, ens, out, ens.speciesStart[s], end); // region by region, same numbers
      continue;
    }
    for (let i = ens.speciesStart[s]; i < end; i++) {
      st.t = 0;
      st.z = z0_m[i];
      st.v = vz0_m_per_s[i];
      st.fate = Fate.UNSET;
      st.w = 1;
      if (solved) startTransverse(ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
      traceOneExact(st, plan);
      if (solved) {
        out.detectorX_m[i] = transverseX(st.t);
        out.detectorY_m[i] = transverseY(st.t);
      }
      flightTime_s[i] = st.t;
      fate[i] = st.fate;
      finalSpeed_m_per_s[i] = st.fate === Fate.DETECTED ? Math.abs(st.v) : 0;
      weight[i] = st.w;
    }
  }
  if (solved) startTransverse(0, 0, 0, 0); // single-ion callers trace on the axis
}

/**
 * Transverse motion and the detector's active area. Ideal grids have fields along the axis only, so
 * the transverse velocity never changes: the position in the detector plane is x0 + vx·t (in the
 * unfolded flight frame). Detected ions outside the active area become "missed detector".
 */
export function applyDetectorPlane(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  const aperture = model.detectorAperture;
  const r2 = aperture ? aperture.radius_m * aperture.radius_m : Infinity;
  const cx = aperture ? aperture.centreX_m : 0;
  const cy = aperture ? aperture.centreY_m : 0;
  // Solved-field regions change the transverse velocity: there the tracer has filled the positions.
  const filledByTracer = hasSolvedRegion(model);
  for (let i = 0; i < ens.count; i++) {
    const t = out.flightTime_s[i];
    const x = filledByTracer ? out.detectorX_m[i] : ens.x0_m[i] + ens.vx0_m_per_s[i] * t;
    const y = filledByTracer ? out.detectorY_m[i] : ens.y0_m[i] + ens.vy0_m_per_s[i] * t;
    out.detectorX_m[i] = x;
    out.detectorY_m[i] = y;
    if (out.fate[i] === Fate.DETECTED && (x - cx) * (x - cx) + (y - cy) * (y - cy) > r2) out.fate[i] = Fate.MISSED_DETECTOR;
  }
}
