import { createFieldMap } from '../../src/fields/interpolate';
import { describe, expect, it } from 'vitest';
import type { ElectrodeSpec } from '../../src/fields/electrodes';
import type { FieldMesh, MeshSpec } from '../../src/fields/mesh';
import { meshFromSpecs } from '../../src/fields/rasterize';
import { SolvedExit, SolvedFieldTracer, createSolvedIonState, makeSolvedRegion, traceSolvedRegion, type SolvedRegion } from '../../src/physics/regions/solvedTracer';
import { createTraceCounters } from '../../src/physics/regions/contract';
import { solveUnitFields, superpose } from '../../src/fields/unitSolutions';
import { chargeToMass_C_per_kg } from '../../src/physics/constants';
import { createExactPlan, createIonState, mirrorExact } from '../../src/physics/exactEngine';
import { Fate } from '../../src/physics/fates';
import { Crossing, createMotion, crossForward } from '../../src/physics/uniformField';

const mm = 1e-3;

function solvedRegion(spec: MeshSpec, electrodes: ElectrodeSpec[], entryZ_m: number, farZ_m: number): SolvedRegion & { mesh: FieldMesh } {
  const raster = meshFromSpecs(spec, electrodes);
  if (!raster.ok) throw new Error(JSON.stringify(raster.issues));
  const set = solveUnitFields(raster.mesh, { relativeTolerance: 1e-12 });
  const voltages = raster.mesh.layout.drives.map((d) => d.potential_V);
  const potential_V = superpose(set, voltages, new Float64Array(raster.mesh.nr * raster.mesh.nz));
  return { ...makeSolvedRegion(createFieldMap(raster.mesh, potential_V), entryZ_m, farZ_m), mesh: raster.mesh };
}

/**
 * Parallel-plate limit. Between two plane electrodes much wider than their gap the field is
 * uniform, E = V/d (any electromagnetics text, e.g. Jackson, Classical Electrodynamics, 3rd ed.,
 * §1.13, from memory); the grounded wall at r = 8d disturbs it near the axis by ~exp(−π·8) ≈ 1e-11
 * (decay of the lowest Fourier mode between the plates). The discrete Laplacian and the bicubic spline
 * interpolant are exact for a potential linear in z, so the remaining error is the integrator's.
 * Reference: the exact engine's closed-form kernels (src/physics/uniformField.ts, exactEngine.ts).
 */
describe('solved uniform field between two large plates', () => {
  const gap = 10 * mm;
  const backPotential = 2000;
  // z = 0 row is the grounded can end (the entrance plane at 0 V); a full-width grid plane at z = d holds the back potential.
  const region = solvedRegion(
    { nr: 65, nz: 17, rMax_m: 8 * gap, zMin_m: 0, zMax_m: gap },
    [{ kind: 'gridPlane', name: 'back', potential_V: backPotential, z_m: gap }],
    0,
    gap,
  );
  const mz = 500;
  const k = chargeToMass_C_per_kg(mz); // positive ion

  it('reflects like the exact single-stage mirror (≤ 1e-6 relative flight time), transverse drift unchanged', () => {
    const plan = createExactPlan();
    plan.mirrorStageCount = 1;
    plan.mirrorLength_m[0] = gap;
    plan.mirrorAcceleration[0] = (k * (0 - backPotential)) / gap;
    plan.mirrorEntryTransmission[0] = 1;
    for (const energy_eV of [500, 1000, 1900]) {
      const v = Math.sqrt(2 * energy_eV * k);
      const exact = createIonState();
      exact.v = v;
      expect(mirrorExact(exact, plan)).toBe(true);
      const ion = createSolvedIonState();
      ion.vz = v;
      ion.x = 3 * mm;
      ion.vx = 150;
      ion.vy = -80;
      const exit = traceSolvedRegion(ion, region, k, 1);
      expect(exit).toBe(SolvedExit.ENTRY);
      expect(Math.abs(ion.t - exact.t) / exact.t).toBeLessThan(1e-6);
      expect(Math.abs(ion.vz + v) / v).toBeLessThan(1e-6); // static field: speed back equals speed in
      // E_r = 0 in a uniform axial field: the transverse motion is a straight drift.
      expect(Math.abs(ion.x - (3 * mm + 150 * ion.t))).toBeLessThan(1e-9);
      expect(Math.abs(ion.y - -80 * ion.t)).toBeLessThan(1e-9);
    }
  });

  it('accelerates through the gap like the closed-form crossing (≤ 1e-6 relative)', () => {
    const motion = createMotion();
    const negative = -k; // a negative ion is pulled towards the positive plate
    for (const v of [0, 2000, 20_000]) {
      const a = (negative * (0 - backPotential)) / gap;
      expect(crossForward(motion, v, a, gap, 0)).toBe(Crossing.FORWARD);
      const ion = createSolvedIonState();
      ion.vz = v;
      const exit = traceSolvedRegion(ion, region, negative, 1);
      expect(exit).toBe(SolvedExit.FAR);
      expect(Math.abs(ion.t - motion.dt) / motion.dt).toBeLessThan(1e-6);
      expect(Math.abs(ion.vz - motion.v) / motion.v).toBeLessThan(1e-6);
    }
  });

  it('reports the time limit and never leaves NaN', () => {
    const ion = createSolvedIonState();
    ion.vz = 100; // from near rest the 10 mm gap takes ~0.7 µs (a ≈ 3.9e10 m/s²)
    expect(traceSolvedRegion(ion, region, -k, 1e-7)).toBe(SolvedExit.TIME_LIMIT);
    expect(Number.isFinite(ion.z) && Number.isFinite(ion.vz)).toBe(true);
    expect(ion.t).toBeCloseTo(1e-7, 15);
  });
});

