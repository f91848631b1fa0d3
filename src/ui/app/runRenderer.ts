/**
 * Drawing one finished run: peak table, fates, summary line, spectrum (with the peak zoom), the 3D
 * view from the scene the worker computed, its legend, the focus notes, and the timing figures the
 * browser benchmark reads. Keeps the run last shown, for the downloads.
 */
import type { Preset } from '../../presets/schema';
import type { RunExtras, RunOutput } from '../../simulation/runContract';
import type { SpectrumChart } from '../charts/spectrumChart';
import { speciesColours } from '../colors';
import { byId, el } from '../dom';
import { formatCount } from '../format';
import { focusLines, focusSummary } from '../results/focusSummary';
import { paintSwatches, renderFates, renderPeakTable, runSummary } from '../results/resultsView';
import { renderFragmentTable } from '../results/fragmentTable';
import { buildRunView, type RunView } from '../results/runView';
import type { AnalyserScene } from '../scene/analyserScene';
import { createDrawnIons, unpackDrawnIons } from '../scene/paths';
import { FRAGMENT_LEGEND } from '../scene/fragmentPaths';
import type { RunJob } from './runQueue';

export interface ShownRun {
  readonly job: RunJob;
  readonly output: RunOutput;
  readonly view: RunView;
}

export class RunRenderer {
  shown: ShownRun | null = null;
  private finalRunsShown = 0;
  private readonly drawn = createDrawnIons();
  private readonly resultsTable = byId<HTMLTableElement>('results-table');
  private readonly legend = byId('scene-legend');
  private readonly statusLine = byId('status-line');
  private readonly focusText = byId('focus-text');
  private readonly sceneHost = document.getElementById('scene');

  constructor(
    private readonly spectrum: SpectrumChart,
    private readonly scene: AnalyserScene | null,
    private readonly zoomSelect: HTMLSelectElement,
  ) {}

  render(job: RunJob, output: RunOutput): void {
    const renderStart = performance.now();
    const report = output.report;
    const colours = speciesColours(report.species.map((s) => s.mz));
    const view = buildRunView(output, colours, job.preset.acquisition?.sampleInterval_ns ?? null);
    // The chart first: it reads its host's width, which after the tables' changes would force a layout.
    this.spectrum.setRun(view.spectrum);
    this.refreshZoomChoices([...view.spectrum.labels]); // species, then fragment series
    renderPeakTable(this.resultsTable, view.rows, view.calibrationNote, view.calibrationFreedom);
    renderFates(byId('fate-list'), report.fates, report.ions);
    renderFragmentTable(byId('fragment-results'), report);
    byId('run-summary').textContent = runSummary(report, output.elapsed_ms) + (job.kind === 'live' ? ' (quick preview)' : '');

    this.shown = { job, output, view };
    const latency = performance.now() - job.requestedAt;
    if (job.kind === 'final') {
      // Figures for the benchmark in the browser tests: latency to the charts, engine share, drawing share.
      document.body.dataset.lastUpdateMs = latency.toFixed(1);
      document.body.dataset.lastEngineMs = output.elapsed_ms.toFixed(1);
      document.body.dataset.lastRenderMs = (performance.now() - renderStart).toFixed(1);
      // Per-ion result fingerprint: the browser tests compare a pooled run with a one-worker run by it.
      document.body.dataset.lastRunDigest = `${bytesDigest(output.flightTime_s)}-${bytesDigest(output.fate)}`;
      document.body.dataset.lastRenderSeq = String(++this.finalRunsShown);
    }
    // Until the second part comes, the 3D view and the focus notes still show the run before.
    this.sceneHost?.setAttribute('aria-busy', 'true');
    this.focusText.setAttribute('aria-busy', 'true');
    this.statusLine.textContent = `${formatCount(job.ions)} ions · engine ${output.elapsed_ms.toFixed(0)} ms · shown ${latency.toFixed(0)} ms after the change`;
  }

