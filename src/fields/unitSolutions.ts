/**
 * Superposition of unit fields. The Laplace problem is linear in the prescribed potentials, and
 * every electrode potential is linear in the drive voltages, so
 *   φ(r, z, t) = Σ_k V_k(t) φ_k(r, z),
 * where φ_k is solved once with drive k at 1 V and every other drive at 0 V (enclosure at 0 V).
 * Changing a voltage, or driving it in time, then needs no new solve.
 */
import { defaultDriveVoltages, electrodePotentials } from './electrodes';
import { MultigridSolver, SorSolver } from './laplace';
import type { SolveOptions, SolveReport } from './laplace';
import type { FieldMesh } from './mesh';
import { splineCoefficients } from './interpolate';
import { applyDirichletValues } from './rasterize';

export interface FieldSolveOptions extends SolveOptions {
  /** Multigrid (default) or the SOR baseline. */
  readonly solver?: 'multigrid' | 'sor';
}

export interface UnitFieldSet {
  readonly mesh: FieldMesh;
  /** Per drive (in layout.drives order): the potential with that drive at 1 V and all others at 0 V. */
  readonly unitPotentials: readonly Float64Array[];
  /** Their spline coefficients (interpolate.ts), for sampling superpositions. */
  readonly unitCoefficients: readonly Float64Array[];
  readonly reports: readonly SolveReport[];
}

/** A drive voltage as a function of time, supplied by the caller (pulses, ramps, RF…). */
export type DriveWaveform = (time_s: number) => number;

function makeSolver(mesh: FieldMesh, options: FieldSolveOptions): MultigridSolver | SorSolver {
  return options.solver === 'sor' ? new SorSolver(mesh) : new MultigridSolver(mesh);
}

/** Solve one unit field per drive. The solver (and its coarse grids) is built once and reused. */
export function solveUnitFields(mesh: FieldMesh, options: FieldSolveOptions = {}): UnitFieldSet {
  const { drives, electrodes } = mesh.layout;
  const solver = makeSolver(mesh, options);
  const unitDrive = new Float64Array(drives.length);
  const potentials = new Float64Array(electrodes.length);
  const unitPotentials: Float64Array[] = [];
  const reports: SolveReport[] = [];
  for (let d = 0; d < drives.length; d++) {
    unitDrive.fill(0);
    unitDrive[d] = 1;
    electrodePotentials(mesh.layout, unitDrive, potentials);
    const phi = new Float64Array(mesh.nr * mesh.nz);
    applyDirichletValues(mesh, potentials, phi);
    reports.push(solver.solve(phi, options));
    unitPotentials.push(phi);
  }
  return { mesh, unitPotentials, unitCoefficients: unitPotentials.map((phi) => splineCoefficients(mesh, phi)), reports };
}

/** One direct solve with the given electrode potentials (default: those set in the layout). */
export function solvePotential(
  mesh: FieldMesh,
  electrodePotentials_V?: ArrayLike<number>,
  options: FieldSolveOptions = {},
): { potential_V: Float64Array; report: SolveReport } {
  const potentials = electrodePotentials_V ?? electrodePotentials(mesh.layout, defaultDriveVoltages(mesh.layout), new Float64Array(mesh.layout.electrodes.length));
  const phi = new Float64Array(mesh.nr * mesh.nz);
  applyDirichletValues(mesh, potentials, phi);
  const report = makeSolver(mesh, options).solve(phi, options);
  return { potential_V: phi, report };
}

/** φ = Σ V_k φ_k into `out` (one node array). */
export function superpose(set: UnitFieldSet, driveVoltages_V: ArrayLike<number>, out: Float64Array): Float64Array {
  out.fill(0);
  const basis = set.unitPotentials;
  for (let d = 0; d < basis.length; d++) {
    const v = driveVoltages_V[d];
    if (v === 0) continue;
    const phi = basis[d];
    for (let k = 0; k < out.length; k++) out[k] += v * phi[k];
  }
  return out;
}

/** Evaluate each drive's waveform at `time_s` into `out` (allocation-free; for time-dependent sampling). */
export function driveVoltagesAt(waveforms: readonly DriveWaveform[], time_s: number, out: Float64Array): Float64Array {
  for (let d = 0; d < waveforms.length; d++) out[d] = waveforms[d](time_s);
  return out;
}
