/**
 * Mass calibration t = t0 + a·√(m/z) [+ b·(m/z)]: noise-free synthetic peaks from a known law,
 * the least-squares properties of the fit, and the ppm error formulas.
 */
import { describe, expect, it } from 'vitest';
import { assessUnknowns, fitCalibration, massError_ppm, mzFromTime, timeFromMz, type CalibrationCoefficients } from '../../src/analysis/calibration';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../src/physics/constants';

const NS = 1e-9;

/** Drift-tube law: t = L·sqrt(m/(2·z·e·U)) ⇒ a = L·sqrt(m_u/(2·e·U)) per √Th (textbook kinematics). */
const L_M = 1.6;
const U_V = 20_000;
const A_TRUE = L_M * Math.sqrt(U_KG / (2 * E_C * U_V));

function report(result: ReturnType<typeof fitCalibration>) {
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.report;
}

describe('noise-free calibration reproduces the law', () => {
  const truth: CalibrationCoefficients = { t0_s: 123.4 * NS, a_s_per_sqrtTh: A_TRUE, b_s_per_Th: 2.5e-12 };
  const calibrantMz = [412.3, 745.6, 1058.6, 1602.8, 2508.3, 3204.9];
  const unknownMz = [533.1, 1336.7, 1930.9, 3500.0, 900.123456];

  it('quadratic law: coefficients and the m/z of unknowns to ~1e-9 relative (< 1 ppm required)', () => {
    const cal = report(fitCalibration(calibrantMz.map((mz) => ({ mz, time_s: timeFromMz(mz, truth) })), { quadratic: true }));
    expect(cal.model).toBe('sqrt+linear');
    expect(Math.abs(cal.coefficients.a_s_per_sqrtTh / truth.a_s_per_sqrtTh - 1)).toBeLessThan(1e-10);
    expect(Math.abs(cal.coefficients.b_s_per_Th / truth.b_s_per_Th - 1)).toBeLessThan(1e-6);
    expect(Math.abs(cal.coefficients.t0_s - truth.t0_s)).toBeLessThan(1e-6 * NS);
    expect(cal.rms_ppm).toBeLessThan(1e-3);
    for (const u of assessUnknowns(unknownMz.map((mz) => ({ mz, time_s: timeFromMz(mz, truth) })), cal.coefficients)) {
      expect(Math.abs(u.error_ppm!)).toBeLessThan(1e-6); // 1e-12 relative; measured ~1e-9 ppm
    }
  });

  it('two-parameter law from exactly two calibrants, then many: a equals L·sqrt(m_u/(2eU))', () => {
    const linear: CalibrationCoefficients = { ...truth, b_s_per_Th: 0 };
    // Times from the kinematics directly, not from timeFromMz.
    const time = (mz: number): number => linear.t0_s + L_M / Math.sqrt((2 * E_C * U_V) / (mz * U_KG));
    const two = report(fitCalibration([500, 2500].map((mz) => ({ mz, time_s: time(mz) }))));
    expect(two.degreesOfFreedom).toBe(0);
    expect(Math.abs(two.coefficients.a_s_per_sqrtTh / A_TRUE - 1)).toBeLessThan(1e-12);
    expect(two.coefficients.b_s_per_Th).toBe(0);
    const many = report(fitCalibration(calibrantMz.map((mz) => ({ mz, time_s: time(mz) }))));
    expect(Math.abs(many.coefficients.a_s_per_sqrtTh / A_TRUE - 1)).toBeLessThan(1e-12);
    for (const mz of unknownMz) expect(Math.abs(massError_ppm(mzFromTime(time(mz), many.coefficients)!, mz))).toBeLessThan(1e-3);
  });

  it('stays accurate over a wide, badly scaled range (m/z 20 to 50 000)', () => {
    const mzs = [20, 150, 1200, 9000, 24_000, 50_000];
    const cal = report(fitCalibration(mzs.map((mz) => ({ mz, time_s: timeFromMz(mz, truth) })), { quadratic: true }));
    for (const mz of [35, 5000, 42_000]) expect(Math.abs(massError_ppm(mzFromTime(timeFromMz(mz, truth), cal.coefficients)!, mz))).toBeLessThan(1e-3);
  });

  it('the two-parameter law cannot absorb a b term: residuals show it', () => {
    const cal = report(fitCalibration(calibrantMz.map((mz) => ({ mz, time_s: timeFromMz(mz, truth) }))));
    expect(cal.rms_ppm).toBeGreaterThan(0.1);
  });
});

