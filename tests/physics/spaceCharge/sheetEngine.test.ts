/**
 * The charged-sheet space-charge engine, checked against closed-form electrostatics (Gauss's law
 * for an infinite charged plane: E = σ/(2ε0) on either side, e.g. Griffiths, Introduction to
 * Electrodynamics, 4th ed., Example 2.5), energy conservation, and the exact engine.
 */
import { describe, expect, it } from 'vitest';
import { allocateEnsemble, allocateTraceResult } from '../../../src/ions/ensemble';
import { SeededRandom } from '../../../src/ions/random';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../../src/physics/constants';
import { traceExact } from '../../../src/physics/exactEngine';
import { Fate } from '../../../src/physics/fates';
import { moduloShots, partitionShots } from '../../../src/analysis/acquisition/shots';
import { SheetEngine, VACUUM_PERMITTIVITY_F_PER_M as EPS0 } from '../../../src/physics/spaceCharge/sheetEngine';
import { traceWithSpaceCharge } from '../../../src/physics/spaceCharge/traceShots';
import { buildModel } from '../../helpers';

const AREA = Math.PI * 1e-3 * 1e-3; // 1 mm beam radius
const longDrift = buildModel({ repeller_V: 20_000, gap1_m: 2e-3, drift_m: 100 });

describe('two equal sheets in free space (field-free drift)', () => {
  it('separate with uniform repulsive acceleration σq/(2ε0m) each, energy conserved to 1e-12', () => {
    const mz = 1000;
    const m = mz * U_KG;
    const engine = new SheetEngine(longDrift, AREA);
    // Both at 1 m into the drift, 1 µm apart, moving together at 5e4 m/s.
    engine.load([0, 1], [mz, mz], [1, 1], [1, 1 + 1e-6], [5e4, 5e4], true);
    const e0 = engine.energyAt(0);
    const a = (E_C / AREA) * E_C / (2 * EPS0 * m); // σ·q/(2·ε0·m), σ = q/A
    for (const t of [1e-7, 1e-6, 1e-5]) {
      engine.run(null, t);
      const z0 = engine.positionAt(0, t) - 2e-3; // positions are global: the drift starts 2 mm from the repeller
      const z1 = engine.positionAt(1, t) - 2e-3;
      expect(z0).toBeCloseTo(1 + 5e4 * t - 0.5 * a * t * t, 12);
      expect(z1).toBeCloseTo(1 + 1e-6 + 5e4 * t + 0.5 * a * t * t, 12);
      expect(Math.abs(z1 - z0 - (1e-6 + a * t * t)) / (z1 - z0)).toBeLessThan(1e-9);
      expect(engine.velocityAt(1, t) - engine.velocityAt(0, t)).toBeCloseTo(2 * a * t, 6);
      const kinetic = 0.5 * m * (engine.velocityAt(0, t) ** 2 + engine.velocityAt(1, t) ** 2);
      expect(Math.abs(engine.energyAt(t) - e0) / kinetic).toBeLessThan(1e-12);
    }
  });

  it('sheets that overtake each other pass through and swap rank: energy conserved to 1e-12 over many crossings', () => {
    const rng = new SeededRandom(3);
    const n = 60;
    const mz = Array.from({ length: n }, (_, k) => (k % 3 === 0 ? 500 : k % 3 === 1 ? 1000 : 2000));
    const z = Array.from({ length: n }, () => 1 + 1e-4 * rng.uniform());
    const v = Array.from({ length: n }, (_, k) => 4e4 + 2e3 * rng.normal() + 10 * k);
    const engine = new SheetEngine(longDrift, AREA);
    engine.load(Array.from({ length: n }, (_, k) => k), mz, mz.map(() => 1), z, v, true);
    const e0 = engine.energyAt(0);
    const t = 2e-6;
    engine.run(null, t);
    expect(engine.events).toBeGreaterThan(100); // crossings happened
    const e1 = engine.energyAt(t);
    expect(Math.abs(e1 - e0) / Math.abs(e0)).toBeLessThan(1e-12);
  });
});

