/**
 * 3-D Cartesian ion motion through a solved (axisymmetric) field region.
 *
 * State (x, y, z, vx, vy, vz) in the region's mesh frame (z along the axis, the axis at x = y = 0).
 * The force is q/m·E with E from the bicubic spline field map: E_x = E_r·x/r, E_y = E_r·y/r. The region is
 * bounded by two planes across the axis, the entry plane (lower z) and the far plane (higher z),
 * both terminal events of one adaptive DOPRI5 solve; a third terminal event fires when the ion
 * enters a solid electrode or leaves the mesh radially into the grounded wall (a strike).
 * Steps are free inside the corridor around the axis that only electrodes reaching the axis
 * cross; once the ion leaves it, every electrode is checked and each step is capped at the thinnest
 * electrode so that none is jumped over. A region may have drives that change in time (a pulsed
 * source): the field is then Σ V_k(t) φ_k from the unit fields until the voltages settle.
 * Everything (state, workspace, result, options) is module-level and reused: no allocation per ion.
 */
import {
  DOPRI5,
  SPACE_ENTRY,
  SPACE_FAR,
  createResult,
  createSolveOptions,
  createWorkspace,
  solveSpace,
  type SpaceForce,
} from '../physics/integrator';
import { SAMPLE_FREE, createFieldSample, sampleField, sampleSuperposed, type FieldMap } from './interpolate';
import type { UnitFieldSet } from './unitSolutions';

/** A solved field region as the tracer needs it (build with makeSolvedRegion). */
export interface SolvedRegion {
  /** Potential map (any constant offset: only its gradient is used). */
  readonly map: FieldMap;
  /** Mesh z of the entry plane (ions come in here moving +z) and of the far plane. */
  readonly entryZ_m: number;
  readonly farZ_m: number;
  /** Largest potential difference in the map: bounds the speed an ion can reach inside. */
  readonly potentialSpan_V: number;
  /**
   * Longest path per integration step near electrodes: the thinnest solid electrode dimension
   * (not below one mesh spacing), so that no step can jump over an electrode unseen.
   */
  readonly maxStepLength_m: number;
  /**
   * Radius of the free corridor around the axis: no solid electrode except "discs" (electrodes
   * reaching the axis, e.g. a back plate) comes closer. Inside it steps need no length cap.
   */
  readonly corridorRadius_m: number;
  /** Solid electrodes as rectangles [rMin, rMax, zMin, zMax] × n, and the subset that reaches the axis. */
  readonly solids: Float64Array;
  readonly discs: Float64Array;
  /** Electrode index of each rectangle in `solids` (to name the electrode struck). */
  readonly solidIndex: Int32Array;
  /** Drives that change in time (a pulsed source); null when `map` holds at all times. */
  readonly timeDependent: TimeDependentField | null;
}

/**
 * A field whose drive voltages change in time: φ(t) = Σ V_k(t) φ_k by superposition of unit fields.
 * From `settle_s` on the voltages are constant and equal to those of the region's `map`.
 */
export interface TimeDependentField {
  readonly unitFields: UnitFieldSet;
  /** Writes the drive voltages at time t (s) into `out` (allocation-free). */
  readonly voltagesAt: (t: number, out: Float64Array) => void;
  readonly settle_s: number;
  /** Largest potential difference at any time (bounds the speed inside). */
  readonly potentialSpan_V: number;
}

