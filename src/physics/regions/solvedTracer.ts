/**
 * 3-D Cartesian ion motion through a solved (axisymmetric) field region (src/fields/solvedRegion.ts).
 *
 * State (x, y, z, vx, vy, vz) in the region's mesh frame (z along the axis, the axis at x = y = 0).
 * The force is q/m·E with E from the bicubic spline field map: E_x = E_r·x/r, E_y = E_r·y/r. The region is
 * bounded by two planes across the axis, the entry plane (lower z) and the far plane (higher z),
 * both terminal events of one adaptive DOPRI5 solve; a third terminal event fires when the ion
 * enters a solid electrode or leaves the mesh radially into the grounded wall (a strike).
 * Steps are free inside the corridor around the axis that only electrodes reaching the axis
 * cross; once the ion leaves it, every electrode is checked and each step is capped at the
 * clearance to the nearest metal (no shorter path can touch it), never below the thinnest
 * electrode (under which none can be jumped over between two checks). A region may have drives that change in time (a pulsed
 * source): the field is then Σ V_k(t) φ_k from the unit fields until the voltages settle.
 * Each `SolvedFieldTracer` owns its force, workspace, result and options (the driver creates one
 * per call): no allocation per ion and no state shared between calls.
 */
import { SAMPLE_FREE, createFieldSample, sampleField, sampleSuperposed, type FieldMap, type FieldSample } from '../../fields/interpolate';
import { clearance_m, rectClearance, type SolvedRegion } from '../../fields/solvedRegion';
import { Exit, Fate, type RegionExit } from '../fates';
import {
  DOPRI5,
  SPACE_ENTRY,
  SPACE_FAR,
  createResult,
  createSolveOptions,
  createWorkspace,
  solveSpace,
  type SpaceForce,
} from '../integrator';
import type { TraceCounters } from './contract';
import { legacyTally } from './legacyTally';

export { clearance_m, makeSolvedRegion, type SolvedRegion, type TimeDependentField } from '../../fields/solvedRegion';

/** Ion state handed in and out (mesh frame, SI). */
export interface SolvedIonState {
  t: number;
  x: number;
  y: number;
  z: number;
  vx: number;
  vy: number;
  vz: number;
  /** Electrode index of the last strike (−1: the grounded wall), for callers that name it. */
  struckElectrode: number;
}

export function createSolvedIonState(): SolvedIonState {
  return { t: 0, x: 0, y: 0, z: 0, vx: 0, vy: 0, vz: 0, struckElectrode: -1 };
}

/**
 * How the ion left the region, under the tracer's older names: views of the one exit vocabulary
 * (src/physics/fates.ts). ENTRY: back through the entry plane (moving −z, e.g. reflected by a
 * mirror); FAR: through the far plane; STRUCK: into a solid electrode or radially out of the mesh
 * into the grounded wall (the index is in `struckElectrode`); TIME_LIMIT: still inside at the time
 * limit; FAILED: integration failed (step-size underflow, step limit, non-finite state).
 */
export const SolvedExit = {
  ENTRY: Exit.ENTRY,
  FAR: Exit.FAR,
  STRUCK: Fate.STRUCK_ELECTRODE,
  TIME_LIMIT: Exit.PAUSED,
  FAILED: Fate.INTEGRATION_FAILED,
} as const;

interface TraceContext {
  map: FieldMap;
  region: SolvedRegion;
  /** Signed charge-to-mass ratio (C/kg). */
  qOverM: number;
  entryZ_m: number;
  farZ_m: number;
  /** Drive voltages at the current time, for a time-dependent region. */
  voltages: Float64Array;
  /** Inside the corridor only discs can be struck and steps are free; outside every electrode is checked and steps are capped. */
  careful: boolean;
}

/** Strike guard: full clearance when careful; else the corridor edge or a disc, whichever is nearer. */
function guard(c: TraceContext, r: number, z: number): number {
  if (c.careful) return clearance_m(c.region, r, z);
  return rectClearance(c.region.discs, r, z, c.region.corridorRadius_m - r);
}

/** The region's force and strike guard for the integrator; one instance per tracer, set up per solve. */
class RegionForce implements SpaceForce, TraceContext {
  constructor(private readonly sample: FieldSample) {}
  map = null as unknown as FieldMap;
  region = null as unknown as SolvedRegion;
  qOverM = 0;
  entryZ_m = 0;
  farZ_m = 0;
  voltages = new Float64Array(8);
  careful = false;
  /** Path length a step may always take near metal (region.maxStepLength_m), and the speed bound inside. */
  thinnest_m = 0;
  vMax_m_per_s = 0;

