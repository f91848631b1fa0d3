/**
 * Potential and field at any (r, z) from a solved node potential.
 *
 * A tensor-product cubic B-spline over the 4×4 nodes around the query, with E = −∇φ from the
 * analytic derivative of the same spline. Its coefficients come from the node potentials by the
 * local quasi-interpolation filter c_i = (−φ_{i−1} + 8φ_i − φ_{i+1})/6 along r and then along z,
 * which reproduces cubic polynomials exactly (de Boor, A Practical Guide to Splines, quasi-
 * interpolants; from memory), so φ is fourth-order and E third-order accurate where φ is smooth.
 * The spline is C² in φ, so the field is C¹: its derivative does not jump at cell edges, which is
 * what lets the tracer's adaptive integrator take long steps through it (a cubic-convolution
 * interpolant, C¹ in φ only, made the error control reject steps at the cell edges and left the
 * flight times ~20× noisier at equal cost: measured, see solvedTracer.ts). The filter is local,
 * so a kink of φ at a metal surface disturbs only about two cells around it.
 * Edges: across the axis the node at r = −h is the mirror of r = +h (φ is even in r), which
 * makes E_r(0, z) = 0 exactly; beyond the outer radius and the z ends a ghost node is
 * extrapolated quadratically, which keeps quadratics exact up to every edge.
 *
 * A query that falls inside a solid electrode (its exact rectangle, surface included) or outside
 * the mesh reports so instead of interpolating. Grid planes are transparent and never reported.
 */
import type { FieldMesh } from './mesh';
import type { UnitFieldSet } from './unitSolutions';

/** Returned for a query in free space. */
export const SAMPLE_FREE = -1;
/** Returned for a query beyond the mesh (r > rMax or z outside [zMin, zMax]): the grounded enclosure. */
export const SAMPLE_OUTSIDE_MESH = -2;

export interface FieldMap {
  readonly mesh: FieldMesh;
  readonly potential_V: Float64Array;
  /** Spline coefficients of `potential_V` (splineCoefficients); build the map with createFieldMap. */
  readonly coefficients: Float64Array;
  /** 1/hr and 1/hz: the sampler multiplies instead of dividing. */
  readonly inverseSpacingR_per_m: number;
  readonly inverseSpacingZ_per_m: number;
}

/** A field map of the node potential `potential_V`, which must not change afterwards. */
export function createFieldMap(mesh: FieldMesh, potential_V: Float64Array): FieldMap {
  return {
    mesh,
    potential_V,
    coefficients: splineCoefficients(mesh, potential_V),
    inverseSpacingR_per_m: 1 / mesh.hr_m,
    inverseSpacingZ_per_m: 1 / mesh.hz_m,
  };
}

/**
 * Cubic B-spline coefficients of a node potential by the quasi-interpolation filter
 * (−φ_{i−1} + 8φ_i − φ_{i+1})/6, along r then along z, with the edge rules above.
 */
export function splineCoefficients(mesh: FieldMesh, phi: Float64Array, out = new Float64Array(mesh.nr * mesh.nz)): Float64Array {
  const { nr, nz } = mesh;
  if (phi.length !== nr * nz) throw new RangeError(`potential has ${phi.length} values, the mesh ${nr * nz} nodes`);
  const alongR = new Float64Array(nr * nz);
  for (let j = 0; j < nz; j++) {
    const o = j * nr;
    for (let i = 0; i < nr; i++) {
      const inner = i === 0 ? phi[o + 1] : phi[o + i - 1];
      const outer = i === nr - 1 ? 3 * phi[o + nr - 1] - 3 * phi[o + nr - 2] + phi[o + nr - 3] : phi[o + i + 1];
      alongR[o + i] = (8 * phi[o + i] - inner - outer) * ONE_SIXTH;
    }
  }
  const last = (nz - 1) * nr;
  for (let j = 0; j < nz; j++) {
    const o = j * nr;
    for (let i = 0; i < nr; i++) {
      const below = j === 0 ? 3 * alongR[i] - 3 * alongR[nr + i] + alongR[2 * nr + i] : alongR[o - nr + i];
      const above = j === nz - 1 ? 3 * alongR[last + i] - 3 * alongR[last - nr + i] + alongR[last - 2 * nr + i] : alongR[o + nr + i];
      out[o + i] = (8 * alongR[o + i] - below - above) * ONE_SIXTH;
    }
  }
  return out;
}

