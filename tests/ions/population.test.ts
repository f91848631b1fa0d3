import { describe, expect, it } from 'vitest';
import { allocateCounts, samplePopulation, type PopulationSpec } from '../../src/ions/population';
import { SeededRandom } from '../../src/ions/random';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../src/physics/constants';

const species = [
  { label: 'a', mz: 1000, charge: 1, abundance: 2 },
  { label: 'b', mz: 1500, charge: 2, abundance: 1 },
];
const spec = (seed: number, extra: Partial<PopulationSpec> = {}): PopulationSpec => ({
  species,
  totalIons: 30_000,
  seed,
  startPosition: { kind: 'uniform', from_m: 1e-3, to_m: 1.5e-3 },
  startVelocity: { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 150, minimum_m_per_s: -Infinity },
  firstStage_m: 3e-3,
  ...extra,
});

const mean = (a: Float64Array) => a.reduce((s, x) => s + x, 0) / a.length;
const sd = (a: Float64Array) => {
  const m = mean(a);
  return Math.sqrt(a.reduce((s, x) => s + (x - m) ** 2, 0) / (a.length - 1));
};

describe('seeded populations', () => {
  it('the same seed gives bit-identical ensembles', () => {
    const a = samplePopulation(spec(7));
    const b = samplePopulation(spec(7));
    expect(Buffer.from(a.z0_m.buffer).equals(Buffer.from(b.z0_m.buffer))).toBe(true);
    expect(Buffer.from(a.vz0_m_per_s.buffer).equals(Buffer.from(b.vz0_m_per_s.buffer))).toBe(true);
  });

  it('another seed changes the sample but not the statistics beyond their standard error', () => {
    const a = samplePopulation(spec(7));
    const b = samplePopulation(spec(8));
    expect(a.vz0_m_per_s[0]).not.toBe(b.vz0_m_per_s[0]);
    const n = a.count;
    const se = 150 / Math.sqrt(n);
    expect(Math.abs(mean(a.vz0_m_per_s) - mean(b.vz0_m_per_s))).toBeLessThan(5 * Math.SQRT2 * se);
    expect(Math.abs(mean(a.vz0_m_per_s) - 400)).toBeLessThan(5 * se);
    expect(Math.abs(sd(a.vz0_m_per_s) - 150)).toBeLessThan(5 * 150 / Math.sqrt(2 * n));
    // Uniform start: mean at the centre, sd = width/√12.
    expect(Math.abs(mean(a.z0_m) - 1.25e-3)).toBeLessThan(5 * (0.5e-3 / Math.sqrt(12)) / Math.sqrt(n));
    expect(Math.min(...a.z0_m)).toBeGreaterThanOrEqual(1e-3);
    expect(Math.max(...a.z0_m)).toBeLessThanOrEqual(1.5e-3);
  });

  it('a species keeps its ions when another species is added (its own random stream)', () => {
    const one = samplePopulation({ ...spec(3), species: [species[0]], totalIons: 1000 });
    const two = samplePopulation({ ...spec(3), species: [species[0], { ...species[1], abundance: 0 }], totalIons: 1000 });
    expect(Array.from(two.vz0_m_per_s.subarray(0, 1000))).toEqual(Array.from(one.vz0_m_per_s));
  });

  it('truncated normal redraws below the minimum', () => {
    const e = samplePopulation(spec(1, { startVelocity: { kind: 'normal', mean_m_per_s: 500, sd_m_per_s: 200, minimum_m_per_s: 50 } }));
    expect(Math.min(...e.vz0_m_per_s)).toBeGreaterThanOrEqual(50);
  });

  it('energy spread converts with the ion mass m = (m/z)·z·u (kinetic energy ½mv²)', () => {
    const e = samplePopulation(spec(2, { startVelocity: { kind: 'energy', mean_J: ELEMENTARY_CHARGE_C, sd_J: 0 } }));
    const m1 = 1000 * ATOMIC_MASS_CONSTANT_KG;
    const m2 = 1500 * 2 * ATOMIC_MASS_CONSTANT_KG;
    expect(e.vz0_m_per_s[0]).toBeCloseTo(Math.sqrt((2 * ELEMENTARY_CHARGE_C) / m1), 9);
    expect(e.vz0_m_per_s[e.speciesStart[1]]).toBeCloseTo(Math.sqrt((2 * ELEMENTARY_CHARGE_C) / m2), 9);
  });

  it('gaussian start positions stay inside the first stage', () => {
    const e = samplePopulation(spec(4, { startPosition: { kind: 'gaussian', mean_m: 0.2e-3, sd_m: 0.5e-3 } }));
    expect(Math.min(...e.z0_m)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...e.z0_m)).toBeLessThan(3e-3);
  });
});

describe('allocateCounts', () => {
  it('splits by abundance and always sums to the total', () => {
    expect(allocateCounts([2, 1], 30_000)).toEqual([20_000, 10_000]);
    expect(allocateCounts([1, 1, 1], 10)).toEqual([4, 3, 3]);
    expect(allocateCounts([1, 0], 5)).toEqual([5, 0]);
    expect(allocateCounts([0, 0], 5)).toEqual([0, 0]);
  });
});

describe('SeededRandom', () => {
  it('uniform deviates are in [0, 1) with mean 1/2', () => {
    const r = new SeededRandom(42);
    let s = 0;
    for (let i = 0; i < 100_000; i++) {
      const u = r.uniform();
      expect(u >= 0 && u < 1).toBe(true);
      s += u;
    }
    expect(Math.abs(s / 100_000 - 0.5)).toBeLessThan(5 / Math.sqrt(12 * 100_000));
  });
});
