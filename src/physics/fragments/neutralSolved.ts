/**
 * A neutral decay product in a solved-field region: no force, so it flies straight until it leaves
 * the region through one of its planes, meets an electrode or reaches the grounded wall.
 *
 * Why not the solved-field tracer with q/m = 0: with no force its error estimate is zero, steps grow
 * without bound inside the free corridor, and one step can jump over a back plate whose far face is
 * the region's far plane (the strike event sees the clearance positive at both step ends). Here the
 * straight line is marched by its clearance instead ("sphere tracing"): the distance in the (r, z)
 * half-plane to the nearest solid of revolution is the 3-D distance to it, so a step of that length
 * can never enter metal; the march ends when the clearance falls below STRIKE_M.
 */
import type { SolvedRegion } from '../../fields/solvedRegion';
import { clearance_m, rectClearance } from '../../fields/solvedRegion';
import { Exit, Fate, type RegionExit } from '../fates';
import { Section, transverseXAt, transverseYAt, type IonState, type RegionKernel, type SectionCode } from '../regions/contract';
import type { SolvedMirrorModel, SolvedSourceModel } from '../regions/solvedKernels';

/** Closer than this to metal counts as a strike (m): far below any mesh spacing. */
const STRIKE_M = 1e-7;
/** Marching steps before the walk is given up (a defect, reported as an integration failure). */
const MAX_STEPS = 1_000_000;

/** Where the straight walk ended, in the mesh frame. */
interface StraightEnd {
  t: number;
  x: number;
  y: number;
  z: number;
  /** Electrode index struck (−1: the wall or none). */
  electrode: number;
}

/**
 * Straight flight from (x, y, z) at t with velocity (vx, vy, vz) through `region` until tLimit_s:
 * Exit.ENTRY / Exit.FAR through a plane, Fate.STRUCK_ELECTRODE, Fate.TIMED_OUT or
 * Fate.INTEGRATION_FAILED; the end state in `end`.
 */
export function flyStraight(region: SolvedRegion, t: number, x: number, y: number, z: number, vx: number, vy: number, vz: number, tLimit_s: number, end: StraightEnd): RegionExit {
  const speed = Math.sqrt(vx * vx + vy * vy + vz * vz);
  end.electrode = -1;
  let first = true;
  for (let k = 0; k < MAX_STEPS; k++) {
    end.t = t;
    end.x = x;
    end.y = y;
    end.z = z;
    const r = Math.sqrt(x * x + y * y);
    const clear = clearance_m(region, r, z);
    if (clear < 0 || (clear < STRIKE_M && !first)) return struck(region, r, z, end);
    first = false;
    if (!(speed > 0)) {
      end.t = tLimit_s;
      return Fate.TIMED_OUT;
    }
    // Time to the plane it is heading for, and the safe step.
    const tPlane = vz > 0 ? (region.farZ_m - z) / vz : vz < 0 ? (region.entryZ_m - z) / vz : Infinity;
    const dt = Math.max(clear, STRIKE_M) / speed;
    if (tPlane <= dt) {
      end.t = t + tPlane;
      end.x = x + vx * tPlane;
      end.y = y + vy * tPlane;
      end.z = vz > 0 ? region.farZ_m : region.entryZ_m;
      if (end.t > tLimit_s) return Fate.TIMED_OUT;
      return vz > 0 ? Exit.FAR : Exit.ENTRY;
    }
    t += dt;
    x += vx * dt;
    y += vy * dt;
    z += vz * dt;
    if (t > tLimit_s) {
      end.t = tLimit_s;
      return Fate.TIMED_OUT;
    }
  }
  return Fate.INTEGRATION_FAILED;
}

function struck(region: SolvedRegion, r: number, z: number, end: StraightEnd): RegionExit {
  let best = region.map.mesh.rMax_m - r;
  end.electrode = -1;
  const rects = region.solids;
  for (let k = 0; k < rects.length; k += 4) {
    const d = rectClearance(rects, r, z, Infinity, k, k + 4);
    if (d < best) {
      best = d;
      end.electrode = region.solidIndex[k / 4];
    }
  }
  return Fate.STRUCK_ELECTRODE;
}

/**
 * The section kernel of a solved mirror or solved source for a neutral product: the straight walk
 * from the ion's state, in the driver's coordinates (see regions/contract.ts).
 */
export class NeutralSolvedKernel implements RegionKernel {
  readonly name: string;
  private readonly end: StraightEnd = { t: 0, x: 0, y: 0, z: 0, electrode: -1 };
  private readonly region: SolvedRegion;
  private readonly origin_m: number;

  constructor(
    readonly section: SectionCode,
    private readonly mirror: SolvedMirrorModel | null,
    private readonly source: SolvedSourceModel | null,
    private readonly tLimit_s: number,
  ) {
    this.region = mirror !== null ? mirror.region : source!.region;
    this.origin_m = mirror !== null ? mirror.region.entryZ_m : source!.repellerFaceZ_m;
    this.name = `${section === Section.MIRROR ? 'mirror' : 'source'}: solved field, neutral flown straight`;
  }

  cross(st: IonState): RegionExit {
    const end = this.end;
    const exit = flyStraight(this.region, st.t, transverseXAt(st, st.t), transverseYAt(st, st.t), this.origin_m + st.z, st.vxRef, st.vyRef, st.v, this.tLimit_s, end);
    // The straight transverse motion goes on unchanged; only its reference moves to where the walk ended.
    st.t = end.t;
    st.tRef = end.t;
    st.xRef = end.x;
    st.yRef = end.y;
    st.struckElectrode = end.electrode;
    if (this.mirror !== null) {
      if (exit === Exit.ENTRY) {
        st.v = -st.v; // speed along the unfolded return path
        return Exit.FAR;
      }
      if (exit === Exit.FAR) return (st.fate = Fate.PASSED_THROUGH_MIRROR);
      return (st.fate = exit);
    }
    if (exit === Exit.FAR) {
      st.z = 0;
      return Exit.FAR;
    }
    if (exit === Exit.ENTRY) return (st.fate = Fate.STRUCK_REPELLER); // behind the repeller face: only through the repeller
    if (exit === Fate.STRUCK_ELECTRODE && end.electrode === this.source!.repellerIndex) return (st.fate = Fate.STRUCK_REPELLER);
    return (st.fate = exit);
  }
}
