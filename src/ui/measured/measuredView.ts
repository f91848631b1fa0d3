/**
 * The "Measured" tab: load a measured spectrum (file picker, or drop it on the tab or the spectrum),
 * see it over the simulated spectrum with a residual strip, its peaks matched to the species, and
 * fit chosen instrument parameters to it; "use fitted instrument" makes the fitted preset the
 * working setup (unsaved: saving it makes a new method preset), "download" saves it as a new file.
 * Reading and fitting run in the measured-spectrum worker; this view only shows what it returns.
 */
import uPlot from 'uplot';
import type { FitParameterRequest } from '../../measured/fit';
import type { MeasuredSpectrum, TimeUnit } from '../../measured/measuredSpectrum';
import { MAX_MEASURED_FILE_CHARS } from '../../measured/measuredSpectrum';
import { rebinPoints, type ModelProfile } from '../../measured/profile';
import type { MeasuredSection } from '../../measured/report';
import type { Preset } from '../../presets/schema';
import { numberAt } from '../../tuning/paramPath';
import { parseTuneList } from '../../cli/tuningArgs';
import type { AppContext } from '../appContext';
import type { BinRange } from '../charts/binning';
import type { SpectrumAxis, SpectrumChart, SpectrumOverlay } from '../charts/spectrumChart';
import { axis, fitChart, followSize } from '../charts/theme';
import { byId, downloadText, el, toast } from '../dom';
import { isCancelled } from '../engine/engineClient';
import { fixed } from '../format';
import { presetFileName, presetToJson } from '../io/presetFile';
import { MeasuredClient } from './measuredClient';

const MEASURED_COLOUR = '#f4f4f4';
const FILE_TYPES = '.txt,.csv,.tsv,.dat,.xy,.asc,.jdx,.dx,.jcamp,.mzml,.xml';

/** Parameters offered for fitting, with a description; each is used only if the setup has it (or may add it). */
export const FIT_CANDIDATES: readonly { readonly path: string; readonly what: string }[] = [
  { path: 'acquisition.timeOffset_ns', what: 'time offset (cables, electronics)' },
  { path: 'drift.length_mm', what: 'effective drift length' },
  { path: 'source.extraction.delay_ns', what: 'extraction delay' },
  { path: 'ions.startVelocity.mean_m_per_s', what: 'start velocity, mean' },
  { path: 'ions.startVelocity.sd_m_per_s', what: 'start velocity, spread' },
  { path: 'acquisition.pulseWidth_ns', what: 'detector pulse width' },
  { path: 'acquisition.detectorJitter_ns', what: 'detector jitter' },
];

export class MeasuredView {
  private readonly client = new MeasuredClient();
  private readonly pane = byId('pane-measured');
  private readonly strip = byId('spectrum-residuals');
  private readonly fileInput = el('input', { type: 'file', accept: FILE_TYPES, hidden: '', 'aria-label': 'Measured spectrum file' });
  private readonly unitSelect = el(
    'select',
    { id: 'measured-time-unit', 'aria-label': 'Time unit of the file' },
    el('option', { value: '', text: 'as the file states' }),
    el('option', { value: 'ns', text: 'ns' }),
    el('option', { value: 'us', text: 'µs' }),
    el('option', { value: 's', text: 's' }),
  );
  private readonly displaySelect = el('select', { id: 'measured-display', 'aria-label': 'Measured intensity' }, el('option', { value: 'normalised', text: 'normalised to the simulation' }), el('option', { value: 'absolute', text: 'absolute (own axis)' }));
  private readonly status = el('p', { id: 'measured-status', className: 'summary', 'aria-live': 'polite' });
  private readonly matches = el('div', { id: 'measured-matches', className: 'tune-result' });
  private readonly paramBox = el('div', { id: 'measured-params', className: 'tune-params' });
  private readonly extraPaths = el('input', { id: 'measured-extra', type: 'text', placeholder: 'other paths, e.g. mirror.backPlate_V=1800:1900', 'aria-label': 'Other parameters to fit' });
  private readonly ionsInput = el('input', { id: 'measured-ions', type: 'number', min: '500', max: '200000', step: '500', value: '10000', 'aria-label': 'Ions per simulation' });
  private readonly fitButton = el('button', { id: 'btn-measured-fit', className: 'primary', type: 'button', disabled: '' }, 'Fit');
  private readonly cancelButton = el('button', { id: 'btn-measured-cancel', type: 'button', disabled: '' }, 'Cancel');
  private readonly useButton = el('button', { id: 'btn-measured-use', type: 'button', disabled: '' }, 'Use fitted instrument');
  private readonly downloadButton = el('button', { id: 'btn-measured-download', type: 'button', disabled: '' }, 'Download fitted preset');
  private readonly result = el('div', { id: 'measured-fit', className: 'tune-result', 'aria-live': 'polite' });