/** Caller-owned result of a query; reused across calls so that sampling allocates nothing. */
export interface FieldSample {
  potential_V: number;
  fieldR_V_per_m: number;
  fieldZ_V_per_m: number;
}

export function createFieldSample(): FieldSample {
  return { potential_V: 0, fieldR_V_per_m: 0, fieldZ_V_per_m: 0 };
}

/** Work space of one query; module-level because sampling is single-threaded (each worker has its own). */
const cols = new Int32Array(4);
const rows = new Int32Array(4);
const wr = new Float64Array(4);
const dwr = new Float64Array(4);
const wz = new Float64Array(4);
const dwz = new Float64Array(4);

/** 1/6 as a factor: a multiplication is several times cheaper than a division. */
const ONE_SIXTH = 1 / 6;

/** Cubic B-spline weights and their t-derivatives for coefficients −1, 0, 1, 2 at offset t ∈ [0, 1]. */
function cubicWeights(t: number, w: Float64Array, dw: Float64Array): void {
  const t2 = t * t;
  const t3 = t2 * t;
  const u = 1 - t;
  w[0] = (u * u * u) * ONE_SIXTH;
  w[1] = (3 * t3 - 6 * t2 + 4) * ONE_SIXTH;
  w[2] = (-3 * t3 + 3 * t2 + 3 * t + 1) * ONE_SIXTH;
  w[3] = t3 * ONE_SIXTH;
  dw[0] = -0.5 * u * u;
  dw[1] = 0.5 * (3 * t2 - 4 * t);
  dw[2] = 0.5 * (-3 * t2 + 2 * t + 1);
  dw[3] = 0.5 * t2;
}

/** Fold the ghost node beyond the last node n − 1 into its neighbours: ghost = 3u[n−1] − 3u[n−2] + u[n−3]. */
function foldUpperGhost(idx: Int32Array, w: Float64Array, dw: Float64Array): void {
  w[2] += 3 * w[3];
  w[1] -= 3 * w[3];
  w[0] += w[3];
  dw[2] += 3 * dw[3];
  dw[1] -= 3 * dw[3];
  dw[0] += dw[3];
  w[3] = 0;
  dw[3] = 0;
  idx[3] = idx[2];
}

/**
 * Fold the ghost node below the first node 0: ghost = 3u[0] − 3u[1] + u[2]. The node indices
 * then run 0, 1, 2 in slots 1, 2, 3 (slot 0 is emptied).
 */
function foldLowerGhost(idx: Int32Array, w: Float64Array, dw: Float64Array): void {
  w[1] += 3 * w[0];
  w[2] -= 3 * w[0];
  w[3] += w[0];
  dw[1] += 3 * dw[0];
  dw[2] -= 3 * dw[0];
  dw[3] += dw[0];
  w[0] = 0;
  dw[0] = 0;
  idx[0] = idx[1];
}

/**
 * Locate (r ≥ 0, z) in the mesh and fill the stencil (node columns/rows and weights).
 * Returns SAMPLE_OUTSIDE_MESH, an electrode index, or SAMPLE_FREE.
 */
