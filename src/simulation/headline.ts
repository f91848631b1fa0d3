/**
 * The headline figures of a species, as an instrument would measure them: the FWHM and resolving
 * power of its peak in the simulated spectrum (detector pulse, jitter, sampling) when the preset has
 * acquisition settings. The ion-only figures (arrival-time histogram) stay beside them, labelled as
 * the ideal-detector limit; an ion-only width below the digitizer's sample interval cannot be
 * measured, so its R is given as a lower bound ("> N", N = t/(2·sample interval)).
 */
import type { SpeciesReport } from './report';

/** Which figure scans, tunes, Compare and "best" rank by. */
export type ResolvingPowerCriterion = 'spectrum' | 'ideal';
export const CRITERIA: readonly ResolvingPowerCriterion[] = ['spectrum', 'ideal'];

export const CRITERION_LABELS: Readonly<Record<ResolvingPowerCriterion, string>> = {
  spectrum: 'R of the simulated spectrum peak (FWHM)',
  ideal: 'ideal-detector R (ion arrival times only, FWHM)',
};

export interface HeadlineFigures {
  /** Where the headline comes from: the spectrum peak, or the ion statistics when there is no acquisition. */
  readonly source: 'spectrum' | 'ions';
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  /** Ion-only R (histogram FWHM): the ideal-detector limit. */
  readonly idealResolvingPower: number | null;
  /** True when the ion-only FWHM is below the digitizer's sample interval: the ideal R is then only "> idealFloor". */
  readonly idealBelowDigitizer: boolean;
  /** t/(2·sample interval): the largest R a width of one sample could show; null without acquisition. */
  readonly idealFloor: number | null;
}

/** Headline and ideal-detector figures of one species; `sampleInterval_ns` null when the preset has no acquisition. */
export function headlineFigures(s: Pick<SpeciesReport, 'peak' | 'fwhm_ns' | 'resolvingPower' | 'flightTime_ns'>, sampleInterval_ns: number | null): HeadlineFigures {
  const floor = sampleInterval_ns !== null && s.flightTime_ns !== null ? s.flightTime_ns / (2 * sampleInterval_ns) : null;
  const below = sampleInterval_ns !== null && s.fwhm_ns !== null && s.fwhm_ns < sampleInterval_ns;
  if (sampleInterval_ns === null) {
    return { source: 'ions', fwhm_ns: s.fwhm_ns, resolvingPower: s.resolvingPower, idealResolvingPower: s.resolvingPower, idealBelowDigitizer: false, idealFloor: null };
  }
  return {
    source: 'spectrum',
    fwhm_ns: s.peak?.fwhm_ns ?? null,
    resolvingPower: s.peak?.resolvingPower ?? null,
    idealResolvingPower: s.resolvingPower,
    idealBelowDigitizer: below,
    idealFloor: floor,
  };
}

/** R as a table shows it: rounded, exponent form from 10^6, "—" when undefined. */
export function formatResolvingPower(x: number | null): string {
  if (x === null || !Number.isFinite(x)) return '—';
  return x >= 1e6 ? x.toExponential(2) : Math.round(x).toString();
}

/** The ideal-detector R as a table shows it: "> N" where the ion-only width is below one sample. */
export function formatIdealResolvingPower(h: HeadlineFigures): string {
  if (h.idealBelowDigitizer && h.idealFloor !== null) return `> ${formatResolvingPower(h.idealFloor)}`;
  return formatResolvingPower(h.idealResolvingPower);
}

/** The figure a criterion ranks by. */
export function criterionResolvingPower(h: HeadlineFigures, criterion: ResolvingPowerCriterion): number | null {
  return criterion === 'ideal' ? h.idealResolvingPower : h.resolvingPower;
}
