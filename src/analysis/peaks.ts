/**
 * Peaks of a sampled spectrum (intensity vs time): finding, centroid, widths, resolving power and
 * the valleys between neighbours. The baseline is taken as zero, as in a simulated spectrum.
 *
 * Definitions (IUPAC 2013 recommendations, Murray et al., Pure Appl. Chem. 85, 1515–1609):
 * - Resolving power R = m/Δm. At FWHM, Δm is the peak's full width at half maximum. For TOF,
 *   m ∝ t², so Δm/m = 2Δt/t and R = t/(2·Δt_FWHM).
 * - 10 % valley: two peaks of equal height at m and m + Δm are just resolved when the valley
 *   between them falls to 10 % of their height; R = m/Δm. Each peak then contributes 5 % of its
 *   height at the midpoint, so for a single peak Δm equals its full width at 5 % of its height
 *   (neglecting each peak's tail under the other's apex, ~1e-5 for gaussians). That width is the
 *   single-peak estimate computed here: R(10 % valley) = t/(2·Δt_5%).
 * Widths are measured between the first samples below the level on either side of the apex
 * (within the peak's own region), each crossing located by linear interpolation between the two
 * samples that straddle it.
 * Height and apex time: the vertex of the parabola through the highest sample and its two
 * neighbours (common practice, no source), so a coarsely sampled top does not lower the
 * half-height level; never below the highest sample.
 * Centroid: the intensity-weighted mean time of the linearly interpolated profile between the two
 * half-height crossings (the region above half height), which depends little on where the
 * samples fall.
 */
import { mzFromTime, type CalibrationCoefficients } from './calibration';

export interface PeakFindingOptions {
  /** Apex below this intensity is ignored (absolute). Default 0. */
  readonly minHeight?: number;
  /** Apex below this fraction of the tallest sample is ignored. Default 0.01. */
  readonly minRelativeHeight?: number;
  /** Topographic prominence required (absolute). Default 0. */
  readonly minProminence?: number;
  /** Prominence required as a fraction of the tallest sample. Default 0.01. */
  readonly minRelativeProminence?: number;
  /** Of two apexes closer than this, only the taller is kept. Default 0. */
  readonly minSeparation_s?: number;
}

export interface Peak {
  readonly apexIndex: number;
  readonly apexTime_s: number;
  readonly height: number;
  /** Height above the higher of the two lowest points separating it from taller ground. */
  readonly prominence: number;
  /** Sample range [regionStart, regionEnd] owned by the peak: bounded by the valleys to its neighbours. */
  readonly regionStart: number;
  readonly regionEnd: number;
  /** Sum of the samples in the region (a valley sample shared with a neighbour counts half). */
  readonly area: number;
  /** Intensity-weighted mean time above half height (from a region edge where a crossing is missing). */
  readonly centroid_s: number;
  readonly halfLeft_s: number | null;
  readonly halfRight_s: number | null;
  /** Null when the peak does not fall to half height inside its region (unresolved or truncated). */
  readonly fwhm_s: number | null;
  readonly left5pct_s: number | null;
  readonly right5pct_s: number | null;
  /** Full width at 5 % of the height: the single-peak Δt of the 10 % valley definition. */
  readonly width5pct_s: number | null;
  /** centroid/(2·FWHM) */
  readonly resolvingPowerFwhm: number | null;
  /** centroid/(2·width at 5 %) */
  readonly resolvingPower10pctValley: number | null;
}

export interface Valley {
  /** Indices into the peak list of the two neighbours. */
  readonly leftPeak: number;
  readonly rightPeak: number;
  readonly index: number;
  readonly time_s: number;
  readonly intensity: number;
  /** Valley minimum / height of the smaller neighbour; ≤ 0.1 means resolved at the 10 % valley. */
  readonly valleyFraction: number;
}

