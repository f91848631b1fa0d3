import { describe, expect, it } from 'vitest';
import { defaultDriveVoltages, electrodePotentials } from '../../src/fields/electrodes';
import type { ElectrodeSpec } from '../../src/fields/electrodes';
import { createFieldMap, createFieldSample, sampleField } from '../../src/fields/interpolate';
import { MultigridSolver, SorSolver, estimateSorOmega, jacobiSpectralRadius, relativeResidual, spectralSorOmega } from '../../src/fields/laplace';
import type { DirichletGrid } from '../../src/fields/laplace';
import type { FieldMesh, MeshSpec } from '../../src/fields/mesh';
import { applyDirichletValues, meshFromSpecs } from '../../src/fields/rasterize';
import { solvePotential } from '../../src/fields/unitSolutions';
import { besselJ0, besselJ0Zeros, besselJ1 } from './bessel';

function meshOf(spec: MeshSpec, electrodes: ElectrodeSpec[]): FieldMesh {
  const raster = meshFromSpecs(spec, electrodes);
  if (!raster.ok) throw new Error(JSON.stringify(raster.issues));
  return raster.mesh;
}

/** Empty can [0, a] × [0, L] whose boundary nodes are all prescribed. */
function boxGrid(nr: number, nz: number, a: number, L: number): DirichletGrid {
  const fixed = new Uint8Array(nr * nz);
  for (let i = 0; i < nr; i++) {
    fixed[i] = 1;
    fixed[(nz - 1) * nr + i] = 1;
  }
  for (let j = 0; j < nz; j++) fixed[j * nr + nr - 1] = 1;
  return { nr, nz, hr_m: a / (nr - 1), hz_m: L / (nz - 1), fixed };
}

describe('Bessel helpers used as the reference', () => {
  it('reproduce tabulated J0, J1 and the zeros of J0', () => {
    // Abramowitz & Stegun table 9.5, zeros j_{0,s} (from memory).
    const zeros = besselJ0Zeros(3);
    expect(zeros[0]).toBeCloseTo(2.404825557695773, 12);
    expect(zeros[1]).toBeCloseTo(5.520078110286311, 12);
    expect(zeros[2]).toBeCloseTo(8.65372791291101, 12);
    // Abramowitz & Stegun table 9.1 (from memory): J0(1), J1(1).
    expect(besselJ0(1)).toBeCloseTo(0.7651976865579666, 13);
    expect(besselJ1(1)).toBeCloseTo(0.4400505857449335, 13);
    expect(Math.abs(besselJ0(zeros[1]))).toBeLessThan(1e-13);
  });
});

