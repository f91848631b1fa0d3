/**
 * The R-versus-load card of the Results pane: the working setup run at each asked ions-per-shot value
 * in a worker of its own (so cancelling it disturbs neither the ordinary runs nor a tune), one point
 * after another with progress and an immediate cancel; then R (or the peak shift in ppm) per species
 * against ions per shot on a log axis, with the values in a table beside it. The data come from
 * ./loadCurve (plain data); this module only lays them out.
 */
import uPlot from 'uplot';
import { validatePreset } from '../../presets/load';
import { formatIssues } from '../../presets/issues';
import type { AppContext } from '../appContext';
import { speciesColours } from '../colors';
import { el } from '../dom';
import { createRunEngine, isCancelled, type EngineClient } from '../engine/engineClient';
import { fixed, formatR, signed } from '../format';
import { axis, chartSize } from './theme';
import { DEFAULT_LOAD_VALUES, loadCurve, loadCurveUnavailable, loadPointPreset, parseLoadValues, type LoadCurve } from './loadCurve';

/** Ions traced per point unless the user asks otherwise (the sheet model's cost grows with ions per shot). */
const DEFAULT_POINT_IONS = 4000;

type LoadState = 'idle' | 'running' | 'done' | 'error' | 'cancelled';

export class LoadChartView {
  private readonly values = el('input', { id: 'load-values', type: 'text', value: DEFAULT_LOAD_VALUES.join(', '), 'aria-label': 'Ions per shot values' });
  private readonly ions = el('input', { id: 'load-ions', type: 'number', min: '100', max: '200000', step: '100', value: String(DEFAULT_POINT_IONS), 'aria-label': 'Ions per point' });
  private readonly start = el('button', { id: 'btn-load-run', type: 'button', className: 'primary', text: 'Compute' });
  private readonly stop = el('button', { id: 'btn-load-cancel', type: 'button', text: 'Cancel', disabled: '' });
  private readonly progress = el('progress', { id: 'load-progress', max: '1', value: '0', 'aria-label': 'R versus load progress' });
  private readonly status = el('p', { id: 'load-status', className: 'summary', 'aria-live': 'polite' });
  private readonly chartHost = el('div', { id: 'load-chart', className: 'chart', 'data-testid': 'load-chart' });
  private readonly table = el('table', { id: 'load-table', className: 'data-table', 'data-testid': 'load-table' });
  private readonly showShift = el('input', { type: 'checkbox', id: 'load-shift' });
  private engine: EngineClient | null = null;
  private chart: uPlot | null = null;
  private curve: LoadCurve | null = null;
  private busy = false;

  constructor(
    private readonly app: AppContext,
    host: HTMLElement,
  ) {
    const card = el(
      'div',
      { className: 'card load-card', id: 'load-card' },
      el(
        'div',
        { className: 'card-head' },
        el('h2', { text: 'Resolving power against ion load' }),
        el('label', { className: 'compact' }, this.showShift, ' peak shift (ppm) instead of R'),
      ),
      el(
        'div',
        { className: 'load-controls' },
        el('label', { className: 'compact' }, 'ions per shot ', this.values),
        el('label', { className: 'compact' }, 'ions per point ', this.ions),
        this.start,
        this.stop,
        this.progress,
      ),
      this.status,
      el('div', { className: 'load-body' }, this.chartHost, el('div', { className: 'table-scroll' }, this.table)),
      el('p', {
        className: 'hint',
        text: 'Each point is this setup with only the ions per shot changed, same ions and seed. The sheet model of space charge leaves out grid image charges and the mirror (see README).',
      }),
    );
    host.append(card);
    document.body.dataset.load = 'idle';
    // Keep the chart at its host's width (its height is fixed by the stylesheet).
    new ResizeObserver(() => this.chart?.setSize(chartSize(this.chartHost, 64))).observe(this.chartHost);
    this.start.addEventListener('click', () => void this.compute());
    this.stop.addEventListener('click', () => this.cancel());
    this.showShift.addEventListener('change', () => this.draw());
  }

  private setState(state: LoadState, message: string): void {
    this.busy = state === 'running';
    this.start.disabled = this.busy;
    this.stop.disabled = !this.busy;
    this.status.textContent = message;
    document.body.dataset.load = state;
  }