export interface PeakInMz {
  readonly mz: number | null;
  readonly fwhm_Th: number | null;
  readonly width5pct_Th: number | null;
  /** m/Δm with Δm the FWHM in m/z, exact for the calibration law. */
  readonly resolvingPowerFwhm: number | null;
  readonly resolvingPower10pctValley: number | null;
}

/** Finds and measures the peaks of intensity(time); returned in time order. */
export function findPeaks(time_s: Float64Array, intensity: Float64Array, options: PeakFindingOptions = {}): Peak[] {
  const n = intensity.length;
  if (time_s.length !== n) throw new RangeError(`time_s length ${time_s.length} differs from intensity length ${n}`);
  if (n < 3) return [];
  let tallest = 0;
  for (let k = 0; k < n; k++) if (intensity[k] > tallest) tallest = intensity[k];
  if (!(tallest > 0)) return [];
  const minHeight = Math.max(options.minHeight ?? 0, (options.minRelativeHeight ?? 0.01) * tallest, Number.MIN_VALUE);
  const minProminence = Math.max(options.minProminence ?? 0, (options.minRelativeProminence ?? 0.01) * tallest);

  const apexes: number[] = [];
  const prominences: number[] = [];
  for (const apex of localMaxima(intensity)) {
    if (intensity[apex] < minHeight) continue;
    const prominence = prominenceAt(intensity, apex);
    if (prominence < minProminence) continue;
    apexes.push(apex);
    prominences.push(prominence);
  }

  // Minimum separation: keep the tallest first, drop anything too close to a kept apex.
  let kept = apexes.map((_, i) => i);
  const separation = options.minSeparation_s ?? 0;
  if (separation > 0) {
    const byHeight = [...kept].sort((p, q) => intensity[apexes[q]] - intensity[apexes[p]]);
    const accepted: number[] = [];
    for (const i of byHeight) {
      if (accepted.every((j) => Math.abs(time_s[apexes[i]] - time_s[apexes[j]]) >= separation)) accepted.push(i);
    }
    kept = accepted.sort((p, q) => apexes[p] - apexes[q]);
  }

  // Regions end at the lowest sample between neighbouring apexes.
  const bounds: number[] = [0];
  for (let m = 0; m + 1 < kept.length; m++) bounds.push(argMin(intensity, apexes[kept[m]] + 1, apexes[kept[m + 1]] - 1));
  bounds.push(n - 1);
  return kept.map((i, m) =>
    measurePeak(time_s, intensity, apexes[i], bounds[m], bounds[m + 1], prominences[i], m > 0, m + 1 < kept.length),
  );
}

/**
 * Measures one peak whose apex and region are known. `sharedStart`/`sharedEnd` say whether the
 * region's bounding samples are valleys shared with a neighbour (they then count half in the area).
 */
export function measurePeak(
  time_s: Float64Array,
  intensity: Float64Array,
  apex: number,
  regionStart: number,
  regionEnd: number,
  prominence: number = intensity[apex],
  sharedStart = false,
  sharedEnd = false,
): Peak {
  const { height, time_s: apexTime_s } = parabolicApex(time_s, intensity, apex);
  const half = crossingsAt(time_s, intensity, apex, regionStart, regionEnd, 0.5 * height);
  const five = crossingsAt(time_s, intensity, apex, regionStart, regionEnd, 0.05 * height);
  let area = 0;
  for (let k = regionStart; k <= regionEnd; k++) area += intensity[k];
  if (sharedStart) area -= 0.5 * intensity[regionStart];
  if (sharedEnd) area -= 0.5 * intensity[regionEnd];

  const centroid = centroidBetween(time_s, intensity, apex, half.leftSegment, half.left ?? time_s[regionStart], half.rightSegment, half.right ?? time_s[regionEnd]);
  const fwhm = half.left !== null && half.right !== null ? half.right - half.left : null;
  const width5 = five.left !== null && five.right !== null ? five.right - five.left : null;
  return {
    apexIndex: apex,
    apexTime_s,
    height,
    prominence,
    regionStart,
    regionEnd,
    area,
    centroid_s: centroid,
    halfLeft_s: half.left,
    halfRight_s: half.right,
    fwhm_s: fwhm,
    left5pct_s: five.left,
    right5pct_s: five.right,
    width5pct_s: width5,
    resolvingPowerFwhm: resolvingPowerFromWidth(centroid, fwhm),
    resolvingPower10pctValley: resolvingPowerFromWidth(centroid, width5),
  };
}

