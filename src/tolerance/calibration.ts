/**
 * The fixed calibration the apparent masses are read with: fitted once on the unperturbed run and
 * then applied, unchanged, to the perturbed flight times (as an instrument calibrated once and then
 * left to drift). The law and calibrants are the preset's (analysis.calibrantMz); without them,
 * every species serves as a calibrant of t = t0 + a·√(m/z), and a single species gives t = a·√(m/z).
 */
import { fitCalibration, mzFromTime, type CalibrationCoefficients } from '../analysis/calibration';
import type { Preset } from '../presets/schema';

export interface FixedCalibration {
  readonly coefficients: CalibrationCoefficients;
  readonly law: string;
  readonly calibrantMz: number[];
  readonly from: 'analysis.calibrantMz' | 'every species' | 'one species, t0 = 0';
}

export type FixedCalibrationResult = { readonly ok: true; readonly value: FixedCalibration } | { readonly ok: false; readonly error: string };

export function fixedCalibration(preset: Preset, species: readonly { readonly mz: number; readonly time_s: number | null }[]): FixedCalibrationResult {
  const timed = species.filter((s): s is { mz: number; time_s: number } => s.time_s !== null);
  if (timed.length === 0) return { ok: false, error: 'no species reached the detector in the unperturbed run' };
  const wanted = preset.analysis?.calibrantMz ?? [];
  const quadratic = preset.analysis?.quadraticCalibration ?? false;
  let calibrants = timed;
  let from: FixedCalibration['from'] = 'every species';
  if (wanted.length > 0) {
    // Each calibrant m/z picks the nearest species, as the run's own calibration does.
    const chosen = new Set<number>();
    for (const mz of wanted) {
      let best = 0;
      timed.forEach((s, i) => {
        if (Math.abs(s.mz - mz) < Math.abs(timed[best].mz - mz)) best = i;
      });
      chosen.add(best);
    }
    calibrants = timed.filter((_, i) => chosen.has(i));
    from = 'analysis.calibrantMz';
  }
  const distinct = new Set(calibrants.map((c) => c.mz)).size;
  if (distinct < 2) {
    const c = calibrants[0];
    return {
      ok: true,
      value: { coefficients: { t0_s: 0, a_s_per_sqrtTh: c.time_s / Math.sqrt(c.mz), b_s_per_Th: 0 }, law: 't = a·sqrt(m/z)', calibrantMz: [c.mz], from: 'one species, t0 = 0' },
    };
  }
  const fit = fitCalibration(calibrants, { quadratic: quadratic && distinct >= 3 });
  if (!fit.ok) return { ok: false, error: fit.issues.map((i) => `${i.path}: ${i.message}`).join('; ') };
  return {
    ok: true,
    value: {
      coefficients: fit.report.coefficients,
      law: fit.report.model === 'sqrt' ? 't = t0 + a·sqrt(m/z)' : 't = t0 + a·sqrt(m/z) + b·(m/z)',
      calibrantMz: calibrants.map((c) => c.mz),
      from,
    },
  };
}

/** Apparent m/z of a flight time under the fixed calibration (null outside its range). */
export function apparentMz(time_s: number | null, c: CalibrationCoefficients): number | null {
  return time_s === null ? null : mzFromTime(time_s, c);
}
