/**
 * The spectrum: counts per bin against flight time (µs) or m/z (Th), one stepped series per species
 * in its m/z colour (or one total when there are many species). Binning happens here in pure
 * functions on the per-ion values the worker returned; zooming rebins the visible range, so a
 * zoomed peak shows its real shape rather than a few wide bins.
 */
import uPlot from 'uplot';
import { Fate } from '../../physics/fates';
import { accumulate, binCentres, binsForWidth, detectedExtent, paddedRange, type BinRange } from './binning';
import { axis, chartPng, chartSize, fitChart, followSize, withAlpha } from './theme';
import { drawPeakMarks, FRAGMENT_DASH, type PeakMark } from './fragmentPeaks';

export type SpectrumAxis = 'time' | 'mz';

export interface SpectrumPeak {
  /** Centre and FWHM in µs and in Th (null when unknown). */
  readonly time_us: number | null;
  readonly fwhm_us: number | null;
  readonly mz: number | null;
  readonly fwhm_mz: number | null;
}

export interface SpectrumRun {
  /** Per-ion arrival time in µs, and m/z from the run's calibration (NaN where there is none). */
  readonly time_us: Float64Array;
  readonly mz: Float64Array;
  readonly fate: Uint8Array;
  readonly speciesStart: Int32Array;
  readonly labels: readonly string[];
  readonly colours: readonly string[];
  readonly peaks: readonly SpectrumPeak[];
  /** Series drawn dashed (decay products, ./fragmentPeaks.ts); absent: none. */
  readonly dashed?: readonly boolean[];
  /** Labels drawn at peaks (fragment true and apparent m/z). */
  readonly marks?: readonly PeakMark[];
  /** The default (full) range per axis when it is not every detected ion's (slow product tails, ./fragmentPeaks.ts). */
  readonly defaultExtent?: { readonly time: [number, number] | null; readonly mz: [number, number] | null };
}

/**
 * An extra series drawn over the simulated histogram (a measured spectrum), computed for the bins
 * on show; `scale` 'own' gives it its own y axis on the right.
 */
export interface SpectrumOverlay {
  readonly label: string;
  readonly colour: string;
  readonly scale: 'shared' | 'own';
  readonly axisLabel: string;
  /** Values per bin of `range` on `axis`, given the simulated total per bin; null when it has nothing on this axis. */
  values(axis: SpectrumAxis, range: BinRange, simulated: Float64Array): Float64Array | null;
  /** Told after each redraw which range is on show. */
  drawn?(axis: SpectrumAxis, range: BinRange): void;
}

/** Species drawn as separate series up to this count; above it, one total series. */
const MAX_SERIES = 12;

export class SpectrumChart {
  private chart: uPlot | null = null;
  private run: SpectrumRun | null = null;
  private axisKind: SpectrumAxis = 'time';
  private fullRange: BinRange | null = null;
  private range: BinRange | null = null;
  private rebinning = false;
  private overlay: SpectrumOverlay | null = null;
  private readonly observer: ResizeObserver;
  /** Called after every redraw with new data (for the latency figure). */
  onDrawn: () => void = () => {};

  constructor(private readonly host: HTMLElement) {
    this.observer = followSize(host, () => this.chart);
    host.addEventListener('dblclick', () => this.showAll());
  }

  get axis(): SpectrumAxis {
    return this.axisKind;
  }

  setRun(run: SpectrumRun): void {
    const sameSeries = this.run !== null && this.seriesCount(this.run) === this.seriesCount(run) && this.run.labels.join('\n') === run.labels.join('\n');
    this.run = run;
    const keepZoom = sameSeries && this.range !== null && this.fullRange !== null && this.range !== this.fullRange;
    this.fullRange = this.computeFullRange();
    if (!keepZoom) this.range = this.fullRange;
    if (!sameSeries || !this.chart) this.rebuild();
    this.draw();
  }

  setAxis(kind: SpectrumAxis): void {
    if (kind === this.axisKind) return;
    this.axisKind = kind;
    this.fullRange = this.computeFullRange();
    this.range = this.fullRange;
    this.rebuild();
    this.draw();
  }

  /** Zoom onto one species' peak (±6 FWHM, at least ±0.2 % of its position), or back to everything. */
  zoomToSpecies(index: number | null): void {
    if (!this.run) return;
    if (index === null) return this.showAll();
    const peak = this.run.peaks[index];
    const centre = this.axisKind === 'time' ? peak?.time_us : peak?.mz;
    const width = this.axisKind === 'time' ? peak?.fwhm_us : peak?.fwhm_mz;
    if (centre === null || centre === undefined) return;
    const half = Math.max(6 * (width ?? 0), 0.002 * Math.abs(centre));
    this.range = { lo: centre - half, hi: centre + half, bins: Math.min(400, this.bins()) };
    this.draw();
  }

  /** Draw (or, with null, remove) an overlay series. */
  setOverlay(overlay: SpectrumOverlay | null): void {
    this.overlay = overlay;
    this.rebuild();
    this.draw();
  }

  showAll(): void {
    this.range = this.fullRange;
    this.draw();
  }

  /** The currently shown x range (µs or Th). */
  get visibleRange(): readonly [number, number] | null {
    return this.range ? [this.range.lo, this.range.hi] : null;
  }

  toPng(): Promise<Blob | null> {
    return chartPng(this.chart);
  }

