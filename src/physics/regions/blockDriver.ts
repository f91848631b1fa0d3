/**
 * The closed-form kernels region by region over blocks of ions: each region's closed form runs over
 * a block of ions of one species in one tight loop over struct-of-arrays state (time, velocity,
 * weight and fate live in the output arrays, position in the block's scratch array), instead of
 * one ion at a time through every region. Each ion sees the same operations in the same order as
 * the section kernels (closedForm.ts) flown ion by ion, so the numbers are identical to the bit;
 * only the loop nesting changes, which lets the JIT keep each kernel's constants in registers.
 * The driver takes this path for ideal-grid analysers whose regions all have a closed form, when
 * no observer wants the paths. The scratch belongs to the driver's call.
 */
import { Fate } from '../fates';
import { createMotion, crossForward, Crossing, enterStage, type Motion } from '../uniformField';
import type { Ensemble, TraceResult } from '../../ions/ensemble';
import { holdUntil } from './closedForm';
import { createIonState, type IonState } from './contract';
import type { FlightPlan } from './plan';

/** Scratch of one block trace: created per driver call. */
export interface BlockScratch {
  readonly motion: Motion;
  z: Float64Array;
  readonly hold: IonState;
}

export function createBlockScratch(): BlockScratch {
  return { motion: createMotion(), z: new Float64Array(0), hold: createIonState() };
}

/** Ions per block: every region runs over one block while its state is still in the cache. */
const BLOCK = 2048;

/** Trace ions [from, to) of one species (plan prepared for it) into `out`. */
export function traceSpeciesBlocks(plan: FlightPlan, ens: Ensemble, out: TraceResult, from: number, to: number, scratch: BlockScratch): void {
  for (let start = from; start < to; start += BLOCK) traceBlock(plan, ens, out, start, Math.min(to, start + BLOCK), scratch);
}

function traceBlock(plan: FlightPlan, ens: Ensemble, out: TraceResult, from: number, to: number, scratch: BlockScratch): void {
  if (scratch.z.length < to - from) scratch.z = new Float64Array(to - from);
  const z = scratch.z;
  const motion = scratch.motion;
  const { flightTime_s: t, finalSpeed_m_per_s: v, weight: w, fate } = out;
  const z0 = ens.z0_m;
  const v0 = ens.vz0_m_per_s;
  for (let i = from; i < to; i++) {
    t[i] = 0;
    z[i - from] = z0[i];
    v[i] = v0[i];
    w[i] = 1;
    fate[i] = Fate.UNSET;
  }
  if (plan.delay_s > 0) holdKernel(plan, t, z, v, w, fate, from, to, scratch);
  for (let j = 0; j < plan.sourceStageCount; j++) stageKernel(plan, j, t, z, v, w, fate, from, to, motion);
  driftKernel(plan.driftLength_m, t, v, fate, from, to);
  if (plan.mirrorStageCount > 0) {
    mirrorKernel(plan, t, v, w, fate, from, to, motion);
    driftKernel(plan.returnLength_m, t, v, fate, from, to);
  }
  if (plan.postGap_m > 0) postKernel(plan, t, v, w, fate, from, to, motion);
  const tMax = plan.maxFlightTime_s;
  for (let i = from; i < to; i++) {
    let f = fate[i];
    if (f === Fate.UNSET) f = Fate.DETECTED;
    if (f === Fate.TIMED_OUT || !(t[i] <= tMax)) {
      f = Fate.TIMED_OUT;
      t[i] = tMax;
    }
    fate[i] = f;
    v[i] = f === Fate.DETECTED ? Math.abs(v[i]) : 0;
  }
}

/** closedForm.holdUntil(delay) for every ion: each source stage in its static hold field until the delay ends. */
function holdKernel(plan: FlightPlan, t: Float64Array, z: Float64Array, v: Float64Array, w: Float64Array, fate: Uint8Array, from: number, to: number, scratch: BlockScratch): void {
  const st = scratch.hold;
  for (let i = from; i < to; i++) {
    const k = i - from;
    st.t = t[i];
    st.z = z[k];
    st.v = v[i];
    st.w = w[i];
    st.fate = Fate.UNSET;
    holdUntil(st, plan, plan.delay_s, scratch.motion, null);
    t[i] = st.t;
    z[k] = st.z;
    v[i] = st.v;
    w[i] = st.w;
    if (st.fate !== Fate.UNSET) fate[i] = st.fate;
  }
}