/** t/(2·Δt) (IUPAC 2013 R = m/Δm with m ∝ t²); null when undefined. */
export function resolvingPowerFromWidth(time_s: number, width_s: number | null): number | null {
  if (width_s === null || !(width_s > 0) || !(time_s > 0)) return null;
  return time_s / (2 * width_s);
}

/** Valleys between each pair of neighbouring peaks (peaks in time order, as findPeaks returns). */
export function valleysBetween(time_s: Float64Array, intensity: Float64Array, peaks: readonly Peak[]): Valley[] {
  const out: Valley[] = [];
  for (let m = 0; m + 1 < peaks.length; m++) {
    const index = argMin(intensity, peaks[m].apexIndex + 1, peaks[m + 1].apexIndex - 1);
    const smaller = Math.min(peaks[m].height, peaks[m + 1].height);
    out.push({
      leftPeak: m,
      rightPeak: m + 1,
      index,
      time_s: time_s[index],
      intensity: intensity[index],
      valleyFraction: intensity[index] / smaller,
    });
  }
  return out;
}

/** The peak's position, widths and resolving powers in m/z through a calibration. */
export function peakInMz(peak: Peak, calibration: CalibrationCoefficients): PeakInMz {
  const mz = mzFromTime(peak.centroid_s, calibration);
  const span = (left: number | null, right: number | null): number | null => {
    if (left === null || right === null) return null;
    const lo = mzFromTime(left, calibration);
    const hi = mzFromTime(right, calibration);
    return lo === null || hi === null ? null : hi - lo;
  };
  const fwhm = span(peak.halfLeft_s, peak.halfRight_s);
  const width5 = span(peak.left5pct_s, peak.right5pct_s);
  const ratio = (width: number | null): number | null => (mz === null || width === null || !(width > 0) ? null : mz / width);
  return { mz, fwhm_Th: fwhm, width5pct_Th: width5, resolvingPowerFwhm: ratio(fwhm), resolvingPower10pctValley: ratio(width5) };
}

/** The peak whose centroid is nearest to time_s, if within tolerance_s; null otherwise. */
export function nearestPeak(peaks: readonly Peak[], time_s: number, tolerance_s: number): Peak | null {
  let best: Peak | null = null;
  for (const p of peaks) {
    const d = Math.abs(p.centroid_s - time_s);
    if (d <= tolerance_s && (best === null || d < Math.abs(best.centroid_s - time_s))) best = p;
  }
  return best;
}

// --- helpers -------------------------------------------------------------------------------------

/** Vertex of the parabola through samples apex−1, apex, apex+1 (uniform or not). */
function parabolicApex(x: Float64Array, y: Float64Array, apex: number): { height: number; time_s: number } {
  const top = y[apex];
  if (apex < 1 || apex > y.length - 2) return { height: top, time_s: x[apex] };
  // Newton form about the apex: p(u) = top + b·u + c·u², u = x − x[apex].
  const ul = x[apex - 1] - x[apex];
  const ur = x[apex + 1] - x[apex];
  const sl = (y[apex - 1] - top) / ul;
  const sr = (y[apex + 1] - top) / ur;
  const c = (sr - sl) / (ur - ul);
  const b = sl - c * ul;
  if (!(c < 0)) return { height: top, time_s: x[apex] };
  const u = -b / (2 * c);
  if (!(u >= ul && u <= ur)) return { height: top, time_s: x[apex] };
  return { height: Math.max(top, top + b * u + c * u * u), time_s: x[apex] + u };
}