  /**
   * The second part of the run drawn last by `render`: the 3D view, its legend, the focus notes; its
   * focus section joins the shown report (downloads). Then the latency to the next frame's callbacks.
   */
  renderExtras(job: RunJob, extras: RunExtras): void {
    const shown = this.shown;
    if (!shown || shown.job !== job) return;
    const report = extras.focus === undefined ? shown.output.report : { ...shown.output.report, focus: extras.focus };
    const output: RunOutput = {
      ...shown.output,
      report,
      ...(extras.scene ? { scene: extras.scene } : {}),
      ...(extras.focusScan ? { focusScan: extras.focusScan } : {}),
      ...(extras.fragmentScene ? { fragmentScene: extras.fragmentScene } : {}),
    };
    this.shown = { ...shown, output };
    const scene = extras.scene;
    if (this.scene && scene) {
      const equipotentials = scene.equipotentials;
      this.scene.setLayout(scene.layout);
      this.scene.setEquipotentials((buffer) => {
        buffer.set(equipotentials.subarray(0, Math.min(equipotentials.length, buffer.length)));
        return Math.floor(Math.min(equipotentials.length, buffer.length) / 3);
      });
      this.scene.setIons(unpackDrawnIons(this.drawn, scene.paths));
      this.scene.setFragmentPaths(extras.fragmentScene ?? null);
    }
    this.renderLegend(job.preset, speciesColours(report.species.map((s) => s.mz)), report.species.map((s) => s.label), scene?.approximations ?? [], (extras.fragmentScene?.vertices ?? 0) > 0);
    if (job.kind === 'final' && extras.focusScan) {
      const focus = focusSummary(extras.focusScan, report);
      this.focusText.replaceChildren(...focusLines(focus).flatMap((line, i) => (i ? [el('br'), line] : [line])));
    }
    this.sceneHost?.removeAttribute('aria-busy');
    this.focusText.removeAttribute('aria-busy');
    if (job.kind === 'final') {
      document.body.dataset.lastExtrasMs = (performance.now() - job.requestedAt).toFixed(1);
      document.body.dataset.lastExtrasEngineMs = extras.elapsed_ms.toFixed(1);
      // The latency to the next frame's callbacks, after the 3D view's (requested above) has drawn.
      const shownRun = document.body.dataset.lastRenderSeq;
      requestAnimationFrame(() => {
        document.body.dataset.lastFrameMs = (performance.now() - job.requestedAt).toFixed(1);
        document.body.dataset.lastFrameSeq = shownRun;
      });
    }
  }

  /** Zoom to the chosen peak again after the axis changed. */
  rezoom(): void {
    if (this.zoomSelect.value !== '') this.spectrum.zoomToSpecies(Number(this.zoomSelect.value));
  }

  private refreshZoomChoices(labels: string[]): void {
    const zoomSelect = this.zoomSelect;
    if (zoomSelect.options.length !== labels.length + 1 || Array.from(zoomSelect.options).slice(1).some((o, i) => o.textContent !== labels[i])) {
      const keep = zoomSelect.value;
      zoomSelect.replaceChildren(el('option', { value: '', text: 'all peaks' }), ...labels.map((label, i) => el('option', { value: String(i), text: label })));
      zoomSelect.value = Number(keep) < labels.length ? keep : '';
    }
    this.rezoom();
  }

  private renderLegend(preset: Preset, colours: string[], labels: string[], approximations: readonly string[], fragments = false): void {
    const items = labels.slice(0, 16).map((label, i) =>
      el('li', {}, el('span', { className: 'swatch', 'data-colour': colours[i] }), `${label} · m/z ${preset.ions.species[i]?.mz.toFixed(4) ?? ''}`),
    );
    this.legend.replaceChildren(
      el('ul', { 'aria-label': 'Ion species by m/z' }, ...items, ...(fragments ? [el('li', { className: 'legend-fragments' }, FRAGMENT_LEGEND)] : [])),
      el(
        'p',
        { className: 'legend-note' },
        'Axial positions to scale; species in separate lanes.',
        preset.mirror.type === 'none' ? ' Species fanned out across the tube after the source, for display only (they share one path).' : ' Return leg tilted for display.',
        ' Electrodes: blue −, grey 0, amber + potential.',
        approximations.length ? ` Drawing only: ${approximations.join('; ')}.` : '',
      ),
    );
    paintSwatches(this.legend);
  }
}

/** FNV-1a (32 bit) over the bytes of a typed array, as hex: a fingerprint, not a checksum against attack. */
function bytesDigest(a: Float64Array | Uint8Array): string {
  const bytes = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  let h = 0x811c9dc5;
  for (let i = 0; i < bytes.length; i++) h = Math.imul(h ^ bytes[i], 0x01000193);
  return (h >>> 0).toString(16).padStart(8, '0');
}