  cancel(): void {
    if (!this.busy) return;
    this.engine?.cancel();
    this.setState('cancelled', 'Cancelled.');
  }

  private async compute(): Promise<void> {
    const preset = structuredClone(this.app.working());
    const why = loadCurveUnavailable(preset);
    if (why) return this.setState('error', why);
    const values = parseLoadValues(this.values.value);
    if (typeof values === 'string') return this.setState('error', values);
    const ions = Number(this.ions.value);
    if (!(Number.isInteger(ions) && ions >= 100 && ions <= 200_000)) return this.setState('error', `ions per point: must be a whole number from 100 to 200000 (got "${this.ions.value}")`);
    const points = values.map((n) => validatePreset(loadPointPreset(preset, n)));
    const bad = points.findIndex((p) => !p.ok);
    if (bad >= 0) {
      const p = points[bad];
      return this.setState('error', `At ${values[bad]} ions per shot the setup is refused: ${p.ok ? '' : formatIssues(p.issues).replace(/\n/g, '; ')}`);
    }
    this.engine ??= createRunEngine(1);
    this.progress.value = 0;
    this.setState('running', `Running ${values.length} points…`);
    const reports = [];
    const started = performance.now();
    try {
      for (let k = 0; k < values.length; k++) {
        const p = points[k];
        if (!p.ok) return;
        const out = await this.engine.run({ preset: p.value, ions, seed: preset.run.seed });
        if (!this.busy) return;
        reports.push(out.report);
        this.progress.value = (k + 1) / values.length;
        this.status.textContent = `Point ${k + 1} of ${values.length} (${values[k]} ions per shot) done…`;
      }
      this.curve = loadCurve(preset, values, reports);
      this.setState('done', `${values.length} points, ${ions.toLocaleString('en')} ions each, seed ${preset.run.seed}, in ${((performance.now() - started) / 1000).toFixed(1)} s; ${this.curve.figure}.`);
      this.draw();
    } catch (err) {
      if (isCancelled(err)) return;
      this.setState('error', `R versus load failed: ${(err as Error).message}`);
    }
  }

  private draw(): void {
    const curve = this.curve;
    if (!curve) return;
    const shift = this.showShift.checked;
    const colours = speciesColours(curve.species.map((s) => s.mz));
    const data = [Float64Array.from(curve.ionsPerShot), ...curve.species.map((s) => (shift ? s.shift_ppm : s.resolvingPower))] as uPlot.AlignedData;
    const read = (v: number | null | undefined): string => (v === null || v === undefined ? '—' : shift ? `${signed(v, 2)} ppm` : formatR(v));
    this.chart?.destroy();
    this.chart = new uPlot(
      {
        // Room for a legend of two lines (one entry per species, read-out included).
        ...chartSize(this.chartHost, 64),
        scales: { x: { time: false, distr: 3, log: 10 }, y: { auto: true } },
        axes: [axis('ions per shot (mean)'), axis(shift ? 'peak shift (ppm)' : 'R (FWHM)', { size: 62, values: (_u, ticks) => ticks.map((v) => (shift ? fixed(v, 1) : formatR(v))) })],
        series: [
          { label: 'ions per shot' },
          ...curve.species.map((s, i) => ({ label: s.label, stroke: colours[i] ?? '#8fd0ff', width: 1.5, points: { show: true, size: 5 }, value: (_u: uPlot, v: number | null) => read(v) })),
        ],
        legend: { live: true },
      },
      data,
      this.chartHost,
    );
    const head = el('thead', {}, el('tr', {}, el('th', { scope: 'col', text: 'species' }), ...curve.ionsPerShot.map((n) => el('th', { scope: 'col', text: `${n} / shot` }))));
    const body = el(
      'tbody',
      {},
      ...curve.species.map((s) =>
        el(
          'tr',
          {},
          el('th', { scope: 'row', text: s.label }),
          ...curve.ionsPerShot.map((_n, k) => el('td', { text: `${formatR(s.resolvingPower[k])} (${s.shift_ppm[k] === null ? '—' : signed(s.shift_ppm[k], 2)} ppm)` })),
        ),
      ),
    );
    this.table.replaceChildren(el('caption', { className: 'visually-hidden', text: 'R and peak shift (ppm) per species and ions per shot' }), head, body);
  }
}