describe('reduction to the exact engine', () => {
  const model = buildModel({
    repeller_V: 20_000,
    grid_V: 18_500,
    gap1_m: 3e-3,
    gap2_m: 12e-3,
    drift_m: 1.2,
    delay_s: 250e-9,
    repellerHold_V: 18_500,
    mirror: { stages: [{ length_m: 0.03, exitPotential_V: 14_000 }, { length_m: 0.12, exitPotential_V: 21_500 }], returnLength_m: 1 },
    post: { gap_m: 5e-3, potential_V: -5_000 },
  });
  const ens = allocateEnsemble(
    [
      { label: 'a', mz: 900, charge: 1, abundance: 1 },
      { label: 'b', mz: 2400, charge: 2, abundance: 1 },
    ],
    [300, 300],
  );
  const rng = new SeededRandom(11);
  for (let i = 0; i < ens.count; i++) {
    // Every tenth ion starts 10 nm from the repeller, so some strike it during the delay.
    ens.z0_m[i] = i % 10 === 0 ? 1e-8 : 1e-3 + 0.5e-3 * rng.uniform();
    ens.vz0_m_per_s[i] = 400 * rng.normal(); // some move back and strike the repeller during the delay
  }
  const exact = allocateTraceResult(ens.count);
  traceExact(model, ens, exact);

  it('one ion per shot gives the exact engine numbers bit for bit', () => {
    const sheets = allocateTraceResult(ens.count);
    traceWithSpaceCharge(model, ens, moduloShots(ens.count, ens.count), AREA, sheets);
    let detected = 0;
    for (let i = 0; i < ens.count; i++) {
      expect(sheets.fate[i]).toBe(exact.fate[i]);
      if (exact.fate[i] !== Fate.DETECTED) continue;
      detected++;
      expect(sheets.flightTime_s[i]).toBe(exact.flightTime_s[i]);
      expect(sheets.finalSpeed_m_per_s[i]).toBe(exact.finalSpeed_m_per_s[i]);
      expect(sheets.weight[i]).toBe(exact.weight[i]);
    }
    expect(detected).toBeGreaterThan(500);
    expect(detected).toBeLessThan(ens.count); // repeller strikes are part of the check
  });

  it('many ions per shot over a huge beam cross-section (negligible charge density) agree with the exact engine to 1e-12', () => {
    const sheets = allocateTraceResult(ens.count);
    traceWithSpaceCharge(model, ens, partitionShots(ens, 100, 'poisson', 5), 1e6, sheets);
    for (let i = 0; i < ens.count; i++) {
      expect(sheets.fate[i]).toBe(exact.fate[i]);
      if (exact.fate[i] === Fate.DETECTED) expect(Math.abs(sheets.flightTime_s[i] - exact.flightTime_s[i]) / exact.flightTime_s[i]).toBeLessThan(1e-12);
    }
  });

  it('a dense shot in a linear analyser spreads the packet in time', () => {
    const linear = buildModel({ repeller_V: 20_000, gap1_m: 5e-3, drift_m: 1 });
    const one = allocateEnsemble([{ label: 'a', mz: 1000, charge: 1, abundance: 1 }], [400]);
    const r = new SeededRandom(2);
    for (let i = 0; i < one.count; i++) {
      one.z0_m[i] = 2.5e-3;
      one.vz0_m_per_s[i] = 300 * r.normal();
    }
    const alone = allocateTraceResult(one.count);
    traceExact(linear, one, alone);
    const dense = allocateTraceResult(one.count);
    traceWithSpaceCharge(linear, one, moduloShots(one.count, 1), Math.PI * 0.3e-3 * 0.3e-3, dense);
    const sd = (out: typeof dense): number => {
      let s1 = 0;
      let s2 = 0;
      for (let i = 0; i < one.count; i++) [s1, s2] = [s1 + out.flightTime_s[i], s2 + out.flightTime_s[i] ** 2];
      return Math.sqrt(s2 / one.count - (s1 / one.count) ** 2);
    };
    for (let i = 0; i < one.count; i++) expect(dense.fate[i]).toBe(Fate.DETECTED);
    expect(sd(dense)).toBeGreaterThan(2 * sd(alone));
  });
});