  private text: string | null = null;
  private fileName: string | null = null;
  private spectrum: MeasuredSpectrum | null = null;
  private section: MeasuredSection | null = null;
  private profile: ModelProfile | null = null;
  private fitted: Preset | null = null;
  /** The setup the shown analysis belongs to (its time offset places the measured data on the flight-time axis). */
  private analysedFor: string | null = null;
  private busy = false;
  private stripChart: uPlot | null = null;
  private readonly stripObserver: ResizeObserver;
  private lastRange: { axis: SpectrumAxis; range: BinRange } | null = null;

  constructor(
    private readonly context: AppContext,
    private readonly chart: SpectrumChart,
    dropTargets: readonly HTMLElement[],
  ) {
    this.stripObserver = followSize(this.strip, () => this.stripChart);
    this.build();
    for (const target of [this.pane, ...dropTargets]) this.acceptDrops(target);
  }

  /** Called when the tab is shown or the working setup changed: match again if it is not the analysed one. */
  refresh(): void {
    this.renderParams();
    if (this.spectrum && !this.busy && this.analysedFor !== JSON.stringify(this.context.working())) void this.analyse(false);
  }

  private build(): void {
    const open = el('button', { id: 'btn-measured-open', type: 'button' }, 'Open measured spectrum…');
    open.addEventListener('click', () => this.fileInput.click());
    this.fileInput.addEventListener('change', () => {
      const file = this.fileInput.files?.[0];
      if (file) void this.load(file);
      this.fileInput.value = '';
    });
    this.unitSelect.addEventListener('change', () => void this.reread());
    this.displaySelect.addEventListener('change', () => this.installOverlay());
    this.fitButton.addEventListener('click', () => void this.analyse(true));
    this.cancelButton.addEventListener('click', () => this.client.cancel());
    this.useButton.addEventListener('click', () => {
      if (!this.fitted) return;
      this.context.loadSetup(this.fitted, { recordId: null, state: 'dirty' });
      toast('The fitted instrument is now the working setup (not saved yet: Save makes a new method preset).');
    });
    this.downloadButton.addEventListener('click', () => {
      if (this.fitted) downloadText(presetToJson(this.fitted), presetFileName(this.fitted), 'application/json');
    });
    this.pane.replaceChildren(
      el(
        'div',
        { className: 'tuning-grid' },
        el(
          'div',
          { className: 'card tuning-form', role: 'group', 'aria-label': 'Measured spectrum' },
          el('h2', { text: 'Measured spectrum' }),
          el('div', { className: 'form-actions' }, open, this.fileInput),
          el('p', { className: 'hint', text: 'Or drop a file on this tab or on the spectrum: two-column text (time or m/z, intensity), JCAMP-DX or mzML. The measured spectrum is drawn over the simulated one; a time axis is shown minus the setup’s time offset, so that it sits on the flight-time axis.' }),
          el('label', {}, 'Time unit ', this.unitSelect),
          el('label', {}, 'Intensity ', this.displaySelect),
          this.status,
          this.matches,
        ),
        el(
          'div',
          { className: 'card tuning-form', role: 'group', 'aria-label': 'Fit the instrument' },
          el('h2', { text: 'Fit the instrument to it' }),
          el('fieldset', {}, el('legend', { text: 'Parameters to fit (bounds)' }), this.paramBox, el('label', {}, 'More ', this.extraPaths)),
          el('label', {}, 'Ions per simulation ', this.ionsInput),
          el('div', { className: 'form-actions' }, this.fitButton, this.cancelButton, this.useButton, this.downloadButton),
          el('p', { className: 'hint', text: 'Peak centroids and rms widths are fitted by bounded Levenberg–Marquardt; standard errors assume the intensities are counts (the scaled column allows for the scatter seen).' }),
          this.result,
        ),
      ),
    );
    this.renderParams();
  }

