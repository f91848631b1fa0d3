/**
 * Histogram binning of per-ion values (arrival time in µs, or m/z) into counts per bin, for the
 * spectrum chart. Pure and allocation-light: callers pass the output arrays. Only detected ions
 * (fate code `detectedCode`) count; values outside [lo, hi) are skipped.
 */

export interface BinRange {
  readonly lo: number;
  readonly hi: number;
  readonly bins: number;
}

/** Fill `centres` with the bin centres of `range`. */
export function binCentres(range: BinRange, centres: Float64Array): Float64Array {
  const width = (range.hi - range.lo) / range.bins;
  for (let b = 0; b < range.bins; b++) centres[b] = range.lo + (b + 0.5) * width;
  return centres;
}

/** Add the detected ions of [from, to) into `counts` (not cleared here, so species can be summed). */
export function accumulate(
  values: Float64Array,
  fate: Uint8Array,
  detectedCode: number,
  from: number,
  to: number,
  range: BinRange,
  counts: Float64Array,
  weight?: Float64Array,
): Float64Array {
  const scale = range.bins / (range.hi - range.lo);
  for (let i = from; i < to; i++) {
    if (fate[i] !== detectedCode) continue;
    const b = Math.floor((values[i] - range.lo) * scale);
    if (b >= 0 && b < range.bins) counts[b] += weight ? weight[i] : 1;
  }
  return counts;
}

/** Smallest and largest value among detected ions, or null when none was detected. */
export function detectedExtent(values: Float64Array, fate: Uint8Array, detectedCode: number, from = 0, to = values.length): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = from; i < to; i++) {
    if (fate[i] !== detectedCode) continue;
    const v = values[i];
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : null;
}

/** A range around [lo, hi] with a margin on each side (fraction of the span, at least `minPad`). */
export function paddedRange(extent: [number, number], bins: number, fraction = 0.04, minPad = 1e-3): BinRange {
  const span = extent[1] - extent[0];
  const pad = Math.max(span * fraction, Math.abs(extent[0]) * minPad, 1e-12);
  return { lo: extent[0] - pad, hi: extent[1] + pad, bins };
}

/** Bins for a chart `pixels` wide: about two per pixel column, within [min, max]. */
export function binsForWidth(pixels: number, min = 200, max = 4000): number {
  return Math.max(min, Math.min(max, Math.round(2 * pixels)));
}
