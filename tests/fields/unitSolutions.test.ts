import { describe, expect, it } from 'vitest';
import { defaultDriveVoltages, electrodePotentials } from '../../src/fields/electrodes';
import type { ElectrodeSpec } from '../../src/fields/electrodes';
import { createFieldMap, SAMPLE_FREE, createFieldSample, sampleField, sampleSuperposed } from '../../src/fields/interpolate';
import type { FieldMesh, MeshSpec } from '../../src/fields/mesh';
import { meshFromSpecs } from '../../src/fields/rasterize';
import { driveVoltagesAt, solvePotential, solveUnitFields, superpose } from '../../src/fields/unitSolutions';
import type { DriveWaveform } from '../../src/fields/unitSolutions';

// Superposition: Laplace's equation is linear and the Dirichlet data are linear in the drive voltages,
// so φ[V] = Σ V_k φ[e_k] (uniqueness theorem, Jackson, Classical Electrodynamics, 3rd ed., §1.9, from memory).
const mm = 1e-3;
const spec: MeshSpec = { nr: 33, nz: 129, rMax_m: 15 * mm, zMin_m: 0, zMax_m: 60 * mm };
const electrodes: ElectrodeSpec[] = [
  { kind: 'plate', name: 'repeller', potential_V: 2000, z_m: 1 * mm, thickness_m: 1 * mm, apertureRadius_m: 0, outerRadius_m: 12 * mm },
  { kind: 'gridPlane', name: 'extraction', potential_V: 1700, z_m: 6 * mm },
  { kind: 'tube', name: 'drift', potential_V: 0, radius_m: 8 * mm, wallThickness_m: 1 * mm, zFrom_m: 10 * mm, zTo_m: 30 * mm },
  {
    kind: 'ringStack',
    name: 'mirror',
    count: 5,
    firstZ_m: 34 * mm,
    pitch_m: 4 * mm,
    thickness_m: 1 * mm,
    innerRadius_m: 7 * mm,
    outerRadius_m: 11 * mm,
    resistorRatios: [1, 1, 1, 2],
    startTiedTo: 'drift',
    endPotential_V: 2300,
  },
];

function meshOf(): FieldMesh {
  const raster = meshFromSpecs(spec, electrodes);
  if (!raster.ok) throw new Error(JSON.stringify(raster.issues));
  return raster.mesh;
}

const maxDiff = (a: Float64Array, b: Float64Array) => a.reduce((m, x, k) => Math.max(m, Math.abs(x - b[k])), 0);

describe('unit solutions', () => {
  const mesh = meshOf();
  const set = solveUnitFields(mesh, { relativeTolerance: 1e-11 });

  it('solves one unit field per drive, each converged', () => {
    expect(mesh.layout.drives.map((d) => d.name)).toEqual(['repeller', 'extraction', 'drift', 'mirror.end']);
    expect(set.unitPotentials.length).toBe(4);
    for (const report of set.reports) expect(report.converged).toBe(true);
  });

  it('superposed with the set voltages equals a direct solve with all potentials set', () => {
    const direct = solvePotential(mesh, undefined, { relativeTolerance: 1e-11 });
    const combined = superpose(set, defaultDriveVoltages(mesh.layout), new Float64Array(mesh.nr * mesh.nz));
    // Each solve has relative residual ≤ 1e-11; the solution error is far below 1e-6 of the 2300 V scale.
    expect(maxDiff(combined, direct.potential_V)).toBeLessThan(1e-6 * 2300);
    // Prescribed nodes are exact by construction.
    for (let k = 0; k < mesh.fixed.length; k++) if (mesh.fixed[k]) expect(combined[k]).toBeCloseTo(direct.potential_V[k], 9);
  });

  it('needs no new solve when voltages change', () => {
    const voltages = Float64Array.from([-500, 120, 35, 4000]);
    const potentials = electrodePotentials(mesh.layout, voltages, new Float64Array(mesh.layout.electrodes.length));
    const direct = solvePotential(mesh, potentials, { relativeTolerance: 1e-11 });
    const combined = superpose(set, voltages, new Float64Array(mesh.nr * mesh.nz));
    expect(maxDiff(combined, direct.potential_V)).toBeLessThan(1e-6 * 4000);
  });

  it('samples a time-dependent drive Σ V_k(t) φ_k like a static solve at that instant', () => {
    // Quasi-static approximation (fields follow the voltages instantly), common practice, no source.
    const pulse: DriveWaveform = (t) => (t < 100e-9 ? 2000 : 2000 + 600 * (1 - Math.exp(-(t - 100e-9) / 20e-9)));
    const waveforms: DriveWaveform[] = [pulse, () => 1700, () => 0, (t) => 2300 + 10 * Math.sin(2 * Math.PI * 1e6 * t)];
    const voltages = new Float64Array(4);
    const a = createFieldSample();
    const b = createFieldSample();
    for (const t of [0, 150e-9, 1e-6 / 3]) {
      driveVoltagesAt(waveforms, t, voltages);
      const potentials = electrodePotentials(mesh.layout, voltages, new Float64Array(mesh.layout.electrodes.length));
      const direct = createFieldMap(mesh, solvePotential(mesh, potentials, { relativeTolerance: 1e-11 }).potential_V);
      for (const [r, z] of [
        [0, 3.5 * mm],
        [2 * mm, 20 * mm],
        [5.5 * mm, 41.3 * mm],
      ]) {
        expect(sampleSuperposed(set, voltages, r, z, a)).toBe(SAMPLE_FREE);
        expect(sampleField(direct, r, z, b)).toBe(SAMPLE_FREE);
        expect(a.potential_V).toBeCloseTo(b.potential_V, 5);
        expect(Math.abs(a.fieldZ_V_per_m - b.fieldZ_V_per_m)).toBeLessThan(1e-6 * Math.max(1, Math.abs(b.fieldZ_V_per_m)));
        expect(Math.abs(a.fieldR_V_per_m - b.fieldR_V_per_m)).toBeLessThan(1e-6 * Math.max(1, Math.abs(b.fieldZ_V_per_m)));
      }
      // Inside the repeller the superposed sample reports the electrode and its instantaneous potential.
      expect(sampleSuperposed(set, voltages, 3 * mm, 1.5 * mm, a)).toBe(0);
      expect(a.potential_V).toBeCloseTo(voltages[0], 6);
    }
  });
});
