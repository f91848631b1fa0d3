/**
 * Uniform (r, z) node mesh of the axisymmetric field solver.
 *
 * Node (i, j) sits at r = i·hr, z = zMin + j·hz, for i = 0…nr−1, j = 0…nz−1, stored at
 * index j·nr + i (r runs fastest). Row i = 0 is the symmetry axis. The domain is a closed
 * grounded can: the nodes at r = rMax and at both z ends are held at 0 V unless an electrode
 * owns them. Interior electrode nodes are Dirichlet nodes holding that electrode's potential.
 */
import type { DomainBounds, ElectrodeLayout, FieldIssue } from './electrodes';

/** nodeOwner value of a node where the potential is solved for. */
export const FREE_NODE = -1;
/** nodeOwner value of a node on the grounded enclosure. */
export const GROUND_NODE = -2;

export interface MeshSpec extends DomainBounds {
  /** Node counts; 2^k + 1 lets multigrid coarsen all the way. */
  readonly nr: number;
  readonly nz: number;
}

/** Largest node count accepted in one direction; keeps memory and time bounded. */
export const MAX_NODES_PER_AXIS = 16_385;
/** Largest total node count accepted (about 70 MB per potential array). */
export const MAX_NODES = 9_000_000;

export interface FieldMesh {
  readonly nr: number;
  readonly nz: number;
  readonly hr_m: number;
  readonly hz_m: number;
  readonly rMax_m: number;
  readonly zMin_m: number;
  readonly zMax_m: number;
  /** Per node: FREE_NODE, GROUND_NODE, or the electrode index that holds it. */
  readonly nodeOwner: Int16Array;
  /** Per node: 1 where the potential is prescribed (electrode or enclosure), else 0. */
  readonly fixed: Uint8Array;
  /**
   * Per cell (i, j) at index j·(nr−1) + i: −1 when no solid electrode touches the cell, the
   * electrode index when exactly one does, −2 when several do. Lets a field query decide
   * "inside metal?" with at most one rectangle test in the usual case.
   */
  readonly cellOwner: Int16Array;
  /** One node held by each electrode (its potential is read there). */
  readonly electrodeNode: Int32Array;
  readonly layout: ElectrodeLayout;
}

/** Problems with a mesh spec; empty when it can be built. */
export function validateMeshSpec(spec: MeshSpec): FieldIssue[] {
  const issues: FieldIssue[] = [];
  for (const key of ['nr', 'nz'] as const) {
    const n = spec[key];
    if (!Number.isInteger(n) || n < 3 || n > MAX_NODES_PER_AXIS) {
      issues.push({ path: `mesh.${key}`, message: `node count must be an integer from 3 to ${MAX_NODES_PER_AXIS} (got ${String(n)})` });
    }
  }
  if (issues.length === 0 && spec.nr * spec.nz > MAX_NODES) {
    issues.push({ path: 'mesh', message: `mesh has ${spec.nr * spec.nz} nodes; at most ${MAX_NODES} are allowed` });
  }
  if (!(Number.isFinite(spec.rMax_m) && spec.rMax_m > 0)) {
    issues.push({ path: 'mesh.rMax_m', message: `mesh radius must be a finite number > 0 (got ${String(spec.rMax_m)})` });
  }
  if (!Number.isFinite(spec.zMin_m)) issues.push({ path: 'mesh.zMin_m', message: 'mesh z start must be a finite number' });
  if (!Number.isFinite(spec.zMax_m)) issues.push({ path: 'mesh.zMax_m', message: 'mesh z end must be a finite number' });
  else if (Number.isFinite(spec.zMin_m) && !(spec.zMax_m > spec.zMin_m)) {
    issues.push({ path: 'mesh.zMax_m', message: 'mesh z end must be greater than its z start' });
  }
  return issues;
}

/** True when (n − 1) is a power of two, so that multigrid can coarsen n down to 3 nodes. */
export function isMultigridFriendly(n: number): boolean {
  const cells = n - 1;
  return Number.isInteger(n) && cells >= 2 && (cells & (cells - 1)) === 0;
}

/** Smallest multigrid-friendly node count (2^k + 1) with spacing no larger than `spacing_m` over `length_m`. */
export function friendlyNodeCount(length_m: number, spacing_m: number): number {
  const cells = Math.max(2, Math.ceil(length_m / spacing_m - 1e-9));
  return 2 ** Math.ceil(Math.log2(cells)) + 1;
}

export function meshSpacing(spec: MeshSpec): { hr_m: number; hz_m: number } {
  return { hr_m: spec.rMax_m / (spec.nr - 1), hz_m: (spec.zMax_m - spec.zMin_m) / (spec.nz - 1) };
}