describe('closed grounded cylinder with one end cap at V0', () => {
  // Series solution by separation of variables (Jackson, Classical Electrodynamics, 3rd ed., §3.8):
  // φ(r, z) = Σ_n 2V0 J0(x_n r/a) sinh(x_n (L − z)/a) / (x_n J1(x_n) sinh(x_n L/a)), x_n zeros of J0.
  const a = 0.01;
  const L = 0.02;
  const V0 = 100;
  const zeros = besselJ0Zeros(60);
  function series(r: number, z: number): { phi: number; Ez: number; Er: number } {
    let phi = 0;
    let Ez = 0;
    let Er = 0;
    for (const x of zeros) {
      const c = (2 * V0) / (x * besselJ1(x) * Math.sinh((x * L) / a));
      phi += c * besselJ0((x * r) / a) * Math.sinh((x * (L - z)) / a);
      Ez += c * besselJ0((x * r) / a) * (x / a) * Math.cosh((x * (L - z)) / a);
      Er += c * besselJ1((x * r) / a) * (x / a) * Math.sinh((x * (L - z)) / a); // −∂r J0(kr) = k J1(kr)
    }
    return { phi, Ez, Er };
  }
  const capMesh = (nr: number) => meshOf({ nr, nz: 2 * nr - 1, rMax_m: a, zMin_m: 0, zMax_m: L }, [{ kind: 'gridPlane', name: 'cap', potential_V: V0, z_m: 0 }]);
  const points: [number, number][] = [
    [0, L / 4],
    [a / 2, L / 4],
    [0, L / 2],
    [a / 4, L / 8],
    [0.75 * a, L / 2],
    [0.3 * a, 0.37 * L],
  ];

  it('matches the series at interior points (potential and field)', () => {
    const mesh = capMesh(33);
    const { potential_V, report } = solvePotential(mesh, undefined, { relativeTolerance: 1e-11 });
    expect(report.converged).toBe(true);
    const sample = createFieldSample();
    for (const [r, z] of points) {
      const exact = series(r, z);
      sampleField(createFieldMap(mesh, potential_V), r, z, sample);
      // h = a/32: the second-order error is ~1e-4 V0 here (measured 2e-4 V0 at worst).
      expect(Math.abs(sample.potential_V - exact.phi)).toBeLessThan(5e-4 * V0);
      expect(Math.abs(sample.fieldZ_V_per_m - exact.Ez)).toBeLessThan(5e-3 * Math.abs(exact.Ez));
      expect(Math.abs(sample.fieldR_V_per_m - exact.Er)).toBeLessThan(5e-3 * (V0 / a));
    }
  });

  it('converges at second order: error ratio within [3, 5] per halving of h', () => {
    const sample = createFieldSample();
    const errors = [17, 33, 65].map((nr) => {
      const mesh = capMesh(nr);
      const { potential_V } = solvePotential(mesh, undefined, { relativeTolerance: 1e-12 });
      let worst = 0;
      for (const [r, z] of points) {
        sampleField(createFieldMap(mesh, potential_V), r, z, sample);
        worst = Math.max(worst, Math.abs(sample.potential_V - series(r, z).phi));
      }
      return worst;
    });
    for (let k = 1; k < errors.length; k++) {
      const ratio = errors[k - 1] / errors[k];
      expect(ratio).toBeGreaterThan(3);
      expect(ratio).toBeLessThan(5);
    }
  });

  it('converges at second order for a single smooth mode prescribed on the whole boundary', () => {
    // One term of the same series, φ = J0(x1 r/a) sinh(x1 (L − z)/a) / sinh(x1 L/a): smooth up to the corners.
    const x1 = zeros[0];
    const mode = (r: number, z: number) => (besselJ0((x1 * r) / a) * Math.sinh((x1 * (L - z)) / a)) / Math.sinh((x1 * L) / a);
    const errors = [9, 17, 33, 65].map((nr) => {
      const nz = 2 * nr - 1;
      const grid = boxGrid(nr, nz, a, L);
      const phi = new Float64Array(nr * nz);
      for (let j = 0; j < nz; j++) for (let i = 0; i < nr; i++) if (grid.fixed[j * nr + i]) phi[j * nr + i] = mode(i * grid.hr_m, j * grid.hz_m);
      const report = new MultigridSolver(grid).solve(phi, { relativeTolerance: 1e-12 });
      expect(report.converged).toBe(true);
      let worst = 0;
      for (let j = 0; j < nz; j++) for (let i = 0; i < nr; i++) worst = Math.max(worst, Math.abs(phi[j * nr + i] - mode(i * grid.hr_m, j * grid.hz_m)));
      return worst;
    });
    for (let k = 1; k < errors.length; k++) {
      const ratio = errors[k - 1] / errors[k];
      expect(ratio).toBeGreaterThan(3);
      expect(ratio).toBeLessThan(5);
    }
  });
});