  private renderParams(): void {
    const preset = this.context.working();
    const keep = new Map(Array.from(this.paramBox.querySelectorAll<HTMLInputElement>('input[type="checkbox"]')).map((c) => [c.value, c.checked]));
    const rows = FIT_CANDIDATES.filter((c) => numberAt(preset, c.path).ok || (c.path === 'acquisition.timeOffset_ns' && preset.acquisition)).map((c) => {
      const found = numberAt(preset, c.path);
      const value = found.ok ? found.value : 0;
      const [lo, hi] = defaultFitBounds(c.path, value);
      const checked = keep.get(c.path) ?? c.path === 'acquisition.timeOffset_ns';
      return el(
        'div',
        { className: 'tune-param' },
        el('label', { className: 'measured-check' }, el('input', { type: 'checkbox', value: c.path, ...(checked ? { checked: '' } : {}) }), el('span', {}, `${c.what} `, el('code', { text: c.path }))),
        el('input', { type: 'number', step: 'any', value: String(roundTo(lo)), 'data-bound': 'min', 'aria-label': `${c.path} lower bound` }),
        el('input', { type: 'number', step: 'any', value: String(roundTo(hi)), 'data-bound': 'max', 'aria-label': `${c.path} upper bound` }),
      );
    });
    this.paramBox.replaceChildren(...rows);
  }

  private chosenParameters(): FitParameterRequest[] | string {
    const out: FitParameterRequest[] = [];
    for (const row of Array.from(this.paramBox.querySelectorAll<HTMLElement>('.tune-param'))) {
      const box = row.querySelector<HTMLInputElement>('input[type="checkbox"]')!;
      if (!box.checked) continue;
      const min = Number(row.querySelector<HTMLInputElement>('[data-bound="min"]')!.value);
      const max = Number(row.querySelector<HTMLInputElement>('[data-bound="max"]')!.value);
      out.push({ path: box.value, min, max });
    }
    const extra = this.extraPaths.value.trim();
    if (extra) {
      const list = parseTuneList(extra);
      if (typeof list === 'string') return list;
      out.push(...list);
    }
    return out;
  }

  private acceptDrops(target: HTMLElement): void {
    target.addEventListener('dragover', (event) => {
      if (!event.dataTransfer?.types.includes('Files')) return;
      event.preventDefault();
      target.classList.add('drop-ready');
    });
    target.addEventListener('dragleave', () => target.classList.remove('drop-ready'));
    target.addEventListener('drop', (event) => {
      const file = event.dataTransfer?.files[0];
      target.classList.remove('drop-ready');
      if (!file) return;
      event.preventDefault();
      void this.load(file);
    });
  }

  /** Read a file; a file that cannot be read leaves the shown spectrum as it was. */
  async load(file: File): Promise<void> {
    if (file.size > MAX_MEASURED_FILE_CHARS) {
      this.status.textContent = `${file.name}: ${file.size} bytes is larger than the ${MAX_MEASURED_FILE_CHARS} read; nothing changed.`;
      return;
    }
    const text = await file.text();
    await this.readText(text, file.name);
  }

  private async reread(): Promise<void> {
    if (this.text !== null) await this.readText(this.text, this.fileName);
  }

