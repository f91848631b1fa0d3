/**
 * The tracer: each region with the closed form where its field allows it (source stages with
 * rising potentials included, src/physics/pulsedStage.ts), and by numerical integration where it
 * does not (polynomial mirrors, solved fields), or
 * everywhere when the model asks for the integrator as a cross-check. Same fates as the exact engine.
 */
import type { AnalyserModel } from './analyser';
import { hasSolvedRegion } from './analyser';
import {
  createExactPlan,
  createIonState,
  driftExact,
  extractExact,
  holdExactUntil,
  mirrorExact,
  postAccelerateExact,
  prepareExactPlan,
  type ExactPlan,
  type IonState,
} from './exactEngine';
import { Fate } from './fates';
import { Exit, crossProfileNumeric, crossSourceStageNumeric, crossUniformNumeric } from './numericRegions';
import { crossSourceStageClosed } from './pulsedStage';
import { mirrorSolved, startTransverse, transverseX, transverseY } from './solvedMirror';
import { MAP_MIN_IONS, SolvedMirrorMapper, type MirrorMapReport } from './solvedMirrorMap';
import { sourceSolved } from './solvedSource';
import { nextBreakpoint_s, settleTime_s, switchStart_s } from './waveforms';
import type { Ensemble, TraceResult } from '../ions/ensemble';

/** Maps a numeric exit that is neither plane to a fate; returns true when the ion left through `hi`. */
function settle(st: IonState, exit: number, lowFate: number): boolean {
  if (exit === Exit.HIGH) return true;
  st.fate = exit === Exit.LOW ? lowFate : exit === Exit.FAILED ? Fate.INTEGRATION_FAILED : Fate.TIMED_OUT;
  return false;
}

/** Source with time-dependent potentials: integrate until the ion leaves or the potentials settle. */
function sourceNumeric(st: IonState, plan: ExactPlan, model: AnalyserModel): boolean {
  const src = model.source;
  const settleAt = model.forceIntegrator ? Infinity : settleTime_s(src);
  const tLimit = model.maxFlightTime_s;
  let j = 0;
  while (j < plan.sourceStageCount - 1 && st.z >= plan.sourcePlane_m[j + 1]) j++;
  while (j < plan.sourceStageCount) {
    const lo = plan.sourcePlane_m[j];
    const hi = plan.sourcePlane_m[j + 1];
    const tEnd = Math.min(settleAt, tLimit, nextBreakpoint_s(src, st.t));
    // Closed form between ideal grids (src/physics/pulsedStage.ts); integrated as the cross-check or on request.
    const exit =
      model.forceIntegrator || model.integratePulse === true
        ? crossSourceStageNumeric(st, src, plan.qOverM, j, lo, hi, tEnd, model.forceIntegrator)
        : crossSourceStageClosed(st, src, plan.qOverM, j, lo, hi, tEnd);
    if (exit === Exit.TIME_LIMIT && st.t < tLimit) {
      if (st.t >= settleAt) return extractExact(st, plan); // static from here on: closed form again
      continue; // a jump or kink of the waveform: restart the integration there
    }
    if (exit === Exit.HIGH) {
      st.w *= plan.sourceExitTransmission[j];
      // Through the ground grid before the pulse: never extracted (as in holdExactUntil).
      if (j === plan.sourceStageCount - 1 && st.t < src.delay_s) {
        st.fate = Fate.LEFT_SOURCE_DURING_DELAY;
        return false;
      }
      j++;
      continue;
    }
    if (exit === Exit.LOW && j > 0) {
      j--; // back through the grid into the previous stage
      continue;
    }
    return settle(st, exit, Fate.STRUCK_REPELLER);
  }
  return true;
}

function driftNumeric(st: IonState, length: number, tLimit: number): boolean {
  if (length <= 0) return true;
  const z0 = st.z;
  st.z = 0;
  const ok = settle(st, crossUniformNumeric(st, 0, -Infinity, length, tLimit), Fate.TIMED_OUT);
  st.z = z0 + length;
  return ok;
}

/** Gridded stage mirror, integrated stage by stage in and out (forced-integrator cross-check). */
function mirrorStagesNumeric(st: IonState, plan: ExactPlan, tLimit: number): boolean {
  const n = plan.mirrorStageCount;
  let j = 0;
  st.z = 0;
  st.w *= plan.mirrorEntryTransmission[0];
  while (true) {
    const lo = 0;
    const hi = plan.mirrorLength_m[j];
    const exit = crossUniformNumeric(st, plan.mirrorAcceleration[j], lo, hi, tLimit);
    if (exit === Exit.HIGH) {
      if (j === n - 1) {
        st.fate = Fate.PASSED_THROUGH_MIRROR;
        return false;
      }
      j++;
      st.w *= plan.mirrorEntryTransmission[j];
      st.z = 0;
    } else if (exit === Exit.LOW) {
      st.w *= plan.mirrorEntryTransmission[j];
      if (j === 0) {
        st.v = -st.v; // leaving the mirror: speed along the (unfolded) return path
        return true;
      }
      j--;
      st.z = plan.mirrorLength_m[j];
    } else return settle(st, exit, Fate.TIMED_OUT);
  }
}

