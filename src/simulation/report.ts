/**
 * The per-species report of a run: what the CLI prints and the app shows. Times in ns at this
 * boundary (names carry the unit).
 */
import type { MirrorMapReport } from '../physics/solvedMirrorMap';
import type { SourceMapReport } from '../physics/solvedSourceMap';
import { arrivalStats } from '../analysis/arrivalStats';
import { countFates, Fate, type FateCounts } from '../physics/fates';
import { sToNs } from '../physics/units';
import type { Ensemble, TraceResult } from '../ions/ensemble';
import type { AnalysisSections, SpectrumPeakReport } from './analysisReport';
import type { IonLoadReport } from './ionLoad';
import type { FragmentChannelReport } from './fragmentReport';

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
  /**
   * For a species given by formula: its traced isotopologue peaks (m/z, fraction of the species,
   * flight time, FWHM, R). The species' own figures above are those of its monoisotopic peak (as m/z
   * is), except ions/detected/transmission/fates, which count all its peaks. Empty for a species given by m/z.
   */
  readonly isotopePeaks: IsotopePeakReport[];
  /**
   * Per nominal isotope shift (M+0, M+1, ...) of a species given by formula: the summed fraction of
   * its traced peaks (the shift's exact share of the molecules) and their abundance-weighted m/z.
   * Empty for a species given by m/z.
   */
  readonly isotopeShiftTotals: IsotopeShiftTotal[];
  /** Index of the ensemble block (isotope peak) whose figures the species reports. */
  readonly mainBlock: number;
  /** Per decay channel of a species with a preset `decay` section (src/simulation/fragmentReport.ts); absent otherwise. */
  readonly fragments?: FragmentChannelReport[];
}

export interface IsotopePeakReport {
  readonly mz: number;
  /** Fraction of the species' molecules in this isotopic composition (0..1). */
  readonly abundance: number;
  /** M+n: extra neutrons relative to the monoisotopic composition. */
  readonly shift: number;
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  readonly transmission: number;
  /**
   * Calibrated mass error of this peak, measured on its own ions' spectrum (so a neighbouring peak
   * cannot pull it); null for a calibrant or without a calibration.
   */
  readonly massError_ppm: number | null;
  /** One sd of that error from the ion count alone: 2·10^6·sd(t)/(t·sqrt(detected)) (m ∝ t²). */
  readonly statisticalError_ppm: number | null;
}

export interface IsotopeShiftTotal {
  readonly shift: number;
  readonly abundance: number;
  readonly mz: number;
}

/** Sums of the traced isotope peaks per nominal shift, in shift order. */
export function shiftTotals(peaks: readonly { readonly shift: number; readonly abundance: number; readonly mz: number }[]): IsotopeShiftTotal[] {
  const byShift = new Map<number, { abundance: number; weighted: number }>();
  for (const p of peaks) {
    const t = byShift.get(p.shift) ?? { abundance: 0, weighted: 0 };
    t.abundance += p.abundance;
    t.weighted += p.abundance * p.mz;
    byShift.set(p.shift, t);
  }
  return [...byShift.entries()].sort((a, b) => a[0] - b[0]).map(([shift, t]) => ({ shift, abundance: t.abundance, mz: t.weighted / t.abundance }));
}

export interface RunReport {
  readonly ions: number;
  readonly detected: number;
  readonly fates: FateCounts;
  readonly species: SpeciesReport[];
  readonly calibration: AnalysisSections['calibration'];
  readonly focus: AnalysisSections['focus'];
  /** Shots, detector modes and space charge (src/simulation/ionLoad.ts); absent or null without a preset `ionLoad` section. */
  readonly ionLoad?: IonLoadReport | null;
  /** How a solved mirror was crossed: ions carried by the run's transfer map, ions traced (src/physics/solvedMirrorMap.ts); absent without one. */
  readonly solvedMirrorMap?: MirrorMapReport;
  /** How a solved source was crossed: ions carried by the run's transfer map, ions traced and why (src/physics/solvedSourceMap.ts); absent without one. */
  readonly solvedSourceMap?: SourceMapReport;
}

/** The report with the measurement sections (spectrum peaks, calibration, focus) filled in. */
export function attachAnalysis(report: RunReport, analysis: AnalysisSections): RunReport {
  const cal = analysis.calibration && 'unknowns' in analysis.calibration ? analysis.calibration : null;
  return {
    ...report,
    species: report.species.map((s) => ({
      ...s,
      peak: analysis.speciesPeaks[s.mainBlock] ?? null,
      massError_ppm: cal?.unknowns.find((u) => u.mz === s.mz)?.error_ppm ?? null,
      isotopePeaks: s.isotopePeaks.map((p) => ({ ...p, massError_ppm: cal?.unknowns.find((u) => u.mz === p.mz)?.error_ppm ?? null })),
    })),
    calibration: analysis.calibration,
    focus: analysis.focus,
  };
}

