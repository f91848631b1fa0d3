import { describe, expect, it } from 'vitest';
import type { ElectrodeSpec } from '../../src/fields/electrodes';
import { createFieldMap, SAMPLE_FREE, SAMPLE_OUTSIDE_MESH, createFieldSample, electrodeAt, fieldToCartesian, sampleField } from '../../src/fields/interpolate';
import type { FieldMesh, MeshSpec } from '../../src/fields/mesh';
import { meshFromSpecs } from '../../src/fields/rasterize';

function meshOf(spec: MeshSpec, electrodes: ElectrodeSpec[] = []): FieldMesh {
  const raster = meshFromSpecs(spec, electrodes);
  if (!raster.ok) throw new Error(JSON.stringify(raster.issues));
  return raster.mesh;
}

function tabulate(mesh: FieldMesh, f: (r: number, z: number) => number): Float64Array {
  const phi = new Float64Array(mesh.nr * mesh.nz);
  for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nr; i++) phi[j * mesh.nr + i] = f(i * mesh.hr_m, mesh.zMin_m + j * mesh.hz_m);
  return phi;
}

/** Deterministic points filling [0, rMax] × [zMin, zMax] (Weyl sequence), plus the corners and edges. */
function testPoints(spec: MeshSpec, count: number): [number, number][] {
  const pts: [number, number][] = [];
  for (let k = 1; k <= count; k++) {
    pts.push([spec.rMax_m * ((k * 0.7548776662466927) % 1), spec.zMin_m + (spec.zMax_m - spec.zMin_m) * ((k * 0.5698402909980532) % 1)]);
  }
  pts.push([0, spec.zMin_m], [spec.rMax_m, spec.zMax_m], [0, spec.zMax_m], [spec.rMax_m, spec.zMin_m], [1e-9, spec.zMin_m + 1e-9]);
  return pts;
}

