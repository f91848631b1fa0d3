/**
 * Section kernels that integrate uniform-field regions numerically although they have a closed
 * form: the forced-integrator cross-check (`run.engine = "integrator"`), so that every region's
 * closed form can be checked against the integrator. Field-free drift and return leg, the gridded
 * stage mirror stage by stage in and out, and the post-acceleration gap.
 */
import { Exit, Fate, type RegionExit } from '../fates';
import type { AxialIntegrator } from './axialIntegrator';
import { Section, type IonState, type RegionKernel, type SegmentObserver } from './contract';
import type { FlightPlan } from './plan';
import { chord, settle } from './uniformStages';

/** Field-free drift or return leg, integrated. */
export class NumericFieldFreeKernel implements RegionKernel {
  readonly name: string;
  constructor(
    readonly section: typeof Section.DRIFT | typeof Section.RETURN,
    private readonly integrator: AxialIntegrator,
    private readonly tLimit_s: number,
  ) {
    this.name = section === Section.DRIFT ? 'drift: integrated (cross-check)' : 'return leg: integrated (cross-check)';
  }
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const length = this.section === Section.DRIFT ? plan.driftLength_m : plan.returnLength_m;
    if (length <= 0) return Exit.FAR;
    const t0 = st.t;
    const z0 = st.z;
    const v0 = st.v;
    const exit = settle(st, this.integrator.crossUniform(st, 0, -Infinity, length, this.tLimit_s), Fate.TIMED_OUT);
    if (observer !== null) chord(observer, this.section, 0, t0, z0, v0, st);
    return exit;
  }
}

/** Gridded stage mirror, integrated stage by stage in and out. */
export class NumericStageMirrorKernel implements RegionKernel {
  readonly section = Section.MIRROR;
  readonly name = 'mirror: uniform stages, integrated (cross-check)';
  constructor(
    private readonly integrator: AxialIntegrator,
    private readonly tLimit_s: number,
  ) {}
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const n = plan.mirrorStageCount;
    // z = 0 moving in: through the entrance grid. Elsewhere: the stage holding z, in its own frame.
    let j = 0;
    let origin = 0;
    if (st.z === 0 && st.v > 0) st.w *= plan.mirrorEntryTransmission[0];
    else {
      while (j < n - 1 && st.z > origin + plan.mirrorLength_m[j]) origin += plan.mirrorLength_m[j++];
      st.z -= origin;
    }
    while (true) {
      const t0 = st.t;
      const z0 = st.z;
      const v0 = st.v;
      const exit = this.integrator.crossUniform(st, plan.mirrorAcceleration[j], 0, plan.mirrorLength_m[j], this.tLimit_s);
      if (observer !== null) {
        const zEnd = st.z;
        st.z += origin;
        chord(observer, Section.MIRROR, j, t0, z0 + origin, v0, st);
        st.z = zEnd;
      }
      if (exit === Exit.FAR) {
        if (j === n - 1) return (st.fate = Fate.PASSED_THROUGH_MIRROR);
        origin += plan.mirrorLength_m[j];
        j++;
        st.w *= plan.mirrorEntryTransmission[j];
        st.z = 0;
      } else if (exit === Exit.ENTRY) {
        st.w *= plan.mirrorEntryTransmission[j];
        if (j === 0) {
          st.v = -st.v; // leaving the mirror: speed along the (unfolded) return path
          return Exit.FAR;
        }
        j--;
        origin -= plan.mirrorLength_m[j];
        st.z = plan.mirrorLength_m[j];
      } else return settle(st, exit, Fate.TIMED_OUT);
    }
  }
}

/** The post-acceleration gap, integrated. */
export class NumericPostGapKernel implements RegionKernel {
  readonly section = Section.POST;
  readonly name = 'post-acceleration gap: integrated (cross-check)';
  constructor(
    private readonly integrator: AxialIntegrator,
    private readonly tLimit_s: number,
  ) {}
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    if (plan.postGap_m <= 0) return Exit.FAR;
    const t0 = st.t;
    const z0 = st.z;
    const v0 = st.v;
    const exit = settle(st, this.integrator.crossUniform(st, plan.postAcceleration, 0, plan.postGap_m, this.tLimit_s), Fate.TURNED_BACK);
    if (observer !== null) chord(observer, Section.POST, 0, t0, z0, v0, st);
    if (exit !== Exit.FAR) return exit;
    st.w *= plan.postGridTransmission;
    return Exit.FAR;
  }
}