  acceleration(at: Float64Array, out: Float64Array): void {
    const t = at[0];
    const x = at[1];
    const y = at[2];
    const r = Math.sqrt(x * x + y * y);
    // Inside metal or beyond the wall the map reports no field; the strike event ends the solve there.
    // Beyond the mesh's z ends (only stage points of the step that leaves through a region plane
    // at a mesh end get there) the field of the end row continues it: a force that dropped to zero
    // there would cost the error control several rejected steps at every exit.
    const mesh = this.map.mesh;
    const z = at[3] < mesh.zMin_m ? mesh.zMin_m : at[3] > mesh.zMax_m ? mesh.zMax_m : at[3];
    const td = this.region.timeDependent;
    let status: number;
    if (td !== null && t < td.settle_s) {
      td.voltagesAt(t, this.voltages);
      status = sampleSuperposed(td.unitFields, this.voltages, r, z, this.sample);
    } else status = sampleField(this.map, r, z, this.sample);
    if (status !== SAMPLE_FREE) {
      out[0] = out[1] = out[2] = 0;
      return;
    }
    const k = this.qOverM;
    const er = r > 0 ? (k * this.sample.fieldR_V_per_m) / r : 0;
    out[0] = er * x;
    out[1] = er * y;
    out[2] = k * this.sample.fieldZ_V_per_m;
  }

  /** Goes negative on a strike, or on leaving the corridor (see guard()). */
  guard(at: Float64Array): number {
    return guard(this, Math.sqrt(at[1] * at[1] + at[2] * at[2]), at[3]);
  }

  /**
   * Outside the corridor the guard is the clearance to the nearest metal or the wall. No path
   * shorter than that clearance can touch metal, so the step may fly it at the fastest possible
   * speed; never less than the thinnest electrode's path (the earlier fixed cap, under which no
   * electrode can be jumped over between two checks). Inside the corridor steps are free.
   */
  stepCapAt(guard: number): number {
    if (!this.careful) return Infinity;
    return (guard > this.thinnest_m ? guard : this.thinnest_m) / this.vMax_m_per_s;
  }
}

/**
 * Method and tolerances, measured on the demo gridless mirror (300 ions, flight times against
 * DOP853 at rtol 1e-12 with 1e-13 m floors; `bench/fieldTraceBench.ts` counts the evaluations):
 * DOPRI5 at rtol 1e-7 needs ~317 field evaluations per ion for a relative flight-time error of
 * 2.2e-7 rms (largest 5e-7), far below the peak widths of interest (R ≲ 1e5). DOP853 needs
 * ~550–590 evaluations at rtol 1e-7…1e-10 and is no more accurate here: the spline field is C¹,
 * not smooth enough for an eighth-order method to pay off. With the earlier cubic-convolution
 * field (C⁰ in E) the same DOPRI5 setting needed ~395 evaluations for a 20× larger error.
 * Predictive step control: an ion leaving a mirror speeds up, so each step must be shorter than
 * the last, and the plain controller overshot and paid a rejection about every second step. With
 * the field continued past the mesh ends as well (see the right-hand side), rejections fell from
 * 21 to ~10 per ion in the benchmark. The clearance cap outside the corridor (stepCapAt; before
 * it, a fixed cap at the thinnest electrode) cut the benchmark's field evaluations from 421 to 337
 * per ion: the ions that strike the entrance electrode on the way out fell from ~2600 to ~600. Floors: 1e-8 m and 1e-3 m/s. The same input always gives the same
 * result, but the adaptive step sequence is not a smooth function of the input: a tiny change of
 * the entry speed can move the exit time by about the integration error level.
 */
export const SOLVED_RTOL = 1e-7;
/**
 * Tighter settings on request: FINE for the rays a transfer map is fitted to and validated on
 * (src/physics/solvedMirrorMap.ts), REFERENCE for measuring the error of the others (benchmarks).
 */
