/**
 * The per-species report of a run: what the CLI prints and the app shows. Times in ns at this
 * boundary (names carry the unit).
 */
import { arrivalStats } from '../analysis/arrivalStats';
import { countFates, Fate, type FateCounts } from '../physics/fates';
import { sToNs } from '../physics/units';
import type { Ensemble, TraceResult } from '../ions/ensemble';
import type { AnalysisSections, SpectrumPeakReport } from './analysisReport';

export interface SpeciesReport {
  readonly label: string;
  readonly mz: number;
  readonly charge: number;
  readonly ions: number;
  readonly detected: number;
  /** Fraction of this species' ions that reached the detector, 0..1. */
  readonly transmission: number;
  readonly flightTime_ns: number | null;
  readonly medianFlightTime_ns: number | null;
  readonly sdFlightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly fwhmShortest_ns: number | null;
  /** t/(2·FWHM) from the histogram FWHM; null when undefined (no ions) or unbounded (zero width). */
  readonly resolvingPower: number | null;
  readonly resolvingPowerShortest: number | null;
  readonly fates: FateCounts;
  /** The peak measured in this species' simulated spectrum (with acquisition settings), else null. */
  readonly peak: SpectrumPeakReport | null;
  /** Calibrated mass error of this species' peak (null for calibrants or without a calibration). */
  readonly massError_ppm: number | null;
}

export interface RunReport {
  readonly ions: number;
  readonly detected: number;
  readonly fates: FateCounts;
  readonly species: SpeciesReport[];
  readonly calibration: AnalysisSections['calibration'];
  readonly focus: AnalysisSections['focus'];
}

/** The report with the measurement sections (spectrum peaks, calibration, focus) filled in. */
export function attachAnalysis(report: RunReport, analysis: AnalysisSections): RunReport {
  const cal = analysis.calibration && 'unknowns' in analysis.calibration ? analysis.calibration : null;
  return {
    ...report,
    species: report.species.map((s, i) => ({
      ...s,
      peak: analysis.speciesPeaks[i] ?? null,
      massError_ppm: cal?.unknowns.find((u) => u.mz === s.mz)?.error_ppm ?? null,
    })),
    calibration: analysis.calibration,
    focus: analysis.focus,
  };
}

const nsOrNull = (s: number | null): number | null => (s === null ? null : sToNs(s));

export function buildReport(ens: Ensemble, trace: TraceResult): RunReport {
  const species: SpeciesReport[] = [];
  for (let s = 0; s < ens.species.length; s++) {
    const from = ens.speciesStart[s];
    const to = ens.speciesStart[s + 1];
    let detected = 0;
    for (let i = from; i < to; i++) if (trace.fate[i] === Fate.DETECTED) detected++;
    const times = new Float64Array(detected);
    for (let i = from, k = 0; i < to; i++) if (trace.fate[i] === Fate.DETECTED) times[k++] = trace.flightTime_s[i];
    times.sort();
    const stats = arrivalStats(times);
    const info = ens.species[s];
    species.push({
      label: info.label,
      mz: info.mz,
      charge: info.charge,
      ions: to - from,
      detected,
      transmission: to > from ? detected / (to - from) : 0,
      flightTime_ns: nsOrNull(stats.mean_s),
      medianFlightTime_ns: nsOrNull(stats.median_s),
      sdFlightTime_ns: nsOrNull(stats.sd_s),
      fwhm_ns: nsOrNull(stats.fwhm_s),
      fwhmShortest_ns: nsOrNull(stats.fwhmShortest_s),
      resolvingPower: stats.resolvingPower,
      resolvingPowerShortest: stats.resolvingPowerShortest,
      fates: countFates(trace.fate, from, to),
      peak: null,
      massError_ppm: null,
    });
  }
  const fates = countFates(trace.fate);
  return { ions: ens.count, detected: fates.detected, fates, species, calibration: null, focus: null };
}