describe('residuals and mass errors in ppm', () => {
  const truth: CalibrationCoefficients = { t0_s: 40 * NS, a_s_per_sqrtTh: A_TRUE, b_s_per_Th: 0 };
  const mzs = [500, 1000, 1500, 2000, 3000];
  const dt = [0.3, -0.2, 0.5, 0, -0.4].map((v) => v * NS); // perturbed peak times

  it('residual_ppm = (calibrated m/z − true m/z)/true m/z·1e6 for each calibrant; rms is their root mean square', () => {
    const points = mzs.map((mz, i) => ({ mz, time_s: timeFromMz(mz, truth) + dt[i] }));
    const cal = report(fitCalibration(points));
    points.forEach((p, i) => {
      const expected = ((mzFromTime(p.time_s, cal.coefficients)! - p.mz) / p.mz) * 1e6;
      expect(cal.residuals_ppm[i]).toBeCloseTo(expected, 9);
    });
    const rms = Math.sqrt(cal.residuals_ppm.reduce((s, r) => s + r * r, 0) / mzs.length);
    expect(cal.rms_ppm).toBeCloseTo(rms, 12);
    expect(cal.degreesOfFreedom).toBe(3);
  });

  it('least squares: time residuals are orthogonal to the columns 1 and √(m/z) (normal equations)', () => {
    const points = mzs.map((mz, i) => ({ mz, time_s: timeFromMz(mz, truth) + dt[i] }));
    const c = report(fitCalibration(points)).coefficients;
    let sum = 0;
    let sumS = 0;
    for (const p of points) {
      const r = p.time_s - timeFromMz(p.mz, c);
      sum += r;
      sumS += r * Math.sqrt(p.mz);
    }
    expect(Math.abs(sum)).toBeLessThan(1e-9 * NS);
    expect(Math.abs(sumS) / Math.sqrt(3000)).toBeLessThan(1e-9 * NS);
  });

  it('a time error δt gives a mass error ≈ 2·δt/(t − t0) (m ∝ (t − t0)²)', () => {
    const mz = 1234.5;
    const t = timeFromMz(mz, truth);
    const delta = 0.25 * NS;
    const [u] = assessUnknowns([{ mz, time_s: t + delta }], truth);
    const firstOrder = ((2 * delta) / (t - truth.t0_s)) * 1e6;
    expect(Math.abs(u.error_ppm! / firstOrder - 1)).toBeLessThan(1e-4);
  });
});

describe('inverse t → m/z', () => {
  it('round-trips and rejects times with no m/z', () => {
    const c: CalibrationCoefficients = { t0_s: 10 * NS, a_s_per_sqrtTh: 0.6e-6, b_s_per_Th: -3e-11 };
    for (const mz of [1, 88.8, 1000, 4321]) expect(mzFromTime(timeFromMz(mz, c), c)! / mz - 1).toBeCloseTo(0, 12);
    expect(mzFromTime(5 * NS, c)).toBeNull(); // before t0
    // Past the turning point of the b < 0 law, s* = a/(−2b): no m/z for later times.
    const sTurn = 0.6e-6 / (2 * 3e-11);
    expect(mzFromTime(timeFromMz(sTurn * sTurn, c) + 1 * NS, c)).toBeNull();
  });
});

describe('bad input names the field', () => {
  it('too few, non-positive or identical calibrants', () => {
    const one = fitCalibration([{ mz: 500, time_s: 1e-5 }]);
    expect(one.ok).toBe(false);
    if (!one.ok) expect(one.issues[0].path).toBe('calibrants');
    const neg = fitCalibration([
      { mz: 500, time_s: 1e-5 },
      { mz: -3, time_s: 2e-5 },
    ]);
    if (!neg.ok) expect(neg.issues[0].path).toBe('calibrants[1].mz');
    else throw new Error('expected failure');
    const same = fitCalibration(
      [
        { mz: 500, time_s: 1e-5 },
        { mz: 500, time_s: 1e-5 },
        { mz: 900, time_s: 1.3e-5 },
      ],
      { quadratic: true },
    );
    expect(same.ok).toBe(false);
  });
});
