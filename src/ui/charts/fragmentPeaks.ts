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
import { MAX_SPECTRUM_SERIES } from './spectrumSeries';

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

function seriesLabel(ch: ProductChannel, behind: boolean): string {
  if (behind) return `${ch.label} · detector behind mirror`;
  if (ch.mz === null) return ch.label.includes('neutral') ? ch.label : `${ch.label} · neutral`;
  return `${ch.label} · m/z ${fmt(ch.mz, 2)}, apparent ${fmt(ch.apparentMz, 2)}`;
}

/**
 * The spectrum run with the products appended: one series per product channel and detector with at
 * least one ion recorded, after the precursors' series. Product ions are ordered series by series so
 * each series is one contiguous range; ions on the behind-mirror detector count as detected there.
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
  const keys: number[] = [];
  for (let k = 0; k < 2 * rows; k++) if (counts[k] > 0) keys.push(k);
  if (keys.length === 0) return run;
  // One series per product and detector; when that would pass the chart's series limit, the neutrals
  // share one series per detector; past it still, one series per kind.
  const charged = keys.filter((k) => (k & 1) === 0 && products.channels[k >> 1].charge !== 0).length;
  const level = run.labels.length + keys.length <= MAX_SPECTRUM_SERIES ? 0 : run.labels.length + charged + 2 <= MAX_SPECTRUM_SERIES ? 1 : 2;
  const groupOf = new Int32Array(2 * rows).fill(-1);
  const groups: { label: string; colour: string; ions: number; keys: number[] }[] = [];
  const shared = new Map<string, number>();
  for (const k of keys) {
    const ch = products.channels[k >> 1];
    const behind = (k & 1) === 1;
    const neutral = ch.charge === 0;
    const kind = behind ? (neutral ? 'neutrals on the detector behind the mirror' : 'products on the detector behind the mirror') : neutral ? 'neutrals' : 'fragment ions';
    const colour = neutral || behind ? NEUTRAL_COLOUR : FRAGMENT_COLOUR;
    const pooled = level === 2 || (level === 1 && (neutral || behind));
    let g = pooled ? (shared.get(kind) ?? -1) : -1;
    if (g < 0) {
      g = groups.length;
      groups.push({ label: pooled ? kind : seriesLabel(ch, behind), colour, ions: 0, keys: [] });
      if (pooled) shared.set(kind, g);
    }
    groupOf[k] = g;
    groups[g].ions += counts[k];
    groups[g].keys.push(k);
  }
  const base = run.time_us.length;
  let extra = 0;
  for (const g of groups) extra += g.ions;
  const time_us = new Float64Array(base + extra);
  const mz = new Float64Array(base + extra);
  const fate = new Uint8Array(base + extra);
  time_us.set(run.time_us);
  mz.set(run.mz);
  fate.set(run.fate);
  const start = new Int32Array(run.speciesStart.length + groups.length);
  start.set(run.speciesStart);
  const next = new Int32Array(groups.length);
  let end = base;
  groups.forEach((g, j) => {
    next[j] = end;
    end += g.ions;
    start[run.speciesStart.length + j] = end;
  });
  for (let i = 0; i < products.fate.length; i++) {
    const k = productKey(products, i);
    if (k < 0) continue;
    const j = next[groupOf[k]]++;
    const t = products.flightTime_s[i];
    time_us[j] = t * 1e6;
    // The precursor calibration gives the apparent m/z at the analyser's detector; the one behind the mirror has none.
    const m = (k & 1) === 0 && calibration ? mzFromTime(t, calibration) : null;
    mz[j] = m ?? NaN;
    fate[j] = Fate.DETECTED;
  }
  const peaks: SpectrumPeak[] = [...run.peaks];
  const marks: PeakMark[] = [...(run.marks ?? [])];
  groups.forEach((g, j) => {
    const from = start[run.speciesStart.length + j - 1];
    const to = start[run.speciesStart.length + j];
    peaks.push(seriesPeak(time_us, mz, from, to));
  });
  // One label per product and detector, at that product's own peak (its ions are contiguous within its group).
  const keyStart = new Int32Array(2 * rows);
  groups.forEach((g, j) => {
    let at = start[run.speciesStart.length + j - 1];
    for (const k of g.keys) {
      keyStart[k] = at;
      at += counts[k];
    }
  });
  for (const k of keys) {
    const ch = products.channels[k >> 1];
    const behind = (k & 1) === 1;
    // Neutrals at the analyser's detector sit under their precursor's peak (linear mode): the legend names them, no label.
    if (counts[k] < MIN_LABELLED_IONS || (ch.charge === 0 && !behind)) continue;
    const peak = seriesPeak(time_us, mz, keyStart[k], keyStart[k] + counts[k]);
    if (peak.time_us === null) continue;
    const text = behind ? `${ch.label}, behind mirror` : `m/z ${fmt(ch.mz, 1)} → apparent ${fmt(ch.apparentMz ?? peak.mz, 1)}`;
    marks.push({ time_us: peak.time_us, mz: behind ? null : peak.mz, text, colour: groups[groupOf[k]].colour });
  }
  return {
    ...run,
    time_us,
    mz,
    fate,
    speciesStart: start,
    labels: [...run.labels, ...groups.map((g) => g.label)],
    colours: [...run.colours, ...groups.map((g) => g.colour)],
    dashed: [...(run.dashed ?? run.labels.map(() => false)), ...groups.map(() => true)],
    peaks,
    marks,
  };
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

/** Draw the fragment labels of `marks` on the chart (uPlot draw hook), at the top of the plot area. */
export function drawPeakMarks(u: uPlot, marks: readonly PeakMark[] | undefined, axis: SpectrumAxis): void {
  if (!marks || marks.length === 0) return;
  const ctx = u.ctx;
  const ratio = typeof devicePixelRatio === 'number' ? devicePixelRatio : 1;
  ctx.save();
  ctx.font = `${11 * ratio}px sans-serif`;
  ctx.textBaseline = 'top';
  const top = u.bbox.top;
  const left = u.bbox.left;
  const right = u.bbox.left + u.bbox.width;
  let row = 0;
  for (const mark of marks) {
    const x = axis === 'time' ? mark.time_us : mark.mz;
    if (x === null || !Number.isFinite(x)) continue;
    const px = u.valToPos(x, 'x', true);
    if (px < left || px > right) continue;
    const y = top + (4 + 14 * (row++ % 4)) * ratio;
    ctx.strokeStyle = mark.colour;
    ctx.setLineDash([3 * ratio, 3 * ratio]);
    ctx.beginPath();
    ctx.moveTo(px, y + 12 * ratio);
    ctx.lineTo(px, top + u.bbox.height);
    ctx.stroke();
    ctx.fillStyle = mark.colour;
    const width = ctx.measureText(mark.text).width;
    ctx.fillText(mark.text, Math.min(Math.max(px - width / 2, left), right - width), y);
  }
  ctx.restore();
}