  private async readText(text: string, name: string | null): Promise<void> {
    const unit = (this.unitSelect.value || undefined) as TimeUnit | undefined;
    let result;
    try {
      result = await this.client.read(text, { timeUnit: unit });
    } catch (err) {
      if (!isCancelled(err)) this.status.textContent = `${name ?? 'file'}: ${(err as Error).message}; nothing changed.`;
      return;
    }
    if (!result.ok) {
      this.status.textContent = `${name ?? 'file'}: ${result.error}${result.needsTimeUnit ? ' — choose the time unit above' : ''}; nothing changed.`;
      if (result.needsTimeUnit) {
        // Keep the text so that choosing a unit reads it again.
        this.text = text;
        this.fileName = name;
        this.unitSelect.focus();
      }
      return;
    }
    this.text = text;
    this.fileName = name;
    this.spectrum = result.spectrum;
    this.section = null;
    this.profile = null;
    this.fitted = null;
    this.useButton.disabled = true;
    this.downloadButton.disabled = true;
    this.result.replaceChildren();
    const s = result.spectrum;
    this.status.textContent = `${name ?? 'file'}: ${s.format}, ${s.x.length} points, ${s.axis === 'time' ? 'time' : 'm/z'} axis${s.timeUnitFrom === 'user' ? ' (time unit as chosen)' : ''}. ${s.notes.join('; ')}`;
    this.fitButton.disabled = s.axis !== 'time';
    this.installOverlay();
    await this.analyse(false);
  }

  /** Match (and with `fit`, fit) the loaded spectrum against the working setup in the worker. */
  private async analyse(fit: boolean): Promise<void> {
    const spectrum = this.spectrum;
    if (!spectrum) return;
    const preset = this.context.working();
    const parameters = fit ? this.chosenParameters() : [];
    if (typeof parameters === 'string') {
      this.result.textContent = `Parameters: ${parameters}`;
      return;
    }
    if (fit && parameters.length === 0) {
      this.result.textContent = 'Choose at least one parameter to fit.';
      return;
    }
    const ions = Math.round(Number(this.ionsInput.value));
    this.setBusy(true, fit ? 'Fitting…' : 'Matching peaks…');
    try {
      const outcome = await this.client.analyse({
        preset,
        // A copy: the worker may take the arrays, and the overlay keeps drawing these.
        spectrum: { ...spectrum, x: spectrum.x.slice(), intensity: spectrum.intensity.slice() },
        fileName: this.fileName,
        options: { fit: parameters, ions: Number.isFinite(ions) && ions >= 500 ? ions : undefined },
      });
      if (!outcome.ok) {
        this.result.textContent = `${fit ? 'Fit' : 'Matching'} not done: ${outcome.error}`;
        return;
      }
      this.analysedFor = JSON.stringify(preset);
      this.section = outcome.section;
      this.profile = outcome.profile;
      this.fitted = outcome.fittedPreset;
      this.useButton.disabled = this.fitted === null;
      this.downloadButton.disabled = this.fitted === null;
      this.renderMatches();
      if (fit) this.renderFit();
      this.installOverlay();
    } catch (err) {
      this.result.textContent = isCancelled(err) ? 'Cancelled.' : `Failed: ${(err as Error).message}`;
    } finally {
      this.setBusy(false);
    }
  }

  private setBusy(on: boolean, message = ''): void {
    this.busy = on;
    this.fitButton.disabled = on || this.spectrum?.axis !== 'time';
    this.cancelButton.disabled = !on;
    if (on) this.result.textContent = message;
    document.body.dataset.measured = on ? 'busy' : this.section ? 'done' : 'idle';
  }

