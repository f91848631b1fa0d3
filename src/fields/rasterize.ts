/**
 * Electrode layout → mesh masks: which nodes are Dirichlet and which electrode holds each.
 *
 * A node belongs to an electrode when it lies inside (or on) the electrode's rectangle. An
 * electrode thinner than the spacing that contains no node row (or column) is snapped to the
 * nearest one, so that thin plates and grid planes never vanish from the mesh; each snap is
 * reported as a note. Two electrodes claiming one node cannot be represented and are refused.
 */
import { buildLayout, sameConductor } from './electrodes';
import type { ElectrodeLayout, ElectrodeSpec, FieldIssue } from './electrodes';
import { FREE_NODE, GROUND_NODE, meshSpacing, validateMeshSpec } from './mesh';
import type { FieldMesh, MeshSpec } from './mesh';

export type RasterResult =
  | { readonly ok: true; readonly mesh: FieldMesh; readonly notes: FieldIssue[] }
  | { readonly ok: false; readonly issues: FieldIssue[] };

/** Tolerance (in node spacings) for a rectangle edge that lands on a node. */
const ON_NODE = 1e-9;

interface NodeRange {
  lo: number;
  hi: number;
  snapped: boolean;
}

/** Nodes k·h (k = 0…n−1) inside [a, b]; the nearest node when none is. */
function nodeRange(a: number, b: number, h: number, n: number): NodeRange {
  let lo = Math.ceil(a / h - ON_NODE);
  let hi = Math.floor(b / h + ON_NODE);
  lo = Math.max(lo, 0);
  hi = Math.min(hi, n - 1);
  if (lo <= hi) return { lo, hi, snapped: false };
  const nearest = Math.min(n - 1, Math.max(0, Math.round((a + b) / 2 / h)));
  return { lo: nearest, hi: nearest, snapped: true };
}

/** Cells [k·h, (k+1)·h] (k = 0…n−2) that meet [a, b]. */
function cellRange(a: number, b: number, h: number, n: number): { lo: number; hi: number } {
  return { lo: Math.max(0, Math.ceil(a / h - 1 - ON_NODE)), hi: Math.min(n - 2, Math.floor(b / h + ON_NODE)) };
}

