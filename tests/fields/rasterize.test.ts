import { describe, expect, it } from 'vitest';
import { buildLayout } from '../../src/fields/electrodes';
import type { ElectrodeSpec } from '../../src/fields/electrodes';
import { FREE_NODE, GROUND_NODE, friendlyNodeCount, isMultigridFriendly, validateMeshSpec } from '../../src/fields/mesh';
import type { MeshSpec } from '../../src/fields/mesh';
import { applyDirichletValues, meshFromSpecs, rasterize } from '../../src/fields/rasterize';

// Mesh bookkeeping checks (common practice, no source): the masks are what the solver's Dirichlet
// conditions are built from, so they are checked node by node against the geometry.
const mm = 1e-3;
const spec: MeshSpec = { nr: 17, nz: 33, rMax_m: 10 * mm, zMin_m: -5 * mm, zMax_m: 15 * mm }; // h = 0.625 mm

function raster(electrodes: ElectrodeSpec[], s: MeshSpec = spec) {
  const layout = buildLayout(electrodes, s);
  if (!layout.ok) throw new Error(JSON.stringify(layout.issues));
  return rasterize(s, layout.layout);
}

describe('rasterize', () => {
  it('grounds the enclosure and marks electrode nodes inside their rectangles', () => {
    const result = raster([{ kind: 'ring', name: 'ring', potential_V: 10, innerRadius_m: 2.5 * mm, outerRadius_m: 5 * mm, zFrom_m: 0, zTo_m: 1.25 * mm }]);
    if (!result.ok) throw new Error('raster failed');
    const { mesh } = result;
    const { nr, nz } = mesh;
    for (let j = 0; j < nz; j++) {
      for (let i = 0; i < nr; i++) {
        const owner = mesh.nodeOwner[j * nr + i];
        const r = i * mesh.hr_m;
        const z = mesh.zMin_m + j * mesh.hz_m;
        const inRing = r >= 2.5 * mm - 1e-12 && r <= 5 * mm + 1e-12 && z >= -1e-12 && z <= 1.25 * mm + 1e-12;
        const onEnclosure = i === nr - 1 || j === 0 || j === nz - 1;
        expect(owner).toBe(inRing ? 0 : onEnclosure ? GROUND_NODE : FREE_NODE);
        expect(mesh.fixed[j * nr + i]).toBe(owner === FREE_NODE ? 0 : 1);
      }
    }
    // 5 radial nodes (i = 4…8) × 3 rows (z = 0, 0.625, 1.25 mm).
    expect(mesh.nodeOwner.filter((o) => o === 0).length).toBe(15);
  });

  it('lets an electrode on the enclosure take those nodes over', () => {
    const result = raster([{ kind: 'gridPlane', name: 'cap', potential_V: 5, z_m: -5 * mm }]);
    if (!result.ok) throw new Error('raster failed');
    const { mesh } = result;
    for (let i = 0; i < mesh.nr; i++) expect(mesh.nodeOwner[i]).toBe(0);
    const phi = new Float64Array(mesh.nr * mesh.nz).fill(-1);
    applyDirichletValues(mesh, [5], phi);
    expect(phi[3]).toBe(5);
    expect(phi[mesh.nr * 5 + mesh.nr - 1]).toBe(0);
    expect(phi[mesh.nr * 5 + 3]).toBe(-1); // free nodes keep the initial guess
  });

  it('snaps electrodes thinner than the spacing to the nearest node row, with a note', () => {
    const result = raster([{ kind: 'plate', name: 'foil', potential_V: 1, z_m: 2.0 * mm, thickness_m: 0.2 * mm, apertureRadius_m: 1 * mm, outerRadius_m: 6 * mm }]);
    if (!result.ok) throw new Error('raster failed');
    expect(result.notes.length).toBe(1);
    expect(result.notes[0].message).toMatch(/held at the row z = /);
    // Nearest row to the plate centre z = 2.1 mm is j = round(7.1 / 0.625) = 11 (z = 1.875 mm).
    const row = Array.from(result.mesh.nodeOwner.slice(11 * 17, 12 * 17));
    expect(row.filter((o) => o === 0).length).toBe(8); // r = 1.25 … 5.625 mm
  });

  it('refuses two electrodes that land on the same node', () => {
    const result = raster([
      { kind: 'ring', name: 'a', potential_V: 1, innerRadius_m: 2 * mm, outerRadius_m: 5 * mm, zFrom_m: 0, zTo_m: 1.25 * mm },
      { kind: 'plate', name: 'b', potential_V: 2, z_m: 1.3 * mm, thickness_m: 0.05 * mm, apertureRadius_m: 1 * mm, outerRadius_m: 6 * mm },
    ]);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues[0].message).toMatch(/b and a claim the same mesh node/);
  });

  it('validates the mesh spec without throwing', () => {
    expect(validateMeshSpec(spec)).toEqual([]);
    const bad = validateMeshSpec({ nr: 2, nz: 3.5, rMax_m: 0, zMin_m: 1, zMax_m: 1 });
    expect(bad.map((i) => i.path).sort()).toEqual(['mesh.nr', 'mesh.nz', 'mesh.rMax_m', 'mesh.zMax_m']);
    const layout = buildLayout([], spec);
    if (!layout.ok) throw new Error('layout');
    const refused = rasterize({ ...spec, nr: NaN }, layout.layout);
    expect(refused.ok).toBe(false);
  });

  it('builds specs into a mesh in one step, reporting mesh and geometry problems together', () => {
    const ok = meshFromSpecs(spec, [{ kind: 'gridPlane', name: 'g', potential_V: 1, z_m: 0 }]);
    expect(ok.ok).toBe(true);
    const bad = meshFromSpecs({ ...spec, nr: 1 }, [{ kind: 'gridPlane', name: 'g', potential_V: 1, z_m: 99 }]);
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.issues.map((i) => i.path)).toEqual(['mesh.nr', 'electrodes[0]']);
    const stretched = meshFromSpecs({ ...spec, nr: 5 }, []);
    expect(stretched.ok && stretched.notes.some((n) => /spacing ratio 4\.00/.test(n.message))).toBe(true);
  });

  it('names multigrid-friendly node counts', () => {
    expect([3, 5, 9, 257, 1025].every(isMultigridFriendly)).toBe(true);
    expect([2, 4, 100, 1024].some(isMultigridFriendly)).toBe(false);
    expect(friendlyNodeCount(0.04, 0.04 / 256)).toBe(257);
    expect(friendlyNodeCount(0.04, 0.04 / 200)).toBe(257);
  });
});
