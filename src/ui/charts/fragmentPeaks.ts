/**
 * Fragment peaks in the app's spectrum: the run's decay products (RunOutput.products, computed in the
 * worker) appended to the precursors' per-ion arrays as series of their own, drawn dashed, with a
 * label at each fragment peak giving its true and apparent m/z. Neutrals and ions recorded on the
 * linear detector behind the mirror get a series of their own (that detector has no m/z scale: it
 * shows on the time axis only). Pure functions, apart from `drawPeakMarks` on the chart's canvas.
 */
import type uPlot from 'uplot';
import { mzFromTime, type CalibrationCoefficients } from '../../analysis/calibration';
import { Fate } from '../../physics/fates';
import type { ProductArrays, ProductChannel } from '../../simulation/productArrays';
import type { SpectrumAxis, SpectrumPeak, SpectrumRun } from './spectrumChart';

/** A label drawn at a fragment peak: position on each axis (null: not on that axis) and its text. */
export interface PeakMark {
  readonly time_us: number | null;
  readonly mz: number | null;
  readonly text: string;
  readonly colour: string;
}

/** Series style of the decay products: one light dashed colour for fragments, another for neutrals. */
export const FRAGMENT_COLOUR = '#f2f2f2';
export const NEUTRAL_COLOUR = '#c9a0ff';
export const FRAGMENT_DASH: readonly number[] = [5, 3];

/** Products with fewer detected ions than this get a series but no label (a label on noise helps nobody). */
const MIN_LABELLED_IONS = 5;

function fmt(v: number | null, digits: number): string {
  return v === null || !Number.isFinite(v) ? '—' : v.toFixed(digits);
}

/** The product series, in drawing order: what the default view spans first, the neutrals' slow tail last. */
const KINDS = [
  { label: 'fragment ions', colour: FRAGMENT_COLOUR },
  { label: 'behind-mirror detector', colour: NEUTRAL_COLOUR },
  { label: 'neutrals', colour: NEUTRAL_COLOUR },
] as const;

function kindOf(ch: ProductChannel, behind: boolean): number {
  return behind ? 1 : ch.charge === 0 ? 2 : 0;
}

/**
 * The spectrum run with the products appended after the precursors' series: one dashed series per
 * kind (charged fragment ions at the detector; anything on the detector behind the mirror; neutrals
 * at the detector), so the legend stays short, and one label per product at its own peak giving its
 * true and apparent m/z. Ions on the behind-mirror detector count as detected there.
 *
 * Neutrals formed while their precursor was slow (in the source before extraction, in a mirror near
 * the turning point) keep that speed and trickle onto the detector long after everything else: their series comes last and the default view
 * (`extentEnd`) stops before it; its label says how many lie beyond the view.
 */