export const SolvedPrecision = { NORMAL: 0, FINE: 1, REFERENCE: 2 } as const;
function precisionOptions() {
  return [
    createSolveOptions({ rtol: SOLVED_RTOL, atol: Float64Array.of(1e-8, 1e-8, 1e-8, 1e-3, 1e-3, 1e-3), maxSteps: 200_000, predictive: true }),
    createSolveOptions({ rtol: 1e-9, atol: Float64Array.of(1e-10, 1e-10, 1e-10, 1e-5, 1e-5, 1e-5), maxSteps: 1_000_000, predictive: true }),
    createSolveOptions({ rtol: 1e-12, atol: Float64Array.of(1e-13, 1e-13, 1e-13, 1e-8, 1e-8, 1e-8), maxSteps: 5_000_000, predictive: true }),
  ];
}

export interface SolvedTraceCounters {
  steps: number;
  rejected: number;
  evaluations: number;
  lastMessage: string;
}

/** The solved part of the process-wide diagnostic tally (src/physics/regions/legacyTally.ts), under its older names. */
export const solvedCounters: SolvedTraceCounters = {
  get steps() {
    return legacyTally.solvedSteps;
  },
  set steps(n: number) {
    legacyTally.solvedSteps = n;
  },
  get rejected() {
    return legacyTally.solvedRejected;
  },
  set rejected(n: number) {
    legacyTally.solvedRejected = n;
  },
  get evaluations() {
    return legacyTally.solvedEvaluations;
  },
  set evaluations(n: number) {
    legacyTally.solvedEvaluations = n;
  },
  get lastMessage() {
    return legacyTally.lastMessage;
  },
  set lastMessage(m: string) {
    legacyTally.lastMessage = m;
  },
};

/** A tracer's integrator state: field sample, force, tolerances, Runge-Kutta workspace. */
class TracerWork {
  readonly sample = createFieldSample();
  readonly context = new RegionForce(this.sample);
  readonly options = precisionOptions();
  readonly workspace = createWorkspace(DOPRI5, 6);
  readonly result = createResult(6, 4);
  readonly y0 = new Float64Array(6);
}

/** Traces ions through solved regions; owns its integrator state (one per driver call). */
export class SolvedFieldTracer {
  // Made on the first trace: every flight builds a tracer, and most (the focus analysis builds about
  // 90 all-ideal flights per run) never trace, so they should allocate nothing.
  private work: TracerWork | null = null;

  /** @param counters where the effort is summed (none when null) */
  constructor(public counters: TraceCounters | null = null) {}

  private get state(): TracerWork {
    return (this.work ??= new TracerWork());
  }

  /**
   * The field is static, so v² + 2(q/m)φ is conserved along the path (energy conservation). The
   * interpolated exit state keeps the direction but its speed carries the dense-output error
   * (measured up to ~1e-5 relative); rescale the speed to the conserved value, which for a mirror
   * makes the exit speed equal the entry speed exactly, as time reversal demands.
   */
  private restoreEnergy(ion: SolvedIonState, region: SolvedRegion, qOverM: number, energy0: number): void {
    const sample = this.state.sample;
    sampleField(region.map, Math.sqrt(ion.x * ion.x + ion.y * ion.y), ion.z, sample);
    const speed2 = energy0 - 2 * qOverM * sample.potential_V;
    const now2 = ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz;
    if (!(speed2 > 0 && now2 > 0)) return;
    const scale = Math.sqrt(speed2 / now2);
    ion.vx *= scale;
    ion.vy *= scale;
    ion.vz *= scale;
  }

