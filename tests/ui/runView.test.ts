import { describe, expect, it } from 'vitest';
import { mzFromTime } from '../../src/analysis/calibration';
import { emptyFateCounts } from '../../src/physics/fates';
import type { SpeciesReport } from '../../src/simulation/report';
import { calibrate } from '../../src/ui/results/runView';

const species = (mz: number, t_ns: number | null, detected = 100): SpeciesReport =>
  ({ label: String(mz), mz, charge: 1, ions: 100, detected, transmission: detected / 100, flightTime_ns: t_ns, fates: emptyFateCounts() }) as SpeciesReport;

describe('calibration of the spectrum axis', () => {
  it('recovers t = t0 + a·√(m/z) exactly, with zero residuals', () => {
    const t = (mz: number): number => 120 + 640 * Math.sqrt(mz); // ns
    const cal = calibrate([species(1000, t(1000)), species(1500, t(1500)), species(2500, t(2500))]);
    expect(cal.freedom).toBe(1);
    expect(cal.coefficients!.t0_s * 1e9).toBeCloseTo(120, 6);
    expect(cal.coefficients!.a_s_per_sqrtTh * 1e9).toBeCloseTo(640, 9);
    for (const r of cal.residuals) expect(Math.abs(r!)).toBeLessThan(1e-6);
    expect(mzFromTime(t(1800) * 1e-9, cal.coefficients!)).toBeCloseTo(1800, 6);
  });

  it('reports the misfit of a point off the law in ppm', () => {
    const t = (mz: number): number => 640 * Math.sqrt(mz);
    const cal = calibrate([species(1000, t(1000)), species(2000, t(2000) * (1 + 1e-5)), species(3000, t(3000)), species(4000, t(4000))]);
    // A 10 ppm late arrival reads as about 20 ppm heavy (m ∝ t²), less what the fit absorbs.
    expect(cal.residuals[1]!).toBeGreaterThan(5);
    expect(cal.residuals[1]!).toBeLessThan(25);
  });

  it('falls back to t ∝ √(m/z) with one species and gives no residual', () => {
    const cal = calibrate([species(1000, 20_000), species(2000, null, 0)]);
    expect(cal.freedom).toBe(0);
    expect(cal.residuals).toEqual([null, null]);
    expect(mzFromTime(40_000e-9, cal.coefficients!)).toBeCloseTo(4000, 9);
  });
});
