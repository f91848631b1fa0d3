/**
 * Section kernels of ideal-grid regions with uniform fields, in closed form: the source (static
 * stages, or stages whose potentials rise after the delay: src/physics/pulsedStage.ts), the
 * field-free drift and return leg, the gridded stage mirror and the post-acceleration gap.
 */
import type { AnalyserModel } from '../analyser';
import { Exit, Fate, type RegionExit } from '../fates';
import { crossSourceStageClosed } from '../pulsedStage';
import { createMotion } from '../uniformField';
import { nextBreakpoint_s, settleTime_s, switchStart_s } from '../waveforms';
import type { AxialIntegrator } from './axialIntegrator';
import { extract, fieldFree, holdUntil, postGap, stageMirror, stageMirrorFromInside } from './closedForm';
import { Section, SegmentKind, type IonState, type RegionKernel, type SegmentObserver } from './contract';
import type { FlightPlan } from './plan';

const lost = (st: IonState): RegionExit => st.fate as RegionExit;

/** Source of uniform static stages (the extraction may switch once, as an ideal step, at the delay). */
export class StaticSourceKernel implements RegionKernel {
  readonly section = Section.SOURCE;
  readonly name = 'source: uniform static stages, closed form';
  private readonly motion = createMotion();
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    if (!holdUntil(st, plan, plan.delay_s, this.motion, observer)) return lost(st);
    if (!extract(st, plan, this.motion, observer)) return lost(st);
    return Exit.FAR;
  }
}

/**
 * Source whose potentials change in time (a rising pulse, or any source when the integrator is
 * forced): static hold in closed form until the potentials start to change (unless forced), then
 * stage by stage in closed form between ideal grids (pulsedStage.ts), or integrated as the
 * cross-check (forced) or on request (`integratePulse`), until the ion leaves or the potentials
 * settle; from then on the static closed form again.
 */
export class PulsedSourceKernel implements RegionKernel {
  readonly section = Section.SOURCE;
  readonly name: string;
  private readonly motion = createMotion();
  private readonly forced: boolean;
  private readonly integrate: boolean;
  constructor(
    private readonly model: AnalyserModel,
    private readonly integrator: AxialIntegrator,
  ) {
    this.forced = model.forceIntegrator;
    this.integrate = model.forceIntegrator || model.integratePulse === true;
    this.name = this.integrate ? 'source: time-dependent stages, integrated' : 'source: time-dependent stages, closed form (pulsedStage)';
  }

  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const src = this.model.source;
    // Before the potentials start to change the hold field is static: closed form unless forced.
    if (!this.forced && !holdUntil(st, plan, switchStart_s(src), this.motion, observer)) return lost(st);
    const settleAt = this.forced ? Infinity : settleTime_s(src);
    const tLimit = this.model.maxFlightTime_s;
    let j = 0;
    while (j < plan.sourceStageCount - 1 && st.z >= plan.sourcePlane_m[j + 1]) j++;
    while (j < plan.sourceStageCount) {
      const lo = plan.sourcePlane_m[j];
      const hi = plan.sourcePlane_m[j + 1];
      const tEnd = Math.min(settleAt, tLimit, nextBreakpoint_s(src, st.t));
      const t0 = st.t;
      const z0 = st.z;
      const v0 = st.v;
      const exit = this.integrate
        ? this.integrator.crossSourceStage(st, src, plan.qOverM, j, lo, hi, tEnd, this.forced)
        : crossSourceStageClosed(st, src, plan.qOverM, j, lo, hi, tEnd);
      if (observer !== null) chord(observer, Section.SOURCE, j, t0, z0, v0, st);
      if (exit === Exit.PAUSED && st.t < tLimit) {
        if (st.t >= settleAt) return extract(st, plan, this.motion, observer) ? Exit.FAR : lost(st); // static from here on
        continue; // a jump or kink of the waveform: restart there
      }
      if (exit === Exit.FAR) {
        st.w *= plan.sourceExitTransmission[j];
        // Through the ground grid before the pulse: never extracted (as in the static hold).
        if (j === plan.sourceStageCount - 1 && st.t < src.delay_s) return (st.fate = Fate.LEFT_SOURCE_DURING_DELAY);
        j++;
        continue;
      }
      if (exit === Exit.ENTRY && j > 0) {
        j--; // back through the grid into the previous stage
        continue;
      }
      return settle(st, exit, Fate.STRUCK_REPELLER);
    }
    return Exit.FAR;
  }
}

/** A crossing that is not uniform acceleration, drawn as one chord. */
export function chord(observer: SegmentObserver, section: 0 | 1 | 2 | 3 | 4, stage: number, t0: number, z0: number, v0: number, st: IonState): void {
  const dt = st.t - t0;
  if (!(dt > 0)) return;
  observer.segment(section, stage, t0, dt, z0, v0, (2 * (st.z - z0 - v0 * dt)) / (dt * dt), SegmentKind.CHORD);
}

/**
 * A crossing's exit as the section's outcome: Exit.FAR when it left through the far plane, else
 * the fate: `entryFate` back through the entry plane, TIMED_OUT when paused at the time limit,
 * the crossing's own fate (integration failed) otherwise.
 */
export function settle(st: IonState, exit: number, entryFate: number): RegionExit {
  if (exit === Exit.FAR) return Exit.FAR;
  st.fate = exit === Exit.ENTRY ? entryFate : exit === Exit.PAUSED ? Fate.TIMED_OUT : exit;
  return st.fate as RegionExit;
}

/** The field-free drift or return leg, in closed form. */
export class FieldFreeKernel implements RegionKernel {
  readonly name: string;
  constructor(readonly section: typeof Section.DRIFT | typeof Section.RETURN) {
    this.name = section === Section.DRIFT ? 'drift: field-free, closed form' : 'return leg: field-free, closed form';
  }
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const length = this.section === Section.DRIFT ? plan.driftLength_m : plan.returnLength_m;
    return fieldFree(st, length, this.section, observer) ? Exit.FAR : lost(st);
  }
}

/** Gridded mirror of uniform stages, in closed form. */
export class StageMirrorKernel implements RegionKernel {
  readonly section = Section.MIRROR;
  readonly name = 'mirror: uniform stages, closed form';
  private readonly motion = createMotion();
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    // Arriving through the entrance grid: the time-reversal closed form; from anywhere else, stage by stage.
    const out = st.z === 0 && st.v > 0 ? stageMirror(st, plan, this.motion, observer) : stageMirrorFromInside(st, plan, this.motion, observer);
    return out ? Exit.FAR : lost(st);
  }
}

/** The post-acceleration gap in front of the detector, in closed form. */
export class PostGapKernel implements RegionKernel {
  readonly section = Section.POST;
  readonly name = 'post-acceleration gap: uniform, closed form';
  private readonly motion = createMotion();
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    return postGap(st, plan, this.motion, observer) ? Exit.FAR : lost(st);
  }
}