  private renderMatches(): void {
    const s = this.section;
    if (!s) return;
    const time = s.axis === 'time';
    const rows = s.matches.map((m) =>
      el(
        'tr',
        {},
        el('td', { text: String(m.label) }),
        el('td', { text: fixed(m.mz as number, 4) }),
        el('td', { text: time ? fixed((m.predicted_ns as number) / 1000, 5) : fixed(m.predicted_mz as number, 4) }),
        el('td', { text: time ? fixed((m.measured_ns as number) / 1000, 5) : fixed(m.measured_mz as number, 4) }),
        el('td', { text: time ? fixed(m.difference_ns as number, 2) : fixed(m.difference_Th as number, 4) }),
        el('td', { text: fixed(m.difference_ppm as number, 0) }),
      ),
    );
    this.matches.replaceChildren(
      el('p', { text: `${s.peaks.length} peaks picked, ${s.matches.length} matched (nearest within 0.5 % of the flight time, or 1 % of m/z).` }),
      el(
        'table',
        { 'aria-label': 'Measured peaks matched to species' },
        el('thead', {}, el('tr', {}, ...['species', 'm/z', time ? 'predicted (µs)' : 'predicted m/z', time ? 'measured (µs)' : 'measured m/z', time ? 'Δ (ns)' : 'Δ (Th)', 'Δ (ppm)'].map((h) => el('th', { scope: 'col', text: h })))),
        el('tbody', {}, ...rows),
      ),
    );
  }

  private renderFit(): void {
    const f = this.section?.fit;
    if (!f) return;
    const params = f.parameters.map((p) =>
      el(
        'tr',
        {},
        el('td', {}, el('code', { text: p.path })),
        el('td', { text: fmt(p.initial) }),
        el('td', { text: fmt(p.value) }),
        el('td', { text: p.standardError === null ? '—' : `± ${fmt(p.standardError, 3)}` }),
        el('td', { text: p.standardErrorScaled === null ? '—' : `± ${fmt(p.standardErrorScaled, 3)}` }),
        el('td', { text: p.atBound ? 'at bound' : '' }),
      ),
    );
    const residuals = f.residuals.map((r) =>
      el('tr', {}, el('td', { text: r.label }), el('td', { text: r.quantity === 'centroid' ? 'centroid' : 'rms width' }), el('td', { text: fmt(r.residual_ns, 3) }), el('td', { text: r.residual_ppm === null ? '' : fmt(r.residual_ppm, 3) }), el('td', { text: fmt(r.sigma_ns, 2) })),
    );
    const corr = f.parameters.length > 1 ? el('p', { text: `Correlations: ${f.correlation.flatMap((row, a) => row.slice(a + 1).map((v, k) => `${short(f.parameters[a].path)}–${short(f.parameters[a + 1 + k].path)} ${v.toFixed(3)}`)).join(', ')}` }) : null;
    this.result.replaceChildren(
      el('p', { text: `${f.converged ? 'Converged' : 'Not converged'}: χ² = ${fmt(f.chiSquare)} for ${f.degreesOfFreedom} degrees of freedom${f.reducedChiSquare === null ? '' : ` (reduced ${fmt(f.reducedChiSquare)})`}; ${f.simulations} simulations.` }),
      el('table', { 'aria-label': 'Fitted parameters' }, el('thead', {}, el('tr', {}, ...['parameter', 'initial', 'fitted', '± std error', '± scaled', ''].map((h) => el('th', { scope: 'col', text: h })))), el('tbody', {}, ...params)),
      ...(corr ? [corr] : []),
      el('table', { 'aria-label': 'Fit residuals' }, el('thead', {}, el('tr', {}, ...['species', 'quantity', 'residual (ns)', 'residual (ppm)', 'σ (ns)'].map((h) => el('th', { scope: 'col', text: h })))), el('tbody', {}, ...residuals)),
    );
  }

  /** Offset (s) between recorded and flight time in the working setup: the measured time axis is shown minus it. */
  private shown(): { shift_s: number } {
    return { shift_s: -((this.context.working().acquisition?.timeOffset_ns ?? 0) * 1e-9) };
  }

