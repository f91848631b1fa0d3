/**
 * Peaks of a measured spectrum and their pairing with the preset's species.
 *
 * Picking uses the project's peak finder (src/analysis/peaks.ts) on a lightly smoothed copy, so
 * that counting noise on a peak top does not split it into several apexes; the peaks are then
 * measured (centroid, FWHM, area) on the data as read. Matching pairs each predicted species peak
 * with the nearest measured peak inside a window, one to one, nearest pairs first.
 */
import { findPeaks, measurePeak } from '../analysis/peaks';
import type { MeasuredSpectrum } from './measuredSpectrum';

export interface MeasuredPeak {
  /** Centroid, in the spectrum's axis unit (s or Th). */
  readonly position: number;
  readonly apexIndex: number;
  readonly height: number;
  readonly fwhm: number | null;
  readonly area: number;
}

export interface PickOptions {
  /** Half-width (samples) of the triangular smoothing used to find apexes; 0 for none. Default 2. */
  readonly smoothHalfWidth?: number;
  /** Minimum prominence, as a fraction of the tallest smoothed sample. Default 0.05. */
  readonly minRelativeProminence?: number;
  /** Minimum height, as a fraction of the tallest smoothed sample. Default 0.02. */
  readonly minRelativeHeight?: number;
}

export function pickMeasuredPeaks(spectrum: MeasuredSpectrum, options: PickOptions = {}): MeasuredPeak[] {
  const y = spectrum.intensity;
  let tallest = 0;
  for (const v of y) if (v > tallest) tallest = v;
  if (spectrum.centroided) {
    // A peak list: every point above the height threshold is a peak.
    const min = (options.minRelativeHeight ?? 0.02) * tallest;
    return Array.from(spectrum.x).flatMap((x, k) => (y[k] > 0 && y[k] >= min ? [{ position: x, apexIndex: k, height: y[k], fwhm: null, area: y[k] }] : []));
  }
  // Smoothing mixes neighbours, which is only right where the samples are evenly spaced.
  const smoothed = triangularSmooth(y, isEvenlySampled(spectrum.x) ? (options.smoothHalfWidth ?? 2) : 0);
  const found = findPeaks(spectrum.x, smoothed, {
    minRelativeProminence: options.minRelativeProminence ?? 0.05,
    minRelativeHeight: options.minRelativeHeight ?? 0.02,
  });
  return found.map((p) => {
    // Re-measure on the data as read, within the region found on the smoothed copy.
    let apex = p.regionStart;
    for (let k = p.regionStart; k <= p.regionEnd; k++) if (spectrum.intensity[k] > spectrum.intensity[apex]) apex = k;
    const raw = measurePeak(spectrum.x, spectrum.intensity, apex, p.regionStart, p.regionEnd);
    return { position: raw.centroid_s, apexIndex: apex, height: raw.height, fwhm: raw.fwhm_s, area: raw.area };
  });
}

/** True when no step of the axis exceeds 1.5 times the median step. */
export function isEvenlySampled(x: Float64Array): boolean {
  if (x.length < 3) return true;
  const steps = Array.from({ length: x.length - 1 }, (_, i) => x[i + 1] - x[i]).sort((a, b) => a - b);
  return steps[steps.length - 1] <= 1.5 * steps[steps.length >> 1];
}

/** Moving average with triangular weights over ±h samples (h = 0 returns a copy). */
export function triangularSmooth(y: Float64Array, h: number): Float64Array {
  const out = new Float64Array(y.length);
  if (!(h >= 1)) {
    out.set(y);
    return out;
  }
  for (let k = 0; k < y.length; k++) {
    let sum = 0;
    let norm = 0;
    for (let j = -h; j <= h; j++) {
      const i = k + j;
      if (i < 0 || i >= y.length) continue;
      const w = h + 1 - Math.abs(j);
      sum += w * y[i];
      norm += w;
    }
    out[k] = sum / norm;
  }
  return out;
}

export interface PredictedPeak {
  /** Ensemble species block (isotopologue peaks are blocks of their own). */
  readonly species: number;
  readonly label: string;
  readonly mz: number;
  /** Predicted position in the measured spectrum's axis unit (s or Th). */
  readonly position: number;
}

export interface PeakMatch {
  readonly species: number;
  readonly label: string;
  readonly mz: number;
  readonly predicted: number;
  /** Index into the measured peak list. */
  readonly peak: number;
  readonly measured: number;
  /** measured − predicted, in the axis unit. */
  readonly difference: number;
}

/**
 * One-to-one pairs of predicted and measured peaks with |measured − predicted| ≤ window(predicted),
 * taken nearest first. Unmatched peaks on either side are left out.
 */
export function matchPeaks(
  measured: readonly MeasuredPeak[],
  predicted: readonly PredictedPeak[],
  window: (position: number) => number,
): PeakMatch[] {
  const pairs: { p: number; m: number; d: number }[] = [];
  predicted.forEach((pred, p) => {
    const tolerance = window(pred.position);
    measured.forEach((peak, m) => {
      const d = Math.abs(peak.position - pred.position);
      if (d <= tolerance) pairs.push({ p, m, d });
    });
  });
  pairs.sort((a, b) => a.d - b.d || a.p - b.p);
  const usedP = new Set<number>();
  const usedM = new Set<number>();
  const out: PeakMatch[] = [];
  for (const { p, m } of pairs) {
    if (usedP.has(p) || usedM.has(m)) continue;
    usedP.add(p);
    usedM.add(m);
    const pred = predicted[p];
    out.push({
      species: pred.species,
      label: pred.label,
      mz: pred.mz,
      predicted: pred.position,
      peak: m,
      measured: measured[m].position,
      difference: measured[m].position - pred.position,
    });
  }
  return out.sort((a, b) => a.predicted - b.predicted);
}