/** closedForm.extract's crossing of source stage j, for every ion still in flight. */
function stageKernel(plan: FlightPlan, j: number, t: Float64Array, z: Float64Array, v: Float64Array, w: Float64Array, fate: Uint8Array, from: number, to: number, motion: Motion): void {
  const start = plan.sourcePlane_m[j];
  const end = plan.sourcePlane_m[j + 1];
  const a = plan.sourceAcceleration[j];
  const transmission = plan.sourceExitTransmission[j];
  const last = j === plan.sourceStageCount - 1;
  const lostFate = j === 0 ? Fate.STRUCK_REPELLER : Fate.TURNED_BACK;
  for (let i = from; i < to; i++) {
    if (fate[i] !== Fate.UNSET) continue;
    const k = i - from;
    const zi = z[k];
    // Already past this stage's exit plane (the skip at the start of extract).
    const vi = v[i];
    if (!last && (zi > end || (zi === end && vi >= 0))) continue;
    const ahead = end - zi;
    if (vi >= 0 && ahead > 0) {
      // uniformField.crossForward's forward branch, written out so the loop stays one basic block.
      const disc = vi * vi + 2 * a * ahead;
      const vOut = Math.sqrt(disc);
      const denom = vi + vOut;
      if (denom > 0) {
        t[i] += (2 * ahead) / denom;
        v[i] = vOut;
        z[k] = end;
        w[i] *= transmission;
        continue;
      }
    }
    const crossing = crossForward(motion, vi, a, ahead, zi - start);
    if (crossing !== Crossing.FORWARD) {
      fate[i] = crossing === Crossing.NEVER ? Fate.TIMED_OUT : lostFate;
      continue;
    }
    t[i] += motion.dt;
    v[i] = motion.v;
    z[k] = end;
    w[i] *= transmission;
  }
}

/** closedForm.fieldFree for every ion still in flight (each enters at z = 0). */
function driftKernel(length: number, t: Float64Array, v: Float64Array, fate: Uint8Array, from: number, to: number): void {
  if (length <= 0) return;
  for (let i = from; i < to; i++) {
    if (fate[i] !== Fate.UNSET) continue;
    const vi = v[i];
    if (!(vi > 0)) {
      fate[i] = Fate.TIMED_OUT;
      t[i] = Infinity;
      continue;
    }
    t[i] += length / vi;
  }
}

/** closedForm.stageMirror for every ion still in flight. */
function mirrorKernel(plan: FlightPlan, t: Float64Array, v: Float64Array, w: Float64Array, fate: Uint8Array, from: number, to: number, motion: Motion): void {
  const n = plan.mirrorStageCount;
  for (let i = from; i < to; i++) {
    if (fate[i] !== Fate.UNSET) continue;
    let vi = v[i];
    let elapsed = 0;
    let turned = false;
    for (let j = 0; j < n; j++) {
      const gridT = plan.mirrorEntryTransmission[j];
      const through = enterStage(motion, vi, plan.mirrorAcceleration[j], plan.mirrorLength_m[j]);
      w[i] *= gridT * gridT;
      if (!through) {
        t[i] += 2 * elapsed + motion.dt;
        turned = true; // leaves with its entry speed: v unchanged
        break;
      }
      elapsed += motion.dt;
      vi = motion.v;
    }
    if (!turned) {
      t[i] += elapsed;
      v[i] = vi;
      fate[i] = Fate.PASSED_THROUGH_MIRROR;
    }
  }
}

/** closedForm.postGap for every ion still in flight. */
function postKernel(plan: FlightPlan, t: Float64Array, v: Float64Array, w: Float64Array, fate: Uint8Array, from: number, to: number, motion: Motion): void {
  const a = plan.postAcceleration;
  const gap = plan.postGap_m;
  const transmission = plan.postGridTransmission;
  for (let i = from; i < to; i++) {
    if (fate[i] !== Fate.UNSET) continue;
    const crossing = crossForward(motion, v[i], a, gap, 0);
    if (crossing !== Crossing.FORWARD) {
      fate[i] = crossing === Crossing.NEVER ? Fate.TIMED_OUT : Fate.TURNED_BACK;
      continue;
    }
    t[i] += motion.dt;
    v[i] = motion.v;
    w[i] *= transmission;
  }
}
