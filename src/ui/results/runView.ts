/**
 * What the app shows of one run, computed from the worker's output without the DOM: the mass
 * calibration (the run report's own, from the preset's calibrants; else a fit of t = t0 + a·√(m/z)
 * to the species' mean flight times, src/analysis/calibration.ts), the per-ion m/z on it, each
 * species' mass error, and peak positions and widths for the spectrum's zoom.
 */
import { fitCalibration, mzFromTime, type CalibrationCoefficients } from '../../analysis/calibration';
import { Fate } from '../../physics/fates';
import type { RunOutput } from '../../simulation/runContract';
import type { SpeciesReport } from '../../simulation/report';
import { headlineFigures, type HeadlineFigures } from '../../simulation/headline';
import type { SpectrumPeak, SpectrumRun } from '../charts/spectrumChart';
import { withFragmentSeries } from '../charts/fragmentPeaks';

export interface PeakRow {
  readonly species: SpeciesReport;
  readonly colour: string;
  readonly flightTime_us: number | null;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  readonly transmission: number;
  /** Resolving power of the peak in the simulated spectrum (with detector response), when the preset has acquisition settings. */
  readonly spectrumResolvingPower: number | null;
  /** (m/z from the calibration − true m/z)/true m/z · 1e6; null when unknown. */
  readonly massError_ppm: number | null;
  /** The species is a calibrant of the run's calibration (its error is a fit residual). */
  readonly calibrant: boolean;
  /** Headline (spectrum peak) and ideal-detector figures, as every table shows them. */
  readonly headline: HeadlineFigures;
}

export interface RunView {
  readonly rows: PeakRow[];
  readonly calibration: CalibrationCoefficients | null;
  /** Calibrants minus fitted parameters (0: the law passes through every point, errors are zero by construction). */
  readonly calibrationFreedom: number;
  /** Where the calibration came from, for the table's note. */
  readonly calibrationNote: string;
  readonly spectrum: SpectrumRun;
}

/** Calibration from the detected species' mean flight times; with one species, t = a·√(m/z) through the origin. */
export function calibrate(species: readonly SpeciesReport[]): { coefficients: CalibrationCoefficients | null; residuals: (number | null)[]; freedom: number } {
  const used: { index: number; mz: number; time_s: number }[] = [];
  species.forEach((s, index) => {
    if (s.flightTime_ns !== null && s.detected > 0) used.push({ index, mz: s.mz, time_s: s.flightTime_ns * 1e-9 });
  });
  const residuals: (number | null)[] = species.map(() => null);
  if (used.length === 1) {
    const only = used[0];
    return { coefficients: { t0_s: 0, a_s_per_sqrtTh: only.time_s / Math.sqrt(only.mz), b_s_per_Th: 0 }, residuals, freedom: 0 };
  }
  if (used.length < 2) return { coefficients: null, residuals, freedom: 0 };
  const fit = fitCalibration(used.map((u) => ({ mz: u.mz, time_s: u.time_s })));
  if (!fit.ok) return { coefficients: null, residuals, freedom: 0 };
  const freedom = fit.report.degreesOfFreedom;
  if (freedom > 0) used.forEach((u, k) => (residuals[u.index] = fit.report.residuals_ppm[k]));
  return { coefficients: fit.report.coefficients, residuals, freedom };
}

/** The report's calibration (calibrant peaks from the preset) when it has one, else a fit to all species' mean times. */
function runCalibration(report: RunOutput['report']): {
  coefficients: CalibrationCoefficients | null;
  errors: (number | null)[];
  calibrant: boolean[];
  freedom: number;
  note: string;
} {
  const section = report.calibration;
  if (section && 'coefficients' in section) {
    const c = section.coefficients;
    const calibrant = report.species.map((s) => section.calibrantMz.includes(s.mz));
    const errors = report.species.map((s, i) => {
      if (!calibrant[i]) return s.massError_ppm;
      const k = section.calibrantMz.indexOf(s.mz);
      return k >= 0 ? (section.residuals_ppm[k] ?? null) : null;
    });
    return {
      coefficients: { t0_s: c.t0_ns * 1e-9, a_s_per_sqrtTh: c.a_ns_per_sqrtTh * 1e-9, b_s_per_Th: c.b_ns_per_Th * 1e-9 },
      errors,
      calibrant,
      freedom: section.degreesOfFreedom,
      note:
        `calibration ${section.law} on m/z ${section.calibrantMz.map((m) => m.toFixed(1)).join(', ')} (${section.timesFrom}), ` +
        `${section.degreesOfFreedom} degree${section.degreesOfFreedom === 1 ? '' : 's'} of freedom; ` +
        (section.warning ?? 'calibrant rows show the fit residual'),
    };
  }
  const own = calibrate(report.species);
  return {
    coefficients: own.coefficients,
    errors: own.residuals,
    calibrant: report.species.map(() => own.freedom > 0),
    freedom: own.freedom,
    note: own.freedom > 0 ? 'residual of t = t0 + a·√(m/z) fitted to every species (no calibrants set)' : 'needs three or more detected species for a residual',
  };
}

export function buildRunView(output: RunOutput, colours: readonly string[], sampleInterval_ns: number | null = null): RunView {
  const { report } = output;
  const cal = runCalibration(report);
  const n = output.flightTime_s.length;
  const time_us = new Float64Array(n);
  const mz = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = output.flightTime_s[i];
    time_us[i] = t * 1e6;
    const m = output.fate[i] === Fate.DETECTED && cal.coefficients ? mzFromTime(t, cal.coefficients) : null;
    mz[i] = m ?? NaN;
  }
  const rows: PeakRow[] = report.species.map((s, i) => ({
    species: s,
    colour: colours[i] ?? '#8fd0ff',
    flightTime_us: s.flightTime_ns === null ? null : s.flightTime_ns / 1000,
    fwhm_ns: s.fwhm_ns,
    resolvingPower: s.resolvingPower,
    spectrumResolvingPower: s.peak?.resolvingPower ?? null,
    transmission: s.transmission,
    massError_ppm: cal.errors[i] ?? null,
    calibrant: cal.calibrant[i] ?? false,
    headline: headlineFigures(s, sampleInterval_ns),
  }));
  const peaks: SpectrumPeak[] = report.species.map((s) => {
    const t = s.flightTime_ns;
    const w = s.fwhm_ns;
    // m ∝ t² near a peak: Δm/m = 2Δt/t.
    return {
      time_us: t === null ? null : t / 1000,
      fwhm_us: w === null ? null : w / 1000,
      mz: t === null ? null : s.mz,
      fwhm_mz: t === null || w === null ? null : (2 * s.mz * w) / t,
    };
  });
  return {
    rows,
    calibration: cal.coefficients,
    calibrationFreedom: cal.freedom,
    calibrationNote: cal.note,
    // Decay products (fragment ions, neutrals) as dashed series of their own after the precursors'.
    spectrum: withFragmentSeries({
      time_us,
      mz,
      fate: output.fate,
      speciesStart: output.speciesStart,
      labels: report.species.map((s) => s.label),
      colours: report.species.map((_s, i) => colours[i] ?? '#8fd0ff'),
      peaks,
    }, output.products, cal.coefficients),
  };
}