describe('axis treatment', () => {
  it('is exact for harmonic polynomials z² − r²/2 and z³ − (3/2) r² z', () => {
    // Both satisfy (1/r)∂r(r∂rφ) + ∂²zφ = 0 (direct differentiation; any vector-calculus text), and the
    // conservative stencil with the L'Hôpital axis row has no truncation error on them.
    const polys = [(r: number, z: number) => z * z - 0.5 * r * r, (r: number, z: number) => z * z * z - 1.5 * r * r * z];
    for (const poly of polys) {
      const grid = boxGrid(17, 33, 1, 2);
      const phi = new Float64Array(17 * 33);
      for (let j = 0; j < 33; j++) for (let i = 0; i < 17; i++) if (grid.fixed[j * 17 + i]) phi[j * 17 + i] = poly(i * grid.hr_m, j * grid.hz_m);
      new MultigridSolver(grid).solve(phi, { relativeTolerance: 1e-13 });
      for (let j = 0; j < 33; j++) for (let i = 0; i < 17; i++) expect(phi[j * 17 + i]).toBeCloseTo(poly(i * grid.hr_m, j * grid.hz_m), 9);
    }
  });
});

describe('parallel plates', () => {
  it('give a uniform field (V1 − V2)/d between large plates, also with hr ≠ hz', () => {
    // Elementary electrostatics (parallel-plate capacitor, any introductory text):
    // far from the edges E = ΔV/d, along the axis, with no radial component. Edge effects decay as
    // exp(−π x/d) with distance x from the rim (conformal map of the plate edge), here exp(−4π) ≈ 3e-6.
    const rMax = 0.05;
    const hz = 0.05 / 64;
    const spec: MeshSpec = { nr: 33, nz: 65, rMax_m: rMax, zMin_m: 0, zMax_m: 0.05 };
    const lower = 18 * hz;
    const upper = 33 * hz; // inner faces at 20·hz and 33·hz
    const mesh = meshOf(spec, [
      { kind: 'plate', name: 'A', potential_V: 500, z_m: lower, thickness_m: 2 * hz, apertureRadius_m: 0, outerRadius_m: 0.04 },
      { kind: 'plate', name: 'B', potential_V: -500, z_m: upper, thickness_m: 2 * hz, apertureRadius_m: 0, outerRadius_m: 0.04 },
    ]);
    const { potential_V } = solvePotential(mesh, undefined, { relativeTolerance: 1e-11 });
    const d = upper - (lower + 2 * hz);
    const expected = 1000 / d;
    const sample = createFieldSample();
    for (const r of [0, 0.002, 0.005, 0.0083]) {
      for (const z of [lower + 2 * hz + 0.3 * d, lower + 2 * hz + 0.5 * d, lower + 2 * hz + 0.71 * d]) {
        expect(sampleField(createFieldMap(mesh, potential_V), r, z, sample)).toBe(-1);
        expect(Math.abs(sample.fieldZ_V_per_m - expected)).toBeLessThan(1e-4 * expected);
        expect(Math.abs(sample.fieldR_V_per_m)).toBeLessThan(1e-4 * expected);
        expect(sample.potential_V).toBeCloseTo(500 - expected * (z - lower - 2 * hz), 2);
      }
    }
  });
});