  private seriesCount(run: SpectrumRun): number {
    return run.labels.length > MAX_SERIES ? 1 : run.labels.length;
  }

  private bins(): number {
    return binsForWidth(this.host.clientWidth || 600);
  }

  private values(): Float64Array | null {
    if (!this.run) return null;
    return this.axisKind === 'time' ? this.run.time_us : this.run.mz;
  }

  private computeFullRange(): BinRange | null {
    const values = this.values();
    if (!values || !this.run) return null;
    const extent = this.run.defaultExtent ? this.run.defaultExtent[this.axisKind] : detectedExtent(values, this.run.fate, Fate.DETECTED);
    return extent ? paddedRange(extent, this.bins()) : null;
  }

  private rebuild(): void {
    this.chart?.destroy();
    this.chart = null;
    const run = this.run;
    if (!run) return;
    const many = run.labels.length > MAX_SERIES;
    const series: uPlot.Series[] = [{ label: this.axisKind === 'time' ? 'µs' : 'Th' }];
    const stepped = uPlot.paths.stepped!({ align: 1 });
    const list = many ? [{ label: 'all species', colour: '#8fd0ff', dashed: false }] : run.labels.map((label, i) => ({ label, colour: run.colours[i], dashed: run.dashed?.[i] === true }));
    for (const s of list) series.push({ label: s.label, stroke: s.colour, fill: withAlpha(s.colour, s.dashed ? 0.06 : 0.16), width: 1.25, paths: stepped, points: { show: false }, ...(s.dashed ? { dash: [...FRAGMENT_DASH] } : {}) });
    const overlay = this.overlay;
    if (overlay) series.push({ label: overlay.label, stroke: overlay.colour, width: 1.5, paths: stepped, points: { show: false }, scale: overlay.scale === 'own' ? 'overlay' : 'y' });
    const overlayAxis = overlay?.scale === 'own' ? [axis(overlay.axisLabel, { scale: 'overlay', side: 1, size: 56, grid: { show: false } })] : [];
    const opts: uPlot.Options = {
      ...chartSize(this.host),
      scales: { x: { time: false }, y: { range: (_u, _min, max) => [0, Math.max(1, max) * 1.08] }, overlay: { range: (_u, _min, max) => [0, (max > 0 ? max : 1) * 1.08] } },
      axes: [axis(this.axisKind === 'time' ? 'flight time (µs)' : 'm/z (Th)'), axis('ions per bin', { size: 52 }), ...overlayAxis],
      series,
      cursor: { drag: { x: true, y: false, setScale: true }, bind: { dblclick: () => null } },
      legend: { live: false },
      hooks: {
        setScale: [
          (u, key) => {
            if (key !== 'x' || this.rebinning || !this.range) return;
            const min = u.scales.x.min;
            const max = u.scales.x.max;
            if (min === undefined || max === undefined || min === null || max === null) return;
            if (Math.abs(min - this.range.lo) < 1e-12 * Math.abs(max) && Math.abs(max - this.range.hi) < 1e-12 * Math.abs(max)) return;
            this.range = { lo: min, hi: max, bins: Math.min(600, this.bins()) };
            queueMicrotask(() => this.draw());
          },
        ],
        draw: [(u) => drawPeakMarks(u, this.run?.marks, this.axisKind), () => this.onDrawn()],
      },
    };
    this.chart = new uPlot(opts, [[]], this.host);
    // The one-row legend cuts long labels short (style.css): the full label is the entry's tooltip.
    this.chart.root.querySelectorAll<HTMLElement>('.u-legend .u-series').forEach((row) => (row.title = row.textContent ?? ''));
    fitChart(this.host, this.chart);
  }

  private draw(): void {
    const run = this.run;
    const chart = this.chart;
    const values = this.values();
    if (!run || !chart || !values) return;
    const range = this.range;
    if (!range) {
      chart.setData([[], ...run.labels.slice(0, this.seriesCount(run)).map(() => []), ...(this.overlay ? [[]] : [])]);
      return;
    }
    const x = binCentres(range, new Float64Array(range.bins));
    const many = run.labels.length > MAX_SERIES;
    const data: uPlot.AlignedData = [x];
    if (many) {
      data.push(accumulate(values, run.fate, Fate.DETECTED, 0, values.length, range, new Float64Array(range.bins)));
    } else {
      for (let s = 0; s < run.labels.length; s++) {
        data.push(accumulate(values, run.fate, Fate.DETECTED, run.speciesStart[s], run.speciesStart[s + 1], range, new Float64Array(range.bins)));
      }
    }
    if (this.overlay) {
      const total = new Float64Array(range.bins);
      for (let k = 1; k < data.length; k++) for (let b = 0; b < range.bins; b++) total[b] += (data[k] as Float64Array)[b];
      const values = this.overlay.values(this.axisKind, range, total);
      data.push(values ?? new Float64Array(range.bins));
      const index = data.length - 1;
      if (chart.series[index] && chart.series[index].show !== (values !== null)) chart.setSeries(index, { show: values !== null });
    }
    this.rebinning = true;
    try {
      chart.batch(() => {
        chart.setData(data, false);
        chart.setScale('x', { min: range.lo, max: range.hi });
      });
    } finally {
      this.rebinning = false;
    }
    this.overlay?.drawn?.(this.axisKind, range);
  }

  dispose(): void {
    this.observer.disconnect();
    this.chart?.destroy();
    this.chart = null;
  }
}