export function makeSolvedRegion(map: FieldMap, entryZ_m: number, farZ_m: number, timeDependent: TimeDependentField | null = null): SolvedRegion {
  let lo = Infinity;
  let hi = -Infinity;
  const phi = map.potential_V;
  for (let k = 0; k < phi.length; k++) {
    if (phi[k] < lo) lo = phi[k];
    if (phi[k] > hi) hi = phi[k];
  }
  const mesh = map.mesh;
  let thinnest = Infinity;
  let corridor = mesh.rMax_m;
  const solids: number[] = [];
  const solidIndex: number[] = [];
  const discs: number[] = [];
  mesh.layout.electrodes.forEach((e, index) => {
    if (e.transparent) return;
    thinnest = Math.min(thinnest, e.rMax_m - e.rMin_m, e.zMax_m - e.zMin_m);
    solids.push(e.rMin_m, e.rMax_m, e.zMin_m, e.zMax_m);
    solidIndex.push(index);
    if (e.rMin_m > 0) corridor = Math.min(corridor, e.rMin_m);
    else discs.push(e.rMin_m, e.rMax_m, e.zMin_m, e.zMax_m);
  });
  const spacing = Math.min(mesh.hr_m, mesh.hz_m);
  return {
    map,
    entryZ_m,
    farZ_m,
    potentialSpan_V: Math.max(hi - lo, timeDependent ? timeDependent.potentialSpan_V : 0),
    maxStepLength_m: Math.max(thinnest, spacing),
    corridorRadius_m: corridor,
    solids: Float64Array.from(solids),
    discs: Float64Array.from(discs),
    solidIndex: Int32Array.from(solidIndex),
    timeDependent,
  };
}

/** Ion state handed in and out (mesh frame, SI). */
export interface SolvedIonState {
  t: number;
  x: number;
  y: number;
  z: number;
  vx: number;
  vy: number;
  vz: number;
}

export function createSolvedIonState(): SolvedIonState {
  return { t: 0, x: 0, y: 0, z: 0, vx: 0, vy: 0, vz: 0 };
}

/** How the ion left the region. */
export const SolvedExit = {
  /** Back through the entry plane (moving −z): e.g. reflected by a mirror. */
  ENTRY: 1,
  /** Through the far plane (moving +z). */
  FAR: 2,
  /** Into a solid electrode or radially out of the mesh into the grounded wall. */
  STRUCK: 3,
  /** Still inside at the time limit. */
  TIME_LIMIT: 0,
  /** Integration failed (step-size underflow, step limit, non-finite state). */
  FAILED: 4,
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

const sample = createFieldSample();

/** Signed distance from (r, z) to the nearest of the rectangles [rMin, rMax, zMin, zMax] × n; negative inside one. */
function rectClearance(rects: Float64Array, r: number, z: number, start: number, from = 0, to = rects.length): number {
  let best = start;
  for (let k = from; k < to; k += 4) {
    const dr = Math.max(rects[k] - r, r - rects[k + 1]);
    const dz = Math.max(rects[k + 2] - z, z - rects[k + 3]);
    let d: number;
    if (dr < 0 && dz < 0) d = Math.max(dr, dz);
    else {
      const a = dr > 0 ? dr : 0;
      const b = dz > 0 ? dz : 0;
      d = Math.sqrt(a * a + b * b);
    }
    if (d < best) best = d;
  }
  return best;
}

/**
 * Signed clearance in the (r, z) half-plane: distance to the nearest solid electrode or to the
 * grounded wall, negative inside metal or beyond the wall. Continuous, so the event root finder
 * locates the strike point on the step's interpolant.
 */
export function clearance_m(region: SolvedRegion, r: number, z: number): number {
  return rectClearance(region.solids, r, z, region.map.mesh.rMax_m - r);
}

/** Strike guard: full clearance when careful; else the corridor edge or a disc, whichever is nearer. */
function guard(c: TraceContext, r: number, z: number): number {
  if (c.careful) return clearance_m(c.region, r, z);
  return rectClearance(c.region.discs, r, z, c.region.corridorRadius_m - r);
}

/** The region's force and strike guard for the integrator; one instance, set up per solve. */
class RegionForce implements SpaceForce, TraceContext {
  map = null as unknown as FieldMap;
  region = null as unknown as SolvedRegion;
  qOverM = 0;
  entryZ_m = 0;
  farZ_m = 0;
  voltages = new Float64Array(8);
  careful = false;

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
      status = sampleSuperposed(td.unitFields, this.voltages, r, z, sample);
    } else status = sampleField(this.map, r, z, sample);
    if (status !== SAMPLE_FREE) {
      out[0] = out[1] = out[2] = 0;
      return;
    }
    const k = this.qOverM;
    const er = r > 0 ? (k * sample.fieldR_V_per_m) / r : 0;
    out[0] = er * x;
    out[1] = er * y;
    out[2] = k * sample.fieldZ_V_per_m;
  }

  /** Goes negative on a strike, or on leaving the corridor (see guard()). */
  guard(at: Float64Array): number {
    return guard(this, Math.sqrt(at[1] * at[1] + at[2] * at[2]), at[3]);
  }
}