function mirrorProfileNumeric(st: IonState, plan: ExactPlan, model: AnalyserModel): boolean {
  const mirror = model.mirror!;
  const gridT = mirror.entranceGridTransmission;
  st.z = 0;
  const exit = crossProfileNumeric(st, mirror.profile!, plan.qOverM, model.maxFlightTime_s);
  if (exit === Exit.HIGH) {
    st.fate = Fate.PASSED_THROUGH_MIRROR;
    return false;
  }
  if (exit !== Exit.LOW) return settle(st, exit, Fate.TIMED_OUT);
  st.w *= gridT * gridT;
  st.v = -st.v;
  return true;
}

function postNumeric(st: IonState, plan: ExactPlan, tLimit: number): boolean {
  if (plan.postGap_m <= 0) return true;
  st.z = 0;
  if (!settle(st, crossUniformNumeric(st, plan.postAcceleration, 0, plan.postGap_m, tLimit), Fate.TURNED_BACK)) return false;
  st.w *= plan.postGridTransmission;
  return true;
}

/** One ion from start to fate, choosing closed form or integration region by region. */
export function traceOneMixed(st: IonState, plan: ExactPlan, model: AnalyserModel, mirrorMap: SolvedMirrorMapper | null = null): void {
  const forced = model.forceIntegrator;
  const tLimit = model.maxFlightTime_s;
  const src = model.source;
  const numericSource = forced || src.rise.kind !== 'step';
  let alive: boolean;
  if (src.solved) {
    alive = sourceSolved(st, plan, src.solved, tLimit);
  } else if (!numericSource) {
    alive = holdExactUntil(st, plan, plan.delay_s) && extractExact(st, plan);
  } else {
    // Before the potentials start to change the hold field is static: closed form unless forced.
    alive = (forced || holdExactUntil(st, plan, switchStart_s(src))) && sourceNumeric(st, plan, model);
  }
  if (alive) alive = forced ? driftNumeric(st, plan.driftLength_m, tLimit) : driftExact(st, plan.driftLength_m);
  if (alive && model.mirror) {
    if (model.mirror.solved) alive = mirrorMap ? mirrorMap.pass(st, plan, tLimit) : mirrorSolved(st, plan, model.mirror.solved, tLimit);
    else if (model.mirror.profile) alive = mirrorProfileNumeric(st, plan, model);
    else alive = forced ? mirrorStagesNumeric(st, plan, tLimit) : mirrorExact(st, plan);
    if (alive) alive = forced ? driftNumeric(st, plan.returnLength_m, tLimit) : driftExact(st, plan.returnLength_m);
  }
  if (alive) alive = forced ? postNumeric(st, plan, tLimit) : postAccelerateExact(st, plan);
  if (alive) st.fate = Fate.DETECTED;
  if (st.fate === Fate.TIMED_OUT || !(st.t <= tLimit)) {
    st.fate = Fate.TIMED_OUT;
    st.t = tLimit;
  }
  if (!Number.isFinite(st.v)) st.v = 0;
}

const scratchPlan = createExactPlan();
const scratchState = createIonState();

/** The run's transfer map of a solved mirror (src/physics/solvedMirrorMap.ts), or null to trace every ion directly. */
export function createMirrorMap(model: AnalyserModel, ions: number): SolvedMirrorMapper | null {
  const solved = model.mirror?.solved;
  if (!solved || model.forceIntegrator || model.mapSolvedMirror === false || ions < MAP_MIN_IONS) return null;
  return new SolvedMirrorMapper(solved, ions);
}

/** Trace every ion of `ens` with the mixed tracer, writing into `out`. */
export function traceMixed(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  const st = scratchState;
  // Solved regions bend transverse paths: the detector-plane position comes from where the ion left them.
  const solved = hasSolvedRegion(model);
  const mirrorMap = createMirrorMap(model, ens.count);
  for (let s = 0; s < ens.species.length; s++) {
    const plan = prepareExactPlan(scratchPlan, model, ens.species[s].mz);
    const end = ens.speciesStart[s + 1];
    for (let i = ens.speciesStart[s]; i < end; i++) {
      st.t = 0;
      st.z = ens.z0_m[i];
      st.v = ens.vz0_m_per_s[i];
      st.fate = Fate.UNSET;
      st.w = 1;
      if (solved) startTransverse(ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
      traceOneMixed(st, plan, model, mirrorMap);
      if (solved) {
        out.detectorX_m[i] = transverseX(st.t);
        out.detectorY_m[i] = transverseY(st.t);
      }
      out.flightTime_s[i] = st.t;
      out.fate[i] = st.fate;
      out.finalSpeed_m_per_s[i] = st.fate === Fate.DETECTED ? Math.abs(st.v) : 0;
      out.weight[i] = st.w;
    }
  }
  startTransverse(0, 0, 0, 0); // single-ion callers trace on the axis
  lastMirrorMap = mirrorMap ? { ...mirrorMap.report } : null;
}

/** How the last traceMixed run crossed its solved mirror: ions mapped, ions traced, and why not mapped (null: no map). */
export let lastMirrorMap: MirrorMapReport | null = null;
