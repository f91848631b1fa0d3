/**
 * A solved field region as the engine's 3-D tracer needs it (src/physics/regions/solvedTracer.ts):
 * the field map, its bounding planes, the solid electrodes as rectangles and the step limits they
 * imply, and the drive voltages when they change in time. Pure geometry and field data.
 */
import type { FieldMap } from './interpolate';
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

/** Signed distance from (r, z) to the nearest of the rectangles [rMin, rMax, zMin, zMax] × n; negative inside one. */
export function rectClearance(rects: Float64Array, r: number, z: number, start: number, from = 0, to = rects.length): number {
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

