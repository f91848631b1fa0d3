/**
 * Solved-field regions: a source of plates with apertures and a gridless (ring-stack) mirror whose
 * fields are solved on a mesh (src/fields/), crossed by 3-D tracing (solvedTracer.ts). The ion
 * leaves the ideal regions on the region's entry plane; its transverse position there follows from
 * the straight transverse motion (IonState's reference state), and where it leaves the solved
 * region becomes the new reference.
 */
import type { SolvedRegion } from '../../fields/solvedRegion';
import type { UnitFieldSet } from '../../fields/unitSolutions';
import type { SourceModel } from '../analyser';
import { Exit, Fate, type RegionExit } from '../fates';
import { nextBreakpoint_s } from '../waveforms';
import { Section, SegmentKind, transverseXAt, transverseYAt, type IonState, type RegionKernel, type SegmentObserver } from './contract';
import type { FlightPlan } from './plan';
import { createSolvedIonState, SolvedFieldTracer, SolvedPrecision, type SolvedIonState } from './solvedTracer';

/** A mirror whose field is solved rather than ideal; see src/presets/compileFields.ts. */
export interface SolvedMirrorModel {
  readonly region: SolvedRegion;
  /** Unit fields (cached per geometry) and the drive voltages (relative to the drift potential) of `region.map`. */
  readonly unitFields: UnitFieldSet;
  readonly driveVoltages_V: Float64Array;
  /** Drift potential added to the solved (relative) potential for display. */
  readonly referencePotential_V: number;
}

export interface SolvedSourceModel {
  readonly region: SolvedRegion;
  readonly unitFields: UnitFieldSet;
  /** Drive voltages (relative to the drift potential) once the waveform has settled. */
  readonly driveVoltages_V: Float64Array;
  readonly referencePotential_V: number;
  /** Electrode index of the repeller (a strike there is "struck repeller"). */
  readonly repellerIndex: number;
  /** Mesh z of the repeller face: the ion's start position is measured from it. */
  readonly repellerFaceZ_m: number;
  /** The waveform's source (planes, delay, rise), for the restart times. */
  readonly timing: SourceModel;
}

/** The ion left a solved region in state `ion`: its straight transverse motion continues from there. */
export function leftSolvedRegion(st: IonState, ion: SolvedIonState): void {
  st.tRef = ion.t;
  st.xRef = ion.x;
  st.yRef = ion.y;
  st.vxRef = ion.vx;
  st.vyRef = ion.vy;
  st.struckElectrode = ion.struckElectrode;
}

/** Load the 3-D state of `st` at the plane z = zMesh_m of a solved region's mesh frame. */
function enter(ion: SolvedIonState, st: IonState, zMesh_m: number): void {
  ion.t = st.t;
  ion.x = transverseXAt(st, st.t);
  ion.y = transverseYAt(st, st.t);
  ion.z = zMesh_m;
  ion.vx = st.vxRef;
  ion.vy = st.vyRef;
  ion.vz = st.v;
  ion.struckElectrode = -1;
}

function chord(observer: SegmentObserver | null, section: 0 | 2, t0: number, z0: number, v0: number, st: IonState, z1: number): void {
  if (observer === null) return;
  const dt = st.t - t0;
  observer.segment(section, 0, t0, dt, z0, v0, dt > 0 ? (2 * (z1 - z0 - v0 * dt)) / (dt * dt) : 0, SegmentKind.CHORD);
}

/**
 * Through a solved mirror from the state in `st` (normally its entry plane, z = 0 moving in; z is
 * the depth behind the entry plane) and back out: Exit.FAR with st.v the speed on the return leg,
 * or the fate.
 */