function prepare(mesh: FieldMesh, inverseHr: number, inverseHz: number, r: number, z: number): number {
  const nr = mesh.nr;
  const nz = mesh.nz;
  const x = r * inverseHr;
  const y = (z - mesh.zMin_m) * inverseHz;
  // Written so that NaN also lands outside.
  if (!(x <= nr - 1 && y >= 0 && y <= nz - 1)) return SAMPLE_OUTSIDE_MESH;
  let i = Math.floor(x);
  let j = Math.floor(y);
  if (i > nr - 2) i = nr - 2;
  if (j > nz - 2) j = nz - 2;

  const owner = mesh.cellOwner[j * (nr - 1) + i];
  if (owner !== -1) {
    const electrodes = mesh.layout.electrodes;
    if (owner >= 0) {
      const e = electrodes[owner];
      if (r >= e.rMin_m && r <= e.rMax_m && z >= e.zMin_m && z <= e.zMax_m) return owner;
    } else {
      for (let k = 0; k < electrodes.length; k++) {
        const e = electrodes[k];
        if (!e.transparent && r >= e.rMin_m && r <= e.rMax_m && z >= e.zMin_m && z <= e.zMax_m) return k;
      }
    }
  }

  cubicWeights(x - i, wr, dwr);
  cubicWeights(y - j, wz, dwz);
  for (let a = 0; a < 4; a++) {
    cols[a] = i - 1 + a;
    rows[a] = j - 1 + a;
  }
  if (i === 0) {
    // Mirror: the column at r = −hr equals the column at r = +hr.
    wr[2] += wr[0];
    dwr[2] += dwr[0];
    wr[0] = 0;
    dwr[0] = 0;
    cols[0] = 1;
  }
  if (i + 2 === nr) foldUpperGhost(cols, wr, dwr);
  if (j === 0) foldLowerGhost(rows, wz, dwz);
  if (j + 2 === nz) foldUpperGhost(rows, wz, dwz);
  return SAMPLE_FREE;
}

/** Apply the prepared stencil to one coefficient array; adds scale × (φ, ∂φ/∂x, ∂φ/∂y) into `acc`. */
/** Accumulators [φ, ∂φ/∂x, ∂φ/∂y] of `accumulate`: a typed array, as module-level doubles would be boxed on every write. */
const acc = new Float64Array(3);
function accumulate(phi: Float64Array, nr: number, scale: number): void {
  const c0 = cols[0];
  const c1 = cols[1];
  const c2 = cols[2];
  const c3 = cols[3];
  const w0 = wr[0];
  const w1 = wr[1];
  const w2 = wr[2];
  const w3 = wr[3];
  const d0 = dwr[0];
  const d1 = dwr[1];
  const d2 = dwr[2];
  const d3 = dwr[3];
  let p = 0;
  let dx = 0;
  let dy = 0;
  for (let b = 0; b < 4; b++) {
    const row = rows[b] * nr;
    const v0 = phi[row + c0];
    const v1 = phi[row + c1];
    const v2 = phi[row + c2];
    const v3 = phi[row + c3];
    const s = w0 * v0 + w1 * v1 + w2 * v2 + w3 * v3;
    const ds = d0 * v0 + d1 * v1 + d2 * v2 + d3 * v3;
    p += wz[b] * s;
    dy += dwz[b] * s;
    dx += wz[b] * ds;
  }
  acc[0] += scale * p;
  acc[1] += scale * dx;
  acc[2] += scale * dy;
}

function writeOutside(out: FieldSample): void {
  out.potential_V = 0;
  out.fieldR_V_per_m = 0;
  out.fieldZ_V_per_m = 0;
}

/**
 * Potential and field at (r_m, z_m). Returns SAMPLE_FREE and writes φ, E_r, E_z; or the index of
 * the electrode that contains the point (writes that electrode's potential and zero field); or
 * SAMPLE_OUTSIDE_MESH (writes zeros). A negative r is read as the mirror point, E_r changing sign.
 */