describe('bicubic spline (quasi-interpolation) field map', () => {
  const spec: MeshSpec = { nr: 17, nz: 25, rMax_m: 0.8, zMin_m: -0.3, zMax_m: 0.9 };

  it('is exact for biquadratic potentials even in r, field included, up to every edge', () => {
    // The cubic B-spline quasi-interpolant reproduces polynomials of degree ≤ 3 where the filter sees
    // true nodes (de Boor, A Practical Guide to Splines, from memory); the quadratic ghost rule keeps
    // degree ≤ 2 exact up to the edges, so span{1, r, r²} ⊗ {1, z, z²} is exact everywhere.
    const phi = (r: number, z: number) => 2 + 3 * z - 4 * z * z + 5 * r * r - 6 * r * r * z + 7 * r * r * z * z;
    const Er = (r: number, z: number) => -(10 * r - 12 * r * z + 14 * r * z * z);
    const Ez = (r: number, z: number) => -(3 - 8 * z - 6 * r * r + 14 * r * r * z);
    const mesh = meshOf(spec);
    const map = createFieldMap(mesh, tabulate(mesh, phi));
    const sample = createFieldSample();
    for (const [r, z] of testPoints(spec, 300)) {
      expect(sampleField(map, r, z, sample)).toBe(SAMPLE_FREE);
      expect(sample.potential_V).toBeCloseTo(phi(r, z), 11);
      expect(sample.fieldR_V_per_m).toBeCloseTo(Er(r, z), 9);
      expect(sample.fieldZ_V_per_m).toBeCloseTo(Ez(r, z), 9);
    }
  });

  it('is exact for cubics in z (even in r) at least two cells from the z ends and the outer radius', () => {
    // Cubic reproduction of the quasi-interpolant (same source as above): exact when every
    // coefficient in the 4×4 stencil comes from true nodes.
    const phi = (r: number, z: number) => 1 + z * z * z - 2 * z * z + (3 + 4 * z * z * z) * r * r;
    const Er = (r: number, z: number) => -2 * (3 + 4 * z * z * z) * r;
    const Ez = (r: number, z: number) => -(3 * z * z - 4 * z + 12 * z * z * r * r);
    const mesh = meshOf(spec);
    const map = createFieldMap(mesh, tabulate(mesh, phi));
    const sample = createFieldSample();
    let checked = 0;
    for (const [r, z] of testPoints(spec, 300)) {
      const i = Math.floor(r / mesh.hr_m);
      const j = Math.floor((z - mesh.zMin_m) / mesh.hz_m);
      if (i > mesh.nr - 4 || j < 2 || j > mesh.nz - 4) continue;
      checked++;
      expect(sampleField(map, r, z, sample)).toBe(SAMPLE_FREE);
      expect(sample.potential_V).toBeCloseTo(phi(r, z), 11);
      expect(sample.fieldR_V_per_m).toBeCloseTo(Er(r, z), 9);
      expect(sample.fieldZ_V_per_m).toBeCloseTo(Ez(r, z), 9);
    }
    expect(checked).toBeGreaterThan(150);
  });

  it('has a continuous field gradient across cell edges (C² potential), which the tracer’s step control needs', () => {
    // One-sided difference quotients of E_z across a node row agree to O(δ) for a C¹ field; a
    // cubic-convolution (C¹ potential) interpolant fails this with jumps of order |∂²E/∂z²|·h.
    const f = (r: number, z: number) => Math.cos(3 * r) * Math.exp(z) + Math.sin(2 * z);
    const mesh = meshOf(spec);
    const map = createFieldMap(mesh, tabulate(mesh, f));
    const sample = createFieldSample();
    const Ez = (r: number, z: number) => (sampleField(map, r, z, sample), sample.fieldZ_V_per_m);
    const Er = (r: number, z: number) => (sampleField(map, r, z, sample), sample.fieldR_V_per_m);
    const delta = 1e-7;
    let largestJump = 0;
    for (let j = 2; j < mesh.nz - 2; j++) {
      const z = mesh.zMin_m + j * mesh.hz_m;
      for (const r of [0.013, 0.21, 0.47]) {
        const right = (Ez(r, z + delta) - Ez(r, z)) / delta;
        const left = (Ez(r, z) - Ez(r, z - delta)) / delta;
        largestJump = Math.max(largestJump, Math.abs(right - left));
      }
    }
    for (let i = 2; i < mesh.nr - 2; i++) {
      const r = i * mesh.hr_m;
      for (const z of [-0.21, 0.33, 0.71]) {
        const right = (Er(r + delta, z) - Er(r, z)) / delta;
        const left = (Er(r, z) - Er(r - delta, z)) / delta;
        largestJump = Math.max(largestJump, Math.abs(right - left));
      }
    }
    // Second derivatives of the field are of order 10–30 here; O(δ) differences are ~1e-5.
    expect(largestJump).toBeLessThan(1e-3);
  });

  it('is symmetric about the axis: E_r(0, z) = 0 exactly, mirror points agree', () => {
    // Rotational symmetry: φ is even in r, so ∂φ/∂r vanishes on the axis (common practice, no source).
    const mesh = meshOf(spec);
    const map = createFieldMap(mesh, tabulate(mesh, (r, z) => Math.cos(3 * r) * Math.exp(z) + Math.sin(2 * z)));
    const a = createFieldSample();
    const b = createFieldSample();
    for (const z of [-0.3, -0.11, 0.2, 0.45, 0.9]) {
      sampleField(map, 0, z, a);
      expect(a.fieldR_V_per_m).toBe(0);
      for (const r of [1e-6, 0.013, 0.2]) {
        sampleField(map, r, z, a);
        sampleField(map, -r, z, b);
        expect(b.potential_V).toBe(a.potential_V);
        expect(b.fieldR_V_per_m).toBe(-a.fieldR_V_per_m);
        expect(b.fieldZ_V_per_m).toBe(a.fieldZ_V_per_m);
      }
      // Near the axis E_r grows linearly from zero: E_r(r)/r tends to the exact −∂²φ/∂r² = 9 cos(0)e^z.
      sampleField(map, 1e-6, z, a);
      expect(a.fieldR_V_per_m / 1e-6).toBeCloseTo(9 * Math.exp(z), 0);
    }
  });

  it('converges at second order (or better) in the field under refinement', () => {
    // Taylor analysis of cubic convolution: O(h³) for values, O(h²) for derivatives (Keys 1981, from memory).
    const f = (r: number, z: number) => Math.cos(3 * r) * Math.exp(z) + Math.sin(2 * z);
    const Er = (r: number, z: number) => 3 * Math.sin(3 * r) * Math.exp(z);
    const Ez = (r: number, z: number) => -(Math.cos(3 * r) * Math.exp(z) + 2 * Math.cos(2 * z));
    const errors = [9, 17, 33].map((nr) => {
      const s: MeshSpec = { ...spec, nr, nz: (nr - 1) * 1.5 + 1 };
      const mesh = meshOf(s);
      const map = createFieldMap(mesh, tabulate(mesh, f));
      const sample = createFieldSample();
      let ePhi = 0;
      let eField = 0;
      for (const [r, z] of testPoints(s, 200)) {
        sampleField(map, r, z, sample);
        ePhi = Math.max(ePhi, Math.abs(sample.potential_V - f(r, z)));
        eField = Math.max(eField, Math.abs(sample.fieldR_V_per_m - Er(r, z)), Math.abs(sample.fieldZ_V_per_m - Ez(r, z)));
      }
      return { ePhi, eField };
    });
    for (let k = 1; k < errors.length; k++) {
      expect(errors[k - 1].eField / errors[k].eField).toBeGreaterThan(3.5);
      expect(errors[k - 1].ePhi / errors[k].ePhi).toBeGreaterThan(3.5);
    }
  });

  // Status reporting for the tracer's fates (common practice, no source).
  it('reports queries outside the mesh instead of extrapolating', () => {
    const mesh = meshOf(spec);
    const map = createFieldMap(mesh, tabulate(mesh, () => 7));
    const sample = createFieldSample();
    for (const [r, z] of [
      [0.81, 0],
      [0.1, -0.31],
      [0.1, 0.91],
      [NaN, 0],
      [0, NaN],
      [Infinity, 0],
    ]) {
      sample.potential_V = 99;
      expect(sampleField(map, r, z, sample)).toBe(SAMPLE_OUTSIDE_MESH);
      expect([sample.potential_V, sample.fieldR_V_per_m, sample.fieldZ_V_per_m]).toEqual([0, 0, 0]);
    }
  });

  it('reports queries inside a solid electrode with its index and potential; grids are transparent', () => {
    const s: MeshSpec = { nr: 33, nz: 33, rMax_m: 0.02, zMin_m: 0, zMax_m: 0.02 };
    const mesh = meshOf(s, [
      { kind: 'gridPlane', name: 'grid', potential_V: 50, z_m: 0.005 },
      { kind: 'plate', name: 'plate', potential_V: 300, z_m: 0.01, thickness_m: 0.0013, apertureRadius_m: 0.004, outerRadius_m: 0.015 },
    ]);
    const potential = tabulate(mesh, () => 0);
    for (let k = 0; k < potential.length; k++) if (mesh.nodeOwner[k] === 1) potential[k] = 300;
    const map = createFieldMap(mesh, potential);
    const sample = createFieldSample();
    expect(sampleField(map, 0.008, 0.0105, sample)).toBe(1);
    expect(sample.potential_V).toBe(300);
    expect([sample.fieldR_V_per_m, sample.fieldZ_V_per_m]).toEqual([0, 0]);
    expect(sampleField(map, 0.004, 0.01, sample)).toBe(1); // on the aperture corner: surface counts
    expect(sampleField(map, 0.015, 0.0113, sample)).toBe(1);
    expect(sampleField(map, 0.0039, 0.0105, sample)).toBe(SAMPLE_FREE); // in the aperture
    expect(sampleField(map, 0.008, 0.0114, sample)).toBe(SAMPLE_FREE); // just past the back face, same cell
    expect(sampleField(map, 0.0151, 0.0105, sample)).toBe(SAMPLE_FREE);
    expect(sampleField(map, 0.01, 0.005, sample)).toBe(SAMPLE_FREE); // on the grid plane
    expect(electrodeAt(mesh, 0.01, 0.0101)).toBe(1);
    expect(electrodeAt(mesh, 0.01, 0.005)).toBe(-1);
  });

  it('converts to Cartesian components', () => {
    const out = new Float64Array(3);
    fieldToCartesian({ potential_V: 1, fieldR_V_per_m: 10, fieldZ_V_per_m: -2 }, 3, 4, out);
    expect(Array.from(out)).toEqual([6, 8, -2]);
    fieldToCartesian({ potential_V: 1, fieldR_V_per_m: 10, fieldZ_V_per_m: -2 }, 0, 0, out);
    expect(Array.from(out)).toEqual([0, 0, -2]);
  });
});

describe('field map construction', () => {
  it('refuses a potential that does not match the mesh, naming both sizes', () => {
    const mesh = meshOf({ nr: 5, nz: 5, rMax_m: 0.1, zMin_m: 0, zMax_m: 0.1 });
    expect(() => createFieldMap(mesh, new Float64Array(7))).toThrow(/7 values, the mesh 25 nodes/);
  });
});