const nsOrNull = (s: number | null): number | null => (s === null ? null : sToNs(s));

/** Per preset species, its range of ensemble blocks [first, end): isotope peaks of one species are contiguous. */
export function speciesBlockRanges(ens: Ensemble): Int32Array {
  const starts: number[] = [0];
  for (let b = 1; b < ens.species.length; b++) {
    if ((ens.species[b].parent ?? b) !== (ens.species[b - 1].parent ?? b - 1)) starts.push(b);
  }
  starts.push(ens.species.length);
  return Int32Array.from(starts);
}

/** Ion index boundaries per preset species (all its isotope peaks together), length species + 1. */
export function speciesIonStart(ens: Ensemble): Int32Array {
  const ranges = speciesBlockRanges(ens);
  return ranges.map((b) => ens.speciesStart[b]);
}

function blockReport(ens: Ensemble, trace: TraceResult, s: number, sortedOut?: Float64Array[]): SpeciesReport {
  const from = ens.speciesStart[s];
  const to = ens.speciesStart[s + 1];
  // The arrays in locals: traces come in several object shapes (a property load per ion would dominate).
  const fate = trace.fate;
  const time = trace.flightTime_s;
  let detected = 0;
  for (let i = from; i < to; i++) if (fate[i] === Fate.DETECTED) detected++;
  const times = new Float64Array(detected);
  for (let i = from, k = 0; i < to; i++) if (fate[i] === Fate.DETECTED) times[k++] = time[i];
  times.sort();
  if (sortedOut) sortedOut[s] = times;
  const stats = arrivalStats(times);
  const info = ens.species[s];
  return {
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
    isotopePeaks: [],
    isotopeShiftTotals: [],
    mainBlock: s,
  };
}

/**
 * `sortedOut`, when given, receives per ensemble species block the block's detected flight times in
 * ascending order (sorted here anyway), so the analysis need not sort them again.
 */
export function buildReport(ens: Ensemble, trace: TraceResult, sortedOut?: Float64Array[]): RunReport {
  const ranges = speciesBlockRanges(ens);
  const species: SpeciesReport[] = [];
  for (let k = 0; k + 1 < ranges.length; k++) {
    const first = ranges[k];
    const end = ranges[k + 1];
    const isotopic = ens.species[first].isotopeFraction !== undefined;
    if (!isotopic) {
      species.push(blockReport(ens, trace, first, sortedOut));
      continue;
    }
    const blocks = [];
    for (let b = first; b < end; b++) blocks.push(blockReport(ens, trace, b, sortedOut));
    // The monoisotopic peak speaks for the species (its m/z is the species' m/z); failing that, the largest.
    let main = 0;
    for (let j = 0; j < blocks.length; j++) {
      if ((ens.species[first + j].isotopeFraction ?? 0) > (ens.species[first + main].isotopeFraction ?? 0)) main = j;
    }
    for (let j = 0; j < blocks.length; j++) if (ens.species[first + j].isotopeShift === 0) main = j;
    const ions = blocks.reduce((a, b) => a + b.ions, 0);
    const detected = blocks.reduce((a, b) => a + b.detected, 0);
    const from = ens.speciesStart[first];
    const to = ens.speciesStart[end];
    const isotopePeaks = blocks.map((b, j) => ({
      mz: b.mz,
      abundance: ens.species[first + j].isotopeFraction ?? 0,
      shift: ens.species[first + j].isotopeShift ?? 0,
      flightTime_ns: b.flightTime_ns,
      fwhm_ns: b.fwhm_ns,
      resolvingPower: b.resolvingPower,
      transmission: b.transmission,
      massError_ppm: null,
      statisticalError_ppm:
        b.sdFlightTime_ns !== null && b.flightTime_ns !== null && b.detected > 1 ? (2e6 * b.sdFlightTime_ns) / (b.flightTime_ns * Math.sqrt(b.detected)) : null,
    }));
    species.push({
      ...blocks[main],
      label: blocks[main].label.replace(/ M\+\d+$/, ''),
      ions,
      detected,
      transmission: ions > 0 ? detected / ions : 0,
      fates: countFates(trace.fate, from, to),
      mainBlock: first + main,
      isotopePeaks,
      isotopeShiftTotals: shiftTotals(isotopePeaks),
    });
  }
  const fates = countFates(trace.fate);
  return { ions: ens.count, detected: fates.detected, fates, species, calibration: null, focus: null };
}