/** Strikes: an ion entering metal or the grounded wall has struck an electrode (Fate.STRUCK_ELECTRODE in the engine). */
describe('electrode strikes', () => {
  // A field-free tube (a ring at 0 V inside the grounded can) between an entry and a far plane.
  const region = solvedRegion(
    { nr: 33, nz: 65, rMax_m: 16 * mm, zMin_m: 0, zMax_m: 64 * mm },
    [
      { kind: 'ring', name: 'ring', potential_V: 0, innerRadius_m: 5 * mm, outerRadius_m: 8 * mm, zFrom_m: 20 * mm, zTo_m: 30 * mm },
      { kind: 'plate', name: 'stop', potential_V: 0, z_m: 50 * mm, thickness_m: 2 * mm, apertureRadius_m: 2 * mm, outerRadius_m: 12 * mm },
    ],
    0,
    64 * mm,
  );
  const k = chargeToMass_C_per_kg(100);

  it('an ion aimed at the ring strikes it where the straight line meets the ring face', () => {
    const ion = createSolvedIonState();
    ion.vz = 10_000;
    ion.vx = 2500; // r = z/4: meets r = 5 mm at z = 20 mm, the ring's front face
    expect(traceSolvedRegion(ion, region, k, 1)).toBe(SolvedExit.STRUCK);
    // Field-free: the strike point lies on the straight line, inside the ring's rectangle within the root tolerance.
    expect(ion.z).toBeGreaterThan(20 * mm - 1e-6);
    expect(ion.z).toBeLessThan(20.2 * mm);
    expect(Math.hypot(ion.x, ion.y)).toBeGreaterThan(5 * mm - 1e-6);
  });

  it('an off-axis ion strikes the aperture plate; an axial one passes the aperture; a steep one hits the wall', () => {
    const offAxis = createSolvedIonState();
    offAxis.y = 3 * mm;
    offAxis.vz = 10_000;
    expect(traceSolvedRegion(offAxis, region, k, 1)).toBe(SolvedExit.STRUCK);
    expect(offAxis.z).toBeCloseTo(50 * mm, 5);

    const axial = createSolvedIonState();
    axial.vz = 10_000;
    expect(traceSolvedRegion(axial, region, k, 1)).toBe(SolvedExit.FAR);

    const steep = createSolvedIonState();
    steep.vz = 1000;
    steep.vx = 3000; // leaves r = 16 mm at z ≈ 5.3 mm, before the ring
    expect(traceSolvedRegion(steep, region, k, 1)).toBe(SolvedExit.STRUCK);
    expect(Math.hypot(steep.x, steep.y)).toBeGreaterThan(16 * mm - 1e-6);
    expect(Fate.STRUCK_ELECTRODE).toBe(7);
  });
});

describe('step length outside the corridor', () => {
  // One grounded plate with a 2 mm aperture at z = 50…52 mm in a field-free can of 16 mm radius:
  // the corridor is 2 mm wide, the thinnest electrode 2 mm.
  const region = solvedRegion(
    { nr: 33, nz: 65, rMax_m: 16 * mm, zMin_m: 0, zMax_m: 64 * mm },
    [{ kind: 'plate', name: 'stop', potential_V: 0, z_m: 50 * mm, thickness_m: 2 * mm, apertureRadius_m: 2 * mm, outerRadius_m: 12 * mm }],
    0,
    64 * mm,
  );
  const k = chargeToMass_C_per_kg(100);

  it('flies as far as the clearance to metal allows and still stops on the plate face (a straight line in a field-free can)', () => {
    const counters = createTraceCounters();
    const tracer = new SolvedFieldTracer(counters);
    const ion = createSolvedIonState();
    ion.x = 4 * mm; // outside the corridor from the start: every step is checked against the plate and the wall
    ion.vz = 10_000;
    expect(tracer.trace(ion, region, k, 1)).toBe(SolvedExit.STRUCK);
    expect(ion.z).toBeCloseTo(50 * mm, 7);
    expect(ion.x).toBeCloseTo(4 * mm, 9);
    expect(ion.struckElectrode).toBe(0);
    // Capped at the thinnest electrode (2 mm) the 50 mm path took at least 25 steps; the clearance
    // here (12 mm to the wall, then the distance to the plate) allows far longer ones.
    expect(counters.solvedSteps).toBeLessThan(15);
  });

  it('never steps over metal when the clearance shrinks: an ion aimed between the plate and the wall strikes the plate', () => {
    const ion = createSolvedIonState();
    ion.x = 11.5 * mm; // 0.5 mm inside the plate's outer edge, 4.5 mm from the wall
    ion.vz = 10_000;
    expect(traceSolvedRegion(ion, region, k, 1)).toBe(SolvedExit.STRUCK);
    expect(ion.z).toBeCloseTo(50 * mm, 7);
  });
});