describe('multigrid and SOR', () => {
  const mm = 1e-3;
  const spec: MeshSpec = { nr: 65, nz: 129, rMax_m: 20 * mm, zMin_m: 0, zMax_m: 40 * mm };
  const electrodes: ElectrodeSpec[] = [
    { kind: 'plate', name: 'entrance', potential_V: 0, z_m: 4 * mm, thickness_m: 0.5 * mm, apertureRadius_m: 5 * mm, outerRadius_m: 18 * mm },
    {
      kind: 'ringStack',
      name: 'stack',
      count: 6,
      firstZ_m: 8 * mm,
      pitch_m: 4 * mm,
      thickness_m: 0.6 * mm,
      innerRadius_m: 8 * mm,
      outerRadius_m: 14 * mm,
      resistorRatios: [2, 1, 1, 1, 1, 1, 1],
      startTiedTo: 'entrance',
      endTiedTo: 'back',
    },
    { kind: 'plate', name: 'back', potential_V: 1500, z_m: 35 * mm, thickness_m: 1 * mm, apertureRadius_m: 0, outerRadius_m: 18 * mm },
    { kind: 'gridPlane', name: 'grid', potential_V: -200, z_m: 2 * mm },
  ];

  it('agree to the residual tolerance on a ring-stack geometry', () => {
    const mesh = meshOf(spec, electrodes);
    const mg = solvePotential(mesh, undefined, { relativeTolerance: 1e-11 });
    const sor = solvePotential(mesh, undefined, { relativeTolerance: 1e-11, solver: 'sor' });
    expect(mg.report.method).toBe('multigrid');
    expect(mg.report.converged).toBe(true);
    expect(sor.report.method).toBe('sor');
    expect(sor.report.converged).toBe(true);
    expect(mg.report.iterations).toBeLessThan(20);
    let diff = 0;
    for (let k = 0; k < mg.potential_V.length; k++) diff = Math.max(diff, Math.abs(mg.potential_V[k] - sor.potential_V[k]));
    // Relative residual 1e-11 bounds the solution error at roughly 1e-11 × cond ≈ 1e-7 of the 1500 V scale.
    expect(diff).toBeLessThan(1e-6 * 1500);
    expect(relativeResidual(mesh, mg.potential_V)).toBeLessThanOrEqual(1e-11);
    expect(relativeResidual(mesh, sor.potential_V)).toBeLessThanOrEqual(1e-11);
  });

  it('multigrid reduces the residual by about an order of magnitude per V-cycle; the nested start saves cycles', () => {
    // Textbook two-grid/V-cycle rates for Poisson-type problems with red-black Gauss–Seidel are ~0.1 per
    // V(2,2) cycle (Trottenberg, Oosterlee & Schüller, Multigrid, Academic Press 2001; from memory).
    const mesh = meshOf(spec, electrodes);
    const start = () => {
      const phi = new Float64Array(mesh.nr * mesh.nz);
      applyDirichletValues(mesh, electrodePotentials(mesh.layout, defaultDriveVoltages(mesh.layout), new Float64Array(mesh.layout.electrodes.length)), phi);
      return phi;
    };
    const plainPhi = start();
    const plain = new MultigridSolver(mesh, { nestedStart: false }).solve(plainPhi, { relativeTolerance: 1e-10 });
    expect(plain.converged).toBe(true);
    expect(Math.pow(plain.relativeResidual, 1 / plain.iterations)).toBeLessThan(0.2);
    const nestedPhi = start();
    const nested = new MultigridSolver(mesh).solve(nestedPhi, { relativeTolerance: 1e-10 });
    expect(nested.converged).toBe(true);
    expect(nested.iterations).toBeLessThan(plain.iterations);
    let diff = 0;
    for (let k = 0; k < plainPhi.length; k++) diff = Math.max(diff, Math.abs(plainPhi[k] - nestedPhi[k]));
    expect(diff).toBeLessThan(1e-6 * 1500);
  });

  it('handles node counts that do not coarsen: direct, partial hierarchy, or SOR with a note', () => {
    const solveOn = (nr: number, nz: number) => {
      const mesh = meshOf({ nr, nz, rMax_m: 20 * mm, zMin_m: 0, zMax_m: 40 * mm }, electrodes);
      const mg = solvePotential(mesh, undefined, { relativeTolerance: 1e-10 });
      const sor = solvePotential(mesh, undefined, { relativeTolerance: 1e-10, solver: 'sor' });
      let diff = 0;
      for (let k = 0; k < mg.potential_V.length; k++) diff = Math.max(diff, Math.abs(mg.potential_V[k] - sor.potential_V[k]));
      return { report: mg.report, diff };
    };
    const direct = solveOn(40, 80); // 39 cells: no halving, small enough for banded LU
    expect(direct.report.method).toBe('direct');
    expect(direct.diff).toBeLessThan(1e-5 * 1500);
    const partial = solveOn(49, 97); // not 2^k + 1, yet 48 → 24 → 12 → 6 cells still halve
    expect(partial.report.method).toBe('multigrid');
    expect(partial.report.converged).toBe(true);
    expect(partial.diff).toBeLessThan(1e-5 * 1500);
    // 130 → 65 cells: one halving, then a 66 × 145 coarsest grid too large for LU, relaxed by SOR in each cycle.
    const relaxedMesh = meshOf({ nr: 131, nz: 289, rMax_m: 20 * mm, zMin_m: 0, zMax_m: 40 * mm }, electrodes);
    const relaxed = solvePotential(relaxedMesh, undefined, { relativeTolerance: 1e-10 });
    expect(relaxed.report.method).toBe('multigrid');
    expect(relaxed.report.note).toMatch(/relaxed by SOR/);
    expect(relaxed.report.converged).toBe(true);
    expect(relativeResidual(relaxedMesh, relaxed.potential_V)).toBeLessThanOrEqual(1e-10);
    // 119 cells: no halving, too large for LU: the whole solve is SOR, and the note says why.
    const fallbackMesh = meshOf({ nr: 120, nz: 240, rMax_m: 20 * mm, zMin_m: 0, zMax_m: 40 * mm }, electrodes);
    const fallback = solvePotential(fallbackMesh, undefined, { relativeTolerance: 1e-10 });
    expect(fallback.report.method).toBe('sor');
    expect(fallback.report.note).toMatch(/2\^k \+ 1/);
    expect(fallback.report.converged).toBe(true);
    expect(relativeResidual(fallbackMesh, fallback.potential_V)).toBeLessThanOrEqual(1e-10);
  });

  it('the spectral ω (actual mesh) needs fewer SOR sweeps than the empty-can ω', () => {
    // Electrodes lower ρ_J below the empty can's, so the can's ω over-relaxes (Varga, Matrix Iterative Analysis, from memory: the SOR
    // rate is ω − 1 above the optimum); Young's ω from the actual ρ_J must do at least as well.
    const mesh = meshOf(spec, electrodes);
    const start = () => {
      const phi = new Float64Array(mesh.nr * mesh.nz);
      applyDirichletValues(mesh, electrodePotentials(mesh.layout, defaultDriveVoltages(mesh.layout), new Float64Array(mesh.layout.electrodes.length)), phi);
      return phi;
    };
    const box = new SorSolver(mesh, estimateSorOmega(mesh)).solve(start(), { relativeTolerance: 1e-9 });
    const tuned = new SorSolver(mesh, spectralSorOmega(mesh)).solve(start(), { relativeTolerance: 1e-9 });
    expect(box.converged && tuned.converged).toBe(true);
    expect(tuned.iterations).toBeLessThanOrEqual(box.iterations);
  });

  it('returns the zero field at once when every prescribed value is zero', () => {
    const grid = boxGrid(17, 33, 1, 2);
    const phi = new Float64Array(17 * 33).fill(3);
    for (let k = 0; k < phi.length; k++) if (grid.fixed[k]) phi[k] = 0;
    const report = new MultigridSolver(grid).solve(phi);
    expect(report.converged).toBe(true);
    expect(Math.max(...phi.map(Math.abs))).toBe(0);
  });

  it('SOR factor estimate equals the known optimum 2/(1 + sin(πh)) for the 1D-like limit', () => {
    // Young's formula for the model problem (Varga, Matrix Iterative Analysis; from memory): with ρ_J = cos(π/N),
    // ω_opt = 2/(1 + sin(π/N)). With hr ≫ hz the radial couplings vanish and the can is a 1D chain of
    // N = 100 intervals in z, so the estimate must reduce to that formula.
    const omega = estimateSorOmega({ nr: 3, nz: 101, hr_m: 1e6, hz_m: 1 });
    expect(omega).toBeCloseTo(2 / (1 + Math.sin(Math.PI / 100)), 6);
    // The Lanczos estimate of the Jacobi radius must find the same ρ_J = cos(π/N) on that chain.
    const chain = boxGrid(3, 101, 2e6, 100);
    expect(jacobiSpectralRadius(chain).rho).toBeCloseTo(Math.cos(Math.PI / 100), 7);
    const sor = new SorSolver(boxGrid(9, 17, 1, 2));
    expect(sor.omega).toBeGreaterThan(1);
    expect(sor.omega).toBeLessThan(2);
  });
});