const context = new RegionForce();

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
 * 21 to ~10 per ion in the benchmark. Floors: 1e-8 m and 1e-3 m/s. The same input always gives the same
 * result, but the adaptive step sequence is not a smooth function of the input: a tiny change of
 * the entry speed can move the exit time by about the integration error level.
 */
export const SOLVED_RTOL = 1e-7;
const options = createSolveOptions({
  rtol: SOLVED_RTOL,
  atol: Float64Array.of(1e-8, 1e-8, 1e-8, 1e-3, 1e-3, 1e-3),
  maxSteps: 200_000,
  predictive: true,
});
/**
 * Tighter settings on request: FINE for the rays a transfer map is fitted to and validated on
 * (src/physics/solvedMirrorMap.ts), REFERENCE for measuring the error of the others (benchmarks).
 */
export const SolvedPrecision = { NORMAL: 0, FINE: 1, REFERENCE: 2 } as const;
const precisionOptions = [
  options,
  createSolveOptions({ rtol: 1e-9, atol: Float64Array.of(1e-10, 1e-10, 1e-10, 1e-5, 1e-5, 1e-5), maxSteps: 1_000_000, predictive: true }),
  createSolveOptions({ rtol: 1e-12, atol: Float64Array.of(1e-13, 1e-13, 1e-13, 1e-8, 1e-8, 1e-8), maxSteps: 5_000_000, predictive: true }),
];
const workspace = createWorkspace(DOPRI5, 6);
const result = createResult(6, 4);
const y0 = new Float64Array(6);

export interface SolvedTraceCounters {
  steps: number;
  rejected: number;
  evaluations: number;
  lastMessage: string;
}

export const solvedCounters: SolvedTraceCounters = { steps: 0, rejected: 0, evaluations: 0, lastMessage: '' };

/**
 * Trace one ion from its state in `ion` (normally on the entry plane moving +z) until it leaves
 * the region, strikes, fails or reaches `tLimit_s`. Writes the final state back into `ion` and
 * returns a SolvedExit code.
 */
/**
 * The field is static, so v² + 2(q/m)φ is conserved along the path (energy conservation). The
 * interpolated exit state keeps the direction but its speed carries the dense-output error
 * (measured up to ~1e-5 relative); rescale the speed to the conserved value, which for a mirror
 * makes the exit speed equal the entry speed exactly, as time reversal demands.
 */
function restoreEnergy(ion: SolvedIonState, region: SolvedRegion, qOverM: number, energy0: number): void {
  sampleField(region.map, Math.sqrt(ion.x * ion.x + ion.y * ion.y), ion.z, sample);
  const speed2 = energy0 - 2 * qOverM * sample.potential_V;
  const now2 = ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz;
  if (!(speed2 > 0 && now2 > 0)) return;
  const scale = Math.sqrt(speed2 / now2);
  ion.vx *= scale;
  ion.vy *= scale;
  ion.vz *= scale;
}

/** Electrode index of the last strike (−1: the grounded wall), for callers that name it. */
export let struckElectrode = -1;

function struck(region: SolvedRegion, r: number, z: number): number {
  let best = region.map.mesh.rMax_m - r;
  struckElectrode = -1;
  const rects = region.solids;
  for (let k = 0; k < rects.length; k += 4) {
    const d = rectClearance(rects, r, z, Infinity, k, k + 4);
    if (d < best) {
      best = d;
      struckElectrode = region.solidIndex[k / 4];
    }
  }
  return SolvedExit.STRUCK;
}

