/**
 * Section kernel of a mirror with a non-uniform axial potential V(x) (a polynomial profile behind a
 * gridded entrance): no closed form, so the crossing is integrated (axialIntegrator.ts) from the
 * entrance grid (x = 0) until the ion comes back out through it or reaches the back plate.
 */
import type { PolynomialProfile } from '../analyser';
import { Exit, Fate, type RegionExit } from '../fates';
import type { AxialIntegrator } from './axialIntegrator';
import { Section, type IonState, type RegionKernel, type SegmentObserver } from './contract';
import type { FlightPlan } from './plan';
import { chord, settle } from './uniformStages';

export class ProfileMirrorKernel implements RegionKernel {
  readonly section = Section.MIRROR;
  readonly name = 'mirror: polynomial profile, integrated';
  constructor(
    private readonly profile: PolynomialProfile,
    private readonly entranceGridTransmission: number,
    private readonly integrator: AxialIntegrator,
    private readonly tLimit_s: number,
  ) {}
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const t0 = st.t;
    const z0 = st.z;
    const v0 = st.v;
    const exit = this.integrator.crossProfile(st, this.profile, plan.qOverM, this.tLimit_s);
    if (observer !== null) chord(observer, Section.MIRROR, 0, t0, z0, v0, st);
    if (exit === Exit.FAR) return (st.fate = Fate.PASSED_THROUGH_MIRROR);
    if (exit !== Exit.ENTRY) return settle(st, exit, Fate.TIMED_OUT);
    const gridT = this.entranceGridTransmission;
    st.w *= gridT * gridT;
    st.v = -st.v;
    return Exit.FAR;
  }
}