export function withFragmentSeries(run: SpectrumRun, products: ProductArrays | undefined, calibration: CalibrationCoefficients | null): SpectrumRun {
  if (!products || products.fate.length === 0) return run;
  const rows = products.channels.length;
  // Counts per (row, detector): index 2·row (main detector) and 2·row + 1 (behind the mirror).
  const counts = new Int32Array(2 * rows);
  for (let i = 0; i < products.fate.length; i++) {
    const k = productKey(products, i);
    if (k >= 0) counts[k]++;
  }
  const kindCount = new Int32Array(KINDS.length);
  for (let k = 0; k < 2 * rows; k++) kindCount[kindOf(products.channels[k >> 1], (k & 1) === 1)] += counts[k];
  const kinds = [0, 1, 2].filter((g) => kindCount[g] > 0);
  if (kinds.length === 0) return run;
  const base = run.time_us.length;
  const total = kindCount[0] + kindCount[1] + kindCount[2];
  const time_us = new Float64Array(base + total);
  const mz = new Float64Array(base + total);
  const fate = new Uint8Array(base + total);
  time_us.set(run.time_us);
  mz.set(run.mz);
  fate.set(run.fate);
  // Ions ordered kind by kind, and within a kind product by product (each product one contiguous range).
  const kindStart = new Int32Array(KINDS.length + 1);
  kindStart[0] = base;
  for (let g = 0; g < KINDS.length; g++) kindStart[g + 1] = kindStart[g] + kindCount[g];
  const keyStart = new Int32Array(2 * rows);
  const fill = kindStart.slice(0, KINDS.length);
  for (let k = 0; k < 2 * rows; k++) {
    const g = kindOf(products.channels[k >> 1], (k & 1) === 1);
    keyStart[k] = fill[g];
    fill[g] += counts[k];
  }
  const next = keyStart.slice();
  for (let i = 0; i < products.fate.length; i++) {
    const k = productKey(products, i);
    if (k < 0) continue;
    const j = next[k]++;
    const t = products.flightTime_s[i];
    time_us[j] = t * 1e6;
    // The precursor calibration gives the apparent m/z at the analyser's detector; the one behind the mirror has none.
    const m = (k & 1) === 0 && calibration ? mzFromTime(t, calibration) : null;
    mz[j] = m ?? NaN;
    fate[j] = Fate.DETECTED;
  }
  const start = Int32Array.from([...run.speciesStart, ...kinds.map((g) => kindStart[g + 1])]);
  const peaks: SpectrumPeak[] = [...run.peaks, ...kinds.map((g) => seriesPeak(time_us, mz, kindStart[g], kindStart[g + 1]))];
  const marks: PeakMark[] = [...(run.marks ?? [])];
  for (let k = 0; k < 2 * rows; k++) {
    const ch = products.channels[k >> 1];
    const behind = (k & 1) === 1;
    // Neutrals at the analyser's detector sit under their precursor's peak (linear mode) or trail behind: no label.
    if (counts[k] < MIN_LABELLED_IONS || (ch.charge === 0 && !behind)) continue;
    const peak = seriesPeak(time_us, mz, keyStart[k], keyStart[k] + counts[k]);
    if (peak.time_us === null) continue;
    const text = behind ? `${ch.label}, behind mirror` : `m/z ${fmt(ch.mz, 1)} → apparent ${fmt(ch.apparentMz ?? peak.mz, 1)}`;
    marks.push({ time_us: peak.time_us, mz: behind ? null : peak.mz, text, colour: KINDS[kindOf(ch, behind)].colour });
  }
  // The default view: every precursor, and the central 99 % of each product kind (a slow tail beyond it is counted in the label).
  const defaultExtent = { time: viewExtent(run, time_us, kindStart, kinds), mz: viewExtent(run, mz, kindStart, kinds) };
  const labels = kinds.map((g) => withTail(KINDS[g].label, time_us, kindStart[g], kindStart[g + 1], defaultExtent.time));
  return {
    ...run,
    time_us,
    mz,
    fate,
    speciesStart: start,
    labels: [...run.labels, ...labels],
    colours: [...run.colours, ...kinds.map((g) => KINDS[g].colour)],
    dashed: [...(run.dashed ?? run.labels.map(() => false)), ...kinds.map(() => true)],
    peaks,
    marks,
    defaultExtent,
  };
}

/** Union of the precursors' detected extent and the 0.5–99.5 % quantiles of each product kind; null when nothing is finite. */
function viewExtent(run: SpectrumRun, values: Float64Array, kindStart: Int32Array, kinds: readonly number[]): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < run.time_us.length; i++) {
    const v = values[i];
    if (run.fate[i] !== Fate.DETECTED || !Number.isFinite(v)) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  for (const g of kinds) {
    const v = Array.from(values.subarray(kindStart[g], kindStart[g + 1])).filter(Number.isFinite).sort((a, b) => a - b);
    if (v.length === 0) continue;
    lo = Math.min(lo, v[Math.floor(0.005 * (v.length - 1))]);
    hi = Math.max(hi, v[Math.ceil(0.995 * (v.length - 1))]);
  }
  return lo <= hi ? [lo, hi] : null;
}

/** The series label, with the count of its ions beyond the default view (slow neutrals) when there are any. */
function withTail(label: string, time_us: Float64Array, from: number, to: number, extent: [number, number] | null): string {
  if (!extent) return label;
  let beyond = 0;
  let latest = -Infinity;
  for (let i = from; i < to; i++) {
    if (time_us[i] > extent[1] || time_us[i] < extent[0]) beyond++;
    latest = Math.max(latest, time_us[i]);
  }
  return beyond > 0 ? `${label} (${beyond} beyond the view, to ${latest.toFixed(0)} µs)` : label;
}

/** Row key of product ion i: 2·channel row at the analyser's detector, 2·row + 1 behind the mirror, −1 not recorded. */
function productKey(products: ProductArrays, i: number): number {
  const f = products.fate[i];
  if (f === Fate.DETECTED) return 2 * products.channel[i];
  if (f === Fate.DETECTED_BEHIND_MIRROR) return 2 * products.channel[i] + 1;
  return -1;
}