export function traceSolvedRegion(ion: SolvedIonState, region: SolvedRegion, qOverM: number, tLimit_s: number, precision: number = SolvedPrecision.NORMAL): number {
  const options = precisionOptions[precision];
  context.map = region.map;
  context.region = region;
  context.qOverM = qOverM;
  context.entryZ_m = region.entryZ_m;
  context.farZ_m = region.farZ_m;
  const r0 = Math.sqrt(ion.x * ion.x + ion.y * ion.y);
  // Starts inside metal or beyond the wall (on a surface is allowed: ions formed on the repeller).
  if (clearance_m(region, r0, ion.z) < 0) return struck(region, r0, ion.z);
  context.careful = r0 >= region.corridorRadius_m;
  const td = region.timeDependent;
  if (td !== null && context.voltages.length < td.unitFields.unitPotentials.length) context.voltages = new Float64Array(td.unitFields.unitPotentials.length);
  // Energy is conserved only where the field is static for the whole solve.
  const staticField = td === null || ion.t >= td.settle_s;
  struckElectrode = -1;
  sampleField(region.map, r0, ion.z, sample);
  const energy0 = ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz + 2 * qOverM * sample.potential_V;
  // Fastest possible speed inside (energy conservation) → time for the longest allowed step path.
  const vMax = Math.sqrt(ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz + 2 * Math.abs(qOverM) * region.potentialSpan_V);
  const cappedStep = vMax > 0 ? region.maxStepLength_m / vMax : Infinity;
  // First step: half a mesh cell at the fastest possible speed. A function of this ion only (not of
  // the previous one), so that a result never depends on the order in which ions are traced.
  const firstStep = vMax > 0 ? (0.5 * Math.min(region.map.mesh.hr_m, region.map.mesh.hz_m)) / vMax : 0;
  while (true) {
    if (!(tLimit_s > ion.t)) return SolvedExit.TIME_LIMIT;
    y0[0] = ion.x;
    y0[1] = ion.y;
    y0[2] = ion.z;
    y0[3] = ion.vx;
    y0[4] = ion.vy;
    y0[5] = ion.vz;
    options.maxStep = context.careful ? cappedStep : Infinity;
    options.firstStep = Math.min(firstStep, tLimit_s - ion.t, options.maxStep);
    solveSpace(workspace, context, ion.t, y0, tLimit_s, context.entryZ_m, context.farZ_m, options, result);
    solvedCounters.steps += result.steps;
    solvedCounters.rejected += result.rejectedSteps;
    solvedCounters.evaluations += result.rhsEvaluations;
    const s = result.y;
    ion.t = result.t;
    ion.x = s[0];
    ion.y = s[1];
    ion.z = s[2];
    ion.vx = s[3];
    ion.vy = s[4];
    ion.vz = s[5];
    if (result.status === 'failed') {
      solvedCounters.lastMessage = result.message;
      return SolvedExit.FAILED;
    }
    if (result.status !== 'event') return SolvedExit.TIME_LIMIT;
    if (result.terminalEvent === SPACE_ENTRY || result.terminalEvent === SPACE_FAR) {
      ion.z = result.terminalEvent === SPACE_ENTRY ? region.entryZ_m : region.farZ_m; // snap onto the plane it crossed
      if (staticField) restoreEnergy(ion, region, qOverM, energy0);
      return result.terminalEvent === SPACE_ENTRY ? SolvedExit.ENTRY : SolvedExit.FAR;
    }
    const r = Math.sqrt(ion.x * ion.x + ion.y * ion.y);
    if (context.careful) return struck(region, r, ion.z);
    // Left the corridor or met a disc: a strike if it is at metal now, else go on with every electrode checked.
    if (rectClearance(region.discs, r, ion.z, Infinity) <= 1e-12 || clearance_m(region, r, ion.z) <= 0) return struck(region, r, ion.z);
    context.careful = true;
  }
}