export function crossSolvedMirror(st: IonState, plan: FlightPlan, mirror: SolvedMirrorModel, tLimit_s: number, tracer: SolvedFieldTracer, ion: SolvedIonState): RegionExit {
  const region = mirror.region;
  enter(ion, st, region.entryZ_m + st.z);
  const exit = tracer.trace(ion, region, plan.qOverM, tLimit_s);
  st.t = ion.t;
  leftSolvedRegion(st, ion);
  switch (exit) {
    case Exit.ENTRY:
      st.v = -ion.vz; // speed along the unfolded return path
      return Exit.FAR;
    case Fate.STRUCK_ELECTRODE:
      return (st.fate = Fate.STRUCK_ELECTRODE);
    case Exit.FAR:
      return (st.fate = Fate.PASSED_THROUGH_MIRROR);
    case Fate.INTEGRATION_FAILED:
      return (st.fate = Fate.INTEGRATION_FAILED);
    default:
      return (st.fate = Fate.TIMED_OUT);
  }
}

/**
 * From the ion's state (its start, normally) through the solved source, in the field
 * φ(t) = Σ V_k(t) φ_k of the extraction waveform; integration restarts at every jump or kink of the
 * waveform. Exit.FAR at the region's far plane (then the drift), or the fate.
 */
export function crossSolvedSource(
  st: IonState,
  source: SolvedSourceModel,
  qOverM: number,
  tLimit_s: number,
  tracer: SolvedFieldTracer,
  ion: SolvedIonState,
  precision: number = SolvedPrecision.NORMAL,
): RegionExit {
  enter(ion, st, source.repellerFaceZ_m + st.z);
  if (st.z <= 0 && st.v < 0) return (st.fate = Fate.STRUCK_REPELLER); // formed on the repeller moving into it
  let exit: number;
  while (true) {
    const tEnd = Math.min(nextBreakpoint_s(source.timing, ion.t), tLimit_s);
    exit = tracer.trace(ion, source.region, qOverM, tEnd, precision);
    if (exit !== Exit.PAUSED || !(ion.t < tLimit_s)) break;
  }
  st.t = ion.t;
  leftSolvedRegion(st, ion);
  switch (exit) {
    case Exit.FAR:
      if (ion.t < source.timing.delay_s) return (st.fate = Fate.LEFT_SOURCE_DURING_DELAY);
      st.v = ion.vz;
      st.z = 0;
      return Exit.FAR;
    case Fate.STRUCK_ELECTRODE:
      return (st.fate = ion.struckElectrode === source.repellerIndex ? Fate.STRUCK_REPELLER : Fate.STRUCK_ELECTRODE);
    case Exit.ENTRY:
      return (st.fate = Fate.STRUCK_REPELLER); // behind the repeller face: only through the repeller itself
    case Fate.INTEGRATION_FAILED:
      return (st.fate = Fate.INTEGRATION_FAILED);
    default:
      return (st.fate = Fate.TIMED_OUT);
  }
}

/** What the solved-source kernel needs of a transfer map (src/physics/solvedSourceMap.ts). */
export interface SourceMap {
  /** Through the source from the ion's start, by the map where it holds: Exit.FAR (st at the far plane) or the fate. */
  crossIon(st: IonState, qOverM: number, tLimit_s: number): RegionExit;
  /** Mesh z where the last ion stopped (the far plane when it got through). */
  readonly stopZ_m: number;
}

/**
 * A crossing of the solved source traced at a chosen precision, for FlightChoice.sourceMap: the
 * reference the transfer map and the normal trace are measured against. `onTime` is told the time
 * spent inside.
 */
export function tracedSourcePass(source: SolvedSourceModel, precision: number, onTime: (inside_s: number) => void): SourceMap {
  const tracer = new SolvedFieldTracer(null);
  const ion = createSolvedIonState();
  return {
    get stopZ_m() {
      return ion.z;
    },
    crossIon(st: IonState, qOverM: number, tLimit_s: number): RegionExit {
      const t0 = st.t;
      const exit = crossSolvedSource(st, source, qOverM, tLimit_s, tracer, ion, precision);
      onTime(st.t - t0);
      return exit;
    },
  };
}