/** Interior local maxima; a flat top counts once, at its middle sample. */
function localMaxima(y: Float64Array): number[] {
  const out: number[] = [];
  const n = y.length;
  let i = 1;
  while (i < n - 1) {
    if (y[i] > y[i - 1]) {
      let j = i;
      while (j < n - 1 && y[j + 1] === y[i]) j++;
      if (j < n - 1 && y[j + 1] < y[i]) out.push((i + j) >> 1);
      i = j + 1;
    } else {
      i++;
    }
  }
  return out;
}

/** Topographic prominence: walk each way until higher ground or the end, take the higher minimum. */
function prominenceAt(y: Float64Array, apex: number): number {
  const h = y[apex];
  let leftMin = h;
  for (let k = apex - 1; k >= 0 && y[k] <= h; k--) if (y[k] < leftMin) leftMin = y[k];
  let rightMin = h;
  for (let k = apex + 1; k < y.length && y[k] <= h; k++) if (y[k] < rightMin) rightMin = y[k];
  return h - Math.max(leftMin, rightMin);
}

/** Index of the lowest sample in [from, to] (the first, on ties); apexes are ≥ 2 samples apart. */
function argMin(y: Float64Array, from: number, to: number): number {
  let best = from;
  for (let k = from + 1; k <= to; k++) if (y[k] < y[best]) best = k;
  return best;
}

interface Crossings {
  left: number | null;
  right: number | null;
  /** Segment (index of its left sample) holding each crossing, or the region edge when not found. */
  leftSegment: number;
  rightSegment: number;
}

/** First samples below `level` on each side of the apex within [lo, hi], crossing interpolated. */
function crossingsAt(x: Float64Array, y: Float64Array, apex: number, lo: number, hi: number, level: number): Crossings {
  let left: number | null = null;
  let leftSegment = lo;
  for (let k = apex - 1; k >= lo; k--) {
    if (y[k] < level) {
      left = interpolate(x[k], y[k], x[k + 1], y[k + 1], level);
      leftSegment = k;
      break;
    }
  }
  let right: number | null = null;
  let rightSegment = hi - 1;
  for (let k = apex + 1; k <= hi; k++) {
    if (y[k] < level) {
      right = interpolate(x[k - 1], y[k - 1], x[k], y[k], level);
      rightSegment = k - 1;
      break;
    }
  }
  return { left, right, leftSegment, rightSegment };
}

function interpolate(x0: number, y0: number, x1: number, y1: number, level: number): number {
  return x0 + ((level - y0) * (x1 - x0)) / (y1 - y0);
}

/**
 * ∫x·y dx / ∫y dx of the piecewise-linear profile from xL (in segment jL) to xR (in segment jR).
 * Times are taken relative to the apex to keep the products well scaled.
 */
function centroidBetween(x: Float64Array, y: Float64Array, apex: number, jL: number, xL: number, jR: number, xR: number): number {
  const origin = x[apex];
  const valueAt = (j: number, at: number): number => y[j] + ((y[j + 1] - y[j]) * (at - x[j])) / (x[j + 1] - x[j]);
  let mass = 0;
  let moment = 0;
  const piece = (p: number, yp: number, q: number, yq: number): void => {
    const h = q - p;
    const pr = p - origin;
    const qr = q - origin;
    mass += 0.5 * h * (yp + yq);
    moment += (h / 6) * (pr * (2 * yp + yq) + qr * (yp + 2 * yq));
  };
  // jL < apex ≤ jR: the left crossing lies left of the apex sample, the right one right of it.
  piece(xL, valueAt(jL, xL), x[jL + 1], y[jL + 1]);
  for (let k = jL + 1; k < jR; k++) piece(x[k], y[k], x[k + 1], y[k + 1]);
  piece(x[jR], y[jR], xR, valueAt(jR, xR));
  return mass > 0 ? origin + moment / mass : origin;
}