export function rasterize(spec: MeshSpec, layout: ElectrodeLayout): RasterResult {
  const issues = validateMeshSpec(spec);
  if (issues.length > 0) return { ok: false, issues };
  const { nr, nz } = spec;
  const { hr_m, hz_m } = meshSpacing(spec);
  const nodeOwner = new Int16Array(nr * nz).fill(FREE_NODE);
  const fixed = new Uint8Array(nr * nz);
  const cellOwner = new Int16Array((nr - 1) * (nz - 1)).fill(-1);
  const electrodeNode = new Int32Array(layout.electrodes.length);
  const notes: FieldIssue[] = [];

  if (layout.electrodes.length > 32_000) {
    return { ok: false, issues: [{ path: 'electrodes', message: 'at most 32000 electrodes are supported' }] };
  }

  // The grounded can first; electrodes that sit on it take those nodes over.
  for (let i = 0; i < nr; i++) {
    nodeOwner[i] = GROUND_NODE;
    nodeOwner[(nz - 1) * nr + i] = GROUND_NODE;
  }
  for (let j = 0; j < nz; j++) nodeOwner[j * nr + nr - 1] = GROUND_NODE;

  layout.electrodes.forEach((e, index) => {
    const rr = nodeRange(e.rMin_m, e.rMax_m, hr_m, nr);
    const zz = nodeRange(e.zMin_m - spec.zMin_m, e.zMax_m - spec.zMin_m, hz_m, nz);
    if (rr.snapped) {
      notes.push({ path: e.path, message: `${e.name} is thinner than the radial spacing; held at the node r = ${rr.lo * hr_m} m` });
    }
    // A grid plane is a single node row by construction; only report a move off its exact z.
    if (zz.snapped && (e.zMax_m > e.zMin_m || Math.abs(spec.zMin_m + zz.lo * hz_m - e.zMin_m) > ON_NODE * hz_m)) {
      notes.push({ path: e.path, message: `${e.name} lies between node rows; held at the row z = ${spec.zMin_m + zz.lo * hz_m} m` });
    }
    electrodeNode[index] = zz.lo * nr + rr.lo;
    for (let j = zz.lo; j <= zz.hi; j++) {
      for (let i = rr.lo; i <= rr.hi; i++) {
        const k = j * nr + i;
        const owner = nodeOwner[k];
        // Parts of one conductor may share nodes; the first keeps them.
        if (owner >= 0 && owner !== index && sameConductor(layout.electrodes[owner], e)) continue;
        if (owner >= 0 && owner !== index) {
          issues.push({
            path: e.path,
            message: `${e.name} and ${layout.electrodes[owner].name} claim the same mesh node (r = ${i * hr_m} m, z = ${spec.zMin_m + j * hz_m} m): separate them by more than one mesh spacing or refine the mesh`,
          });
          return;
        }
        nodeOwner[k] = index;
      }
    }
    if (e.transparent) return;
    const cr = cellRange(e.rMin_m, e.rMax_m, hr_m, nr);
    const cz = cellRange(e.zMin_m - spec.zMin_m, e.zMax_m - spec.zMin_m, hz_m, nz);
    for (let j = cz.lo; j <= cz.hi; j++) {
      for (let i = cr.lo; i <= cr.hi; i++) {
        const c = j * (nr - 1) + i;
        cellOwner[c] = cellOwner[c] === -1 || cellOwner[c] === index ? index : -2;
      }
    }
  });
  if (issues.length > 0) return { ok: false, issues };

  for (let k = 0; k < nr * nz; k++) fixed[k] = nodeOwner[k] === FREE_NODE ? 0 : 1;
  const aspect = hr_m / hz_m;
  if (aspect > 2 || aspect < 0.5) {
    notes.push({
      path: 'mesh',
      message: `radial/axial spacing ratio ${aspect.toPrecision(3)} is outside ½…2: the point smoother weakens and multigrid needs more cycles`,
    });
  }
  return {
    ok: true,
    mesh: {
      nr,
      nz,
      hr_m,
      hz_m,
      rMax_m: spec.rMax_m,
      zMin_m: spec.zMin_m,
      zMax_m: spec.zMax_m,
      nodeOwner,
      fixed,
      cellOwner,
      electrodeNode,
      layout,
    },
    notes,
  };
}

/**
 * Write the prescribed potentials into `phi`: each electrode node gets its electrode's potential,
 * the enclosure gets 0 V. Free nodes are left as they are (they are the initial guess).
 */
export function applyDirichletValues(mesh: FieldMesh, electrodePotentials_V: ArrayLike<number>, phi: Float64Array): void {
  const owner = mesh.nodeOwner;
  for (let k = 0; k < owner.length; k++) {
    const e = owner[k];
    if (e >= 0) phi[k] = electrodePotentials_V[e];
    else if (e === GROUND_NODE) phi[k] = 0;
  }
}

/** Specs → layout → mesh in one step, with every problem reported (never throws for user input). */
export function meshFromSpecs(spec: MeshSpec, electrodes: readonly ElectrodeSpec[]): RasterResult {
  const meshIssues = validateMeshSpec(spec);
  const layout = buildLayout(electrodes, spec);
  if (meshIssues.length > 0 || !layout.ok) {
    // Both checks look at the mesh extent; report each problem once.
    const seen = new Set<string>();
    const issues = [...meshIssues, ...(layout.ok ? [] : layout.issues)].filter((i) => !seen.has(i.path + i.message) && seen.add(i.path + i.message));
    return { ok: false, issues };
  }
  return rasterize(spec, layout.layout);
}