  private installOverlay(): void {
    const spectrum = this.spectrum;
    if (!spectrum) {
      this.chart.setOverlay(null);
      return;
    }
    const absolute = this.displaySelect.value === 'absolute';
    const overlay: SpectrumOverlay = {
      label: `measured${this.fileName ? ` (${this.fileName})` : ''}`,
      colour: MEASURED_COLOUR,
      scale: absolute ? 'own' : 'shared',
      axisLabel: 'measured per bin',
      values: (axisKind, range, simulated) => {
        const values = this.measuredInBins(axisKind, range);
        if (!values || absolute) return values;
        let sim = 0;
        let meas = 0;
        for (let b = 0; b < range.bins; b++) {
          sim += simulated[b];
          meas += values[b];
        }
        if (meas > 0) for (let b = 0; b < range.bins; b++) values[b] *= sim / meas;
        return values;
      },
      drawn: (axisKind, range) => {
        this.lastRange = { axis: axisKind, range };
        this.drawStrip();
      },
    };
    this.chart.setOverlay(overlay);
  }

  private measuredInBins(axisKind: SpectrumAxis, range: BinRange): Float64Array | null {
    const s = this.spectrum;
    if (!s || (axisKind === 'time') !== (s.axis === 'time')) return null;
    const out = new Float64Array(range.bins);
    // The chart's time axis is in µs; the spectrum's in s.
    if (s.axis === 'time') return rebinPoints(s.x, s.intensity, this.shown().shift_s, range.lo * 1e-6, range.hi * 1e-6, out);
    return rebinPoints(s.x, s.intensity, 0, range.lo, range.hi, out);
  }

  /** The residual strip: measured − model profile at the measured points on show (time axis only). */
  private drawStrip(): void {
    const s = this.spectrum;
    const p = this.profile;
    const view = this.lastRange;
    if (!s || !p || !view || view.axis !== 'time' || s.axis !== 'time') {
      this.strip.hidden = true;
      return;
    }
    this.strip.hidden = false;
    const shift_us = this.shown().shift_s * 1e6;
    const xs: number[] = [];
    const ys: number[] = [];
    for (let k = 0; k < s.x.length; k++) {
      const x = s.x[k] * 1e6 + shift_us;
      if (x < view.range.lo || x > view.range.hi) continue;
      xs.push(x);
      ys.push(p.residual[k]);
    }
    const data: uPlot.AlignedData = [xs, ys];
    if (!this.stripChart) {
      this.stripChart = new uPlot(
        {
          width: Math.max(200, this.strip.clientWidth),
          height: 90,
          scales: { x: { time: false } },
          axes: [axis(''), axis('residual', { size: 52 })],
          series: [{ label: 'µs' }, { label: 'measured − model', stroke: '#e9a03b', width: 1, points: { show: false } }],
          legend: { show: false },
          cursor: { drag: { x: false, y: false } },
        },
        data,
        this.strip,
      );
      fitChart(this.strip, this.stripChart);
    } else this.stripChart.setData(data, false);
    this.stripChart.setScale('x', { min: view.range.lo, max: view.range.hi });
  }

  dispose(): void {
    this.client.dispose();
    this.stripObserver.disconnect();
    this.stripChart?.destroy();
  }
}

/**
 * Starting bounds offered in the form (the user edits them): ±100 ns for the time offset, ±2 % for
 * lengths, ±20 % for delays, 0 to 4× (at least 0 to 5 ns) for detector widths, ±50 % otherwise.
 */
export function defaultFitBounds(path: string, value: number): [number, number] {
  if (path === 'acquisition.timeOffset_ns') return [value - 100, value + 100];
  if (path.endsWith('_mm')) return [value * 0.98, value * 1.02];
  if (path === 'acquisition.pulseWidth_ns' || path === 'acquisition.detectorJitter_ns') return [0, Math.max(4 * value, 5)];
  if (path.endsWith('_ns')) return [Math.max(0, value * 0.8), value * 1.2];
  const span = value === 0 ? 100 : 0.5 * Math.abs(value);
  return [value - span, value + span];
}

const fmt = (v: number | null, digits = 6): string => (v === null || !Number.isFinite(v) ? '—' : Number(v.toPrecision(digits)).toString());
const short = (path: string): string => path.split('.').slice(-1)[0];
const roundTo = (v: number): number => Number(v.toPrecision(6));