/** The section kernel of a solved source: traced in 3-D, or by the run's transfer map where it holds. */
export class SolvedSourceKernel implements RegionKernel {
  readonly section = Section.SOURCE;
  readonly name: string;
  private readonly ion = createSolvedIonState();
  constructor(
    private readonly source: SolvedSourceModel,
    private readonly tLimit_s: number,
    private readonly tracer: SolvedFieldTracer,
    private readonly map: SourceMap | null = null,
  ) {
    this.name = map ? 'source: solved field, transfer map where it holds' : 'source: solved field, traced in 3-D';
  }
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const t0 = st.t;
    const z0 = st.z;
    const v0 = st.v;
    const map = this.map;
    const exit = map !== null ? map.crossIon(st, plan.qOverM, this.tLimit_s) : crossSolvedSource(st, this.source, plan.qOverM, this.tLimit_s, this.tracer, this.ion);
    if (observer !== null) chord(observer, Section.SOURCE, t0, z0, v0, st, (map !== null ? map.stopZ_m : this.ion.z) - this.source.repellerFaceZ_m);
    return exit;
  }
}

/** What the solved-mirror kernel needs of a transfer map (src/physics/solvedMirrorMap.ts). */
export interface MirrorMap {
  /** Through the mirror from its entry plane, by the map where it holds; false with the fate set when lost. */
  passIon(st: IonState, plan: FlightPlan, tLimit_s: number): boolean;
}

/**
 * A pass through the solved mirror traced at a chosen precision, for FlightChoice.mirrorMap: the
 * reference the transfer map and the normal trace are measured against. `onTime` is told the time
 * spent inside.
 */
export function tracedMirrorPass(mirror: SolvedMirrorModel, precision: number, onTime: (inside_s: number) => void): MirrorMap {
  const tracer = new SolvedFieldTracer(null);
  const ion = createSolvedIonState();
  return {
    passIon(st: IonState, plan: FlightPlan, tLimit_s: number): boolean {
      const t0 = st.t;
      enter(ion, st, mirror.region.entryZ_m);
      const exit = tracer.trace(ion, mirror.region, plan.qOverM, tLimit_s, precision);
      onTime(ion.t - t0);
      st.t = ion.t;
      leftSolvedRegion(st, ion);
      if (exit !== Exit.ENTRY) {
        st.fate = exit === Exit.FAR ? Fate.PASSED_THROUGH_MIRROR : exit === Fate.STRUCK_ELECTRODE ? Fate.STRUCK_ELECTRODE : exit === Fate.INTEGRATION_FAILED ? Fate.INTEGRATION_FAILED : Fate.TIMED_OUT;
        return false;
      }
      st.v = -ion.vz;
      return true;
    },
  };
}

/** The section kernel of a solved mirror: traced in 3-D, or by the run's transfer map where it holds. */
export class SolvedMirrorKernel implements RegionKernel {
  readonly section = Section.MIRROR;
  readonly name: string;
  private readonly ion = createSolvedIonState();
  constructor(
    private readonly mirror: SolvedMirrorModel,
    private readonly tLimit_s: number,
    private readonly tracer: SolvedFieldTracer,
    private readonly map: MirrorMap | null,
  ) {
    this.name = map ? 'mirror: solved field, transfer map where it holds' : 'mirror: solved field, traced in 3-D';
  }
  cross(st: IonState, plan: FlightPlan, observer: SegmentObserver | null): RegionExit {
    const t0 = st.t;
    const z0 = st.z;
    const v0 = st.v;
    let exit: RegionExit;
    // The map is fitted to ions arriving through the entry plane; any other start is traced.
    if (this.map !== null && st.z === 0 && st.v > 0) exit = this.map.passIon(st, plan, this.tLimit_s) ? Exit.FAR : (st.fate as RegionExit);
    else exit = crossSolvedMirror(st, plan, this.mirror, this.tLimit_s, this.tracer, this.ion);
    // Out through the entry plane again (depth 0), or lost where the tracer stopped.
    if (observer !== null) chord(observer, Section.MIRROR, t0, z0, v0, st, exit === Exit.FAR ? 0 : this.ion.z - this.mirror.region.entryZ_m);
    return exit;
  }
}