/** Median position and a robust width (half the central 76 % span ≈ FWHM for a gaussian) of a series. */
function seriesPeak(time_us: Float64Array, mz: Float64Array, from: number, to: number): SpectrumPeak {
  const centre = (values: Float64Array): [number | null, number | null] => {
    const v = Array.from(values.subarray(from, to)).filter(Number.isFinite).sort((a, b) => a - b);
    if (v.length === 0) return [null, null];
    const q = (p: number) => v[Math.min(v.length - 1, Math.max(0, Math.round(p * (v.length - 1))))];
    return [q(0.5), (q(0.88) - q(0.12)) / 2];
  };
  const [t, wt] = centre(time_us);
  const [m, wm] = centre(mz);
  return { time_us: t, fwhm_us: wt, mz: m, fwhm_mz: wm };
}

/**
 * Draw the fragment labels of `marks` on the chart (uPlot draw hook): a dashed line at each peak and
 * its text beside it near the top; marks that fall on one pixel column share one line of text.
 */
export function drawPeakMarks(u: uPlot, marks: readonly PeakMark[] | undefined, axis: SpectrumAxis): void {
  if (!marks || marks.length === 0) return;
  const ratio = typeof devicePixelRatio === 'number' ? devicePixelRatio : 1;
  const { left, top, width, height } = u.bbox;
  const shown: { px: number; texts: string[]; colour: string }[] = [];
  for (const mark of marks) {
    const x = axis === 'time' ? mark.time_us : mark.mz;
    if (x === null || !Number.isFinite(x)) continue;
    const px = u.valToPos(x, 'x', true);
    if (px < left || px > left + width) continue;
    const same = shown.find((m) => Math.abs(m.px - px) < 3 * ratio);
    if (same) same.texts.push(mark.text);
    else shown.push({ px, texts: [mark.text], colour: mark.colour });
  }
  shown.sort((a, b) => a.px - b.px);
  const ctx = u.ctx;
  ctx.save();
  ctx.font = `${11 * ratio}px sans-serif`;
  ctx.textBaseline = 'top';
  // uPlot leaves the context right-aligned after its y-axis labels: text would then run leftwards off the plot.
  ctx.textAlign = 'left';
  const drawn: number[] = [];
  // Rows of text under the top edge: each label takes the first row where it overlaps no other label.
  const rowHeight = 13 * ratio;
  const rows = Math.max(1, Math.min(8, Math.floor((height - 4 * ratio) / rowHeight)));
  const taken: [number, number][][] = Array.from({ length: rows }, () => []);
  shown.forEach((m, k) => {
    ctx.strokeStyle = m.colour;
    ctx.setLineDash([3 * ratio, 3 * ratio]);
    ctx.beginPath();
    ctx.moveTo(m.px, top);
    ctx.lineTo(m.px, top + height);
    ctx.stroke();
    const text = fitText(ctx, m.texts.length > 1 ? merged(m.texts) : m.texts[0], width);
    const w = ctx.measureText(text).width;
    // Beside the line, on the side with room; always inside the plot.
    const tx = m.px + 4 * ratio + w <= left + width ? m.px + 4 * ratio : Math.max(left, Math.min(m.px - 4 * ratio - w, left + width - w));
    let row = taken.findIndex((spans) => spans.every(([a, b]) => tx + w + 4 * ratio <= a || tx >= b + 4 * ratio));
    if (row < 0) row = k % rows;
    taken[row].push([tx, tx + w]);
    const y = top + 2 * ratio + row * rowHeight;
    ctx.fillStyle = m.colour;
    ctx.fillText(text, tx, y);
    drawn.push(tx / ratio, (tx + w) / ratio, y / ratio);
  });
  ctx.restore();
  // Where the labels went (CSS px in the canvas, with the plot's edges), for the layout check in the browser tests.
  u.root.dataset.peakLabels = JSON.stringify({ plot: [left / ratio, (left + width) / ratio], labels: drawn });
}

/** `text`, cut short with an ellipsis where it is wider than `maxWidth` (canvas px). */
function fitText(ctx: CanvasRenderingContext2D, text: string, maxWidth: number): string {
  if (ctx.measureText(text).width <= maxWidth) return text;
  let lo = 0;
  let hi = text.length;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (ctx.measureText(text.slice(0, mid) + '…').width <= maxWidth) lo = mid;
    else hi = mid - 1;
  }
  return text.slice(0, lo) + '…';
}

/** "m/z a → apparent x" and "m/z b → apparent x" on one column read "m/z a, b → apparent x". */
function merged(texts: readonly string[]): string {
  const parts = texts.map((t) => /^m\/z (\S+) → (apparent \S+)$/.exec(t));
  if (parts.every((p) => p !== null) && parts.every((p) => p![2] === parts[0]![2])) return `m/z ${parts.map((p) => p![1]).join(', ')} → ${parts[0]![2]}`;
  return texts.join('; ');
}