export function sampleField(map: FieldMap, r_m: number, z_m: number, out: FieldSample): number {
  // Fast path: a cell in free space away from every edge (the tracer's usual query), with the
  // stencil in local variables. Same arithmetic as the general path below, so the same numbers.
  const mesh = map.mesh;
  const nr = mesh.nr;
  const x = (r_m < 0 ? -r_m : r_m) * map.inverseSpacingR_per_m;
  const y = (z_m - mesh.zMin_m) * map.inverseSpacingZ_per_m;
  const i = Math.floor(x);
  const j = Math.floor(y);
  if (!(i >= 1 && i <= nr - 3 && j >= 1 && j <= mesh.nz - 3) || mesh.cellOwner[j * (nr - 1) + i] !== -1) return sampleFieldAnywhere(map, r_m, z_m, out);
  const t = x - i;
  const t2 = t * t;
  const t3 = t2 * t;
  const u = 1 - t;
  const w0 = (u * u * u) * ONE_SIXTH;
  const w1 = (3 * t3 - 6 * t2 + 4) * ONE_SIXTH;
  const w2 = (-3 * t3 + 3 * t2 + 3 * t + 1) * ONE_SIXTH;
  const w3 = t3 * ONE_SIXTH;
  const d0 = -0.5 * u * u;
  const d1 = 0.5 * (3 * t2 - 4 * t);
  const d2 = 0.5 * (-3 * t2 + 2 * t + 1);
  const d3 = 0.5 * t2;
  const q = y - j;
  const q2 = q * q;
  const q3 = q2 * q;
  const v = 1 - q;
  const phi = map.coefficients;
  let row = (j - 1) * nr + i - 1;
  let a0 = phi[row];
  let a1 = phi[row + 1];
  let a2 = phi[row + 2];
  let a3 = phi[row + 3];
  let sr = w0 * a0 + w1 * a1 + w2 * a2 + w3 * a3;
  let wz = (v * v * v) * ONE_SIXTH;
  let p = wz * sr;
  let dy = -0.5 * v * v * sr;
  let dx = wz * (d0 * a0 + d1 * a1 + d2 * a2 + d3 * a3);
  row += nr;
  a0 = phi[row];
  a1 = phi[row + 1];
  a2 = phi[row + 2];
  a3 = phi[row + 3];
  sr = w0 * a0 + w1 * a1 + w2 * a2 + w3 * a3;
  wz = (3 * q3 - 6 * q2 + 4) * ONE_SIXTH;
  p += wz * sr;
  dy += 0.5 * (3 * q2 - 4 * q) * sr;
  dx += wz * (d0 * a0 + d1 * a1 + d2 * a2 + d3 * a3);
  row += nr;
  a0 = phi[row];
  a1 = phi[row + 1];
  a2 = phi[row + 2];
  a3 = phi[row + 3];
  sr = w0 * a0 + w1 * a1 + w2 * a2 + w3 * a3;
  wz = (-3 * q3 + 3 * q2 + 3 * q + 1) * ONE_SIXTH;
  p += wz * sr;
  dy += 0.5 * (-3 * q2 + 2 * q + 1) * sr;
  dx += wz * (d0 * a0 + d1 * a1 + d2 * a2 + d3 * a3);
  row += nr;
  a0 = phi[row];
  a1 = phi[row + 1];
  a2 = phi[row + 2];
  a3 = phi[row + 3];
  sr = w0 * a0 + w1 * a1 + w2 * a2 + w3 * a3;
  wz = q3 * ONE_SIXTH;
  p += wz * sr;
  dy += 0.5 * q2 * sr;
  dx += wz * (d0 * a0 + d1 * a1 + d2 * a2 + d3 * a3);
  out.potential_V = p;
  out.fieldR_V_per_m = (r_m < 0 ? dx : 0 - dx) * map.inverseSpacingR_per_m; // 0 − x turns −0 into +0
  out.fieldZ_V_per_m = (0 - dy) * map.inverseSpacingZ_per_m;
  return SAMPLE_FREE;
}