  /**
   * Trace one ion from its state in `ion` (normally on the entry plane moving +z) until it leaves
   * the region, strikes, fails or reaches `tLimit_s`. Writes the final state back into `ion` (the
   * electrode struck in `ion.struckElectrode`) and returns Exit.ENTRY, Exit.FAR, Exit.PAUSED,
   * Fate.STRUCK_ELECTRODE or Fate.INTEGRATION_FAILED.
   */
  trace(ion: SolvedIonState, region: SolvedRegion, qOverM: number, tLimit_s: number, precision: number = SolvedPrecision.NORMAL): RegionExit {
    const work = this.state;
    const options = work.options[precision];
    const context = work.context;
    const sample = work.sample;
    const result = work.result;
    const y0 = work.y0;
    context.map = region.map;
    context.region = region;
    context.qOverM = qOverM;
    context.entryZ_m = region.entryZ_m;
    context.farZ_m = region.farZ_m;
    const r0 = Math.sqrt(ion.x * ion.x + ion.y * ion.y);
    // Starts inside metal or beyond the wall (on a surface is allowed: ions formed on the repeller).
    if (clearance_m(region, r0, ion.z) < 0) return struck(ion, region, r0, ion.z);
    context.careful = r0 >= region.corridorRadius_m;
    const td = region.timeDependent;
    if (td !== null && context.voltages.length < td.unitFields.unitPotentials.length) context.voltages = new Float64Array(td.unitFields.unitPotentials.length);
    // Energy is conserved only where the field is static for the whole solve.
    const staticField = td === null || ion.t >= td.settle_s;
    ion.struckElectrode = -1;
    sampleField(region.map, r0, ion.z, sample);
    const energy0 = ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz + 2 * qOverM * sample.potential_V;
    // Fastest possible speed inside (energy conservation) → time for the longest allowed step path.
    const vMax = Math.sqrt(ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz + 2 * Math.abs(qOverM) * region.potentialSpan_V);
    context.thinnest_m = region.maxStepLength_m;
    context.vMax_m_per_s = vMax;
    // First step: half a mesh cell at the fastest possible speed. A function of this ion only (not of
    // the previous one), so that a result never depends on the order in which ions are traced.
    const firstStep = vMax > 0 ? (0.5 * Math.min(region.map.mesh.hr_m, region.map.mesh.hz_m)) / vMax : 0;
    while (true) {
      if (!(tLimit_s > ion.t)) return Exit.PAUSED;
      y0[0] = ion.x;
      y0[1] = ion.y;
      y0[2] = ion.z;
      y0[3] = ion.vx;
      y0[4] = ion.vy;
      y0[5] = ion.vz;
      options.maxStep = Infinity; // the force caps each step (stepCapAt) once the ion is outside the corridor
      options.firstStep = Math.min(firstStep, tLimit_s - ion.t);
      solveSpace(work.workspace, context, ion.t, y0, tLimit_s, context.entryZ_m, context.farZ_m, options, result);
      const counters = this.counters;
      if (counters !== null) {
        counters.solvedSteps += result.steps;
        counters.solvedRejected += result.rejectedSteps;
        counters.solvedEvaluations += result.rhsEvaluations;
      }
      const s = result.y;
      ion.t = result.t;
      ion.x = s[0];
      ion.y = s[1];
      ion.z = s[2];
      ion.vx = s[3];
      ion.vy = s[4];
      ion.vz = s[5];
      if (result.status === 'failed') {
        if (counters !== null) counters.lastMessage = result.message;
        return Fate.INTEGRATION_FAILED;
      }
      if (result.status !== 'event') return Exit.PAUSED;
      if (result.terminalEvent === SPACE_ENTRY || result.terminalEvent === SPACE_FAR) {
        ion.z = result.terminalEvent === SPACE_ENTRY ? region.entryZ_m : region.farZ_m; // snap onto the plane it crossed
        if (staticField) this.restoreEnergy(ion, region, qOverM, energy0);
        return result.terminalEvent === SPACE_ENTRY ? Exit.ENTRY : Exit.FAR;
      }
      const r = Math.sqrt(ion.x * ion.x + ion.y * ion.y);
      if (context.careful) return struck(ion, region, r, ion.z);
      // Left the corridor or met a disc: a strike if it is at metal now, else go on with every electrode checked.
      if (rectClearance(region.discs, r, ion.z, Infinity) <= 1e-12 || clearance_m(region, r, ion.z) <= 0) return struck(ion, region, r, ion.z);
      context.careful = true;
    }
  }
}

/** The strike: names the nearest electrode (−1: the grounded wall) in `ion.struckElectrode`. */
function struck(ion: SolvedIonState, region: SolvedRegion, r: number, z: number): RegionExit {
  let best = region.map.mesh.rMax_m - r;
  ion.struckElectrode = -1;
  const rects = region.solids;
  for (let k = 0; k < rects.length; k += 4) {
    const d = rectClearance(rects, r, z, Infinity, k, k + 4);
    if (d < best) {
      best = d;
      ion.struckElectrode = region.solidIndex[k / 4];
    }
  }
  return Fate.STRUCK_ELECTRODE;
}

/** One shared tracer for callers that trace single rays (tests, benchmarks, the transfer map's fits); it adds to the process-wide tally. */
const shared = new SolvedFieldTracer(legacyTally);

/** Trace one ion through `region` on the shared tracer; see SolvedFieldTracer.trace. */
export function traceSolvedRegion(ion: SolvedIonState, region: SolvedRegion, qOverM: number, tLimit_s: number, precision: number = SolvedPrecision.NORMAL): number {
  return shared.trace(ion, region, qOverM, tLimit_s, precision);
}