/** sampleField for any query: edges (axis mirror, ghost nodes), electrodes and outside the mesh. */
function sampleFieldAnywhere(map: FieldMap, r_m: number, z_m: number, out: FieldSample): number {
  const mesh = map.mesh;
  const status = prepare(mesh, map.inverseSpacingR_per_m, map.inverseSpacingZ_per_m, r_m < 0 ? -r_m : r_m, z_m);
  if (status !== SAMPLE_FREE) {
    if (status === SAMPLE_OUTSIDE_MESH) writeOutside(out);
    else {
      out.potential_V = map.potential_V[mesh.electrodeNode[status]];
      out.fieldR_V_per_m = 0;
      out.fieldZ_V_per_m = 0;
    }
    return status;
  }
  acc[0] = acc[1] = acc[2] = 0;
  accumulate(map.coefficients, mesh.nr, 1);
  out.potential_V = acc[0];
  out.fieldR_V_per_m = (r_m < 0 ? acc[1] : 0 - acc[1]) * map.inverseSpacingR_per_m; // 0 − x turns −0 into +0
  out.fieldZ_V_per_m = (0 - acc[2]) * map.inverseSpacingZ_per_m;
  return SAMPLE_FREE;
}

/**
 * As sampleField, for the superposition Σ_k V_k φ_k of unit fields with the given drive voltages
 * (e.g. from driveVoltagesAt for a time-dependent drive). The stencil is computed once per query.
 */
export function sampleSuperposed(set: UnitFieldSet, driveVoltages_V: ArrayLike<number>, r_m: number, z_m: number, out: FieldSample): number {
  const mesh = set.mesh;
  const basis = set.unitPotentials;
  const coefficients = set.unitCoefficients;
  const r = Math.abs(r_m);
  const status = prepare(mesh, 1 / mesh.hr_m, 1 / mesh.hz_m, r, z_m);
  if (status === SAMPLE_OUTSIDE_MESH) {
    writeOutside(out);
    return status;
  }
  if (status >= 0) {
    const node = mesh.electrodeNode[status];
    let v = 0;
    for (let d = 0; d < basis.length; d++) v += driveVoltages_V[d] * basis[d][node];
    out.potential_V = v;
    out.fieldR_V_per_m = 0;
    out.fieldZ_V_per_m = 0;
    return status;
  }
  acc[0] = acc[1] = acc[2] = 0;
  for (let d = 0; d < basis.length; d++) {
    const v = driveVoltages_V[d];
    if (v !== 0) accumulate(coefficients[d], mesh.nr, v);
  }
  out.potential_V = acc[0];
  out.fieldR_V_per_m = (r_m < 0 ? acc[1] : 0 - acc[1]) / mesh.hr_m; // 0 − x turns −0 into +0
  out.fieldZ_V_per_m = (0 - acc[2]) / mesh.hz_m;
  return SAMPLE_FREE;
}

/** Index of the solid electrode containing (r_m, z_m), or −1. Grid planes are transparent. */
export function electrodeAt(mesh: FieldMesh, r_m: number, z_m: number): number {
  const status = prepare(mesh, 1 / mesh.hr_m, 1 / mesh.hz_m, Math.abs(r_m), z_m);
  return status >= 0 ? status : -1;
}

/**
 * Cartesian field components at (x, y) from a sample taken at r = √(x² + y²):
 * writes [E_x, E_y, E_z] into `out` (E_r has no direction on the axis, where it is 0).
 */
export function fieldToCartesian(sample: FieldSample, x_m: number, y_m: number, out: Float64Array): Float64Array {
  const r = Math.hypot(x_m, y_m);
  if (r > 0) {
    out[0] = (sample.fieldR_V_per_m * x_m) / r;
    out[1] = (sample.fieldR_V_per_m * y_m) / r;
  } else {
    out[0] = 0;
    out[1] = 0;
  }
  out[2] = sample.fieldZ_V_per_m;
  return out;
}
