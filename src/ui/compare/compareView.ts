/**
 * Compare mode: the working setup (A) and a second one (B) run side by side; the two spectra are
 * overlaid on a common m/z axis (each normalised), with a table of the differences B − A.
 */
import uPlot from 'uplot';
import { Fate } from '../../physics/fates';
import { idealGridEquivalent } from '../../presets/compileFields';
import { pulseReachNote } from '../../simulation/pulseReach';
import type { Preset } from '../../presets/schema';
import type { RunOutput } from '../../simulation/runContract';
import type { AppContext } from '../appContext';
import { accumulate, binCentres, binsForWidth, detectedExtent, paddedRange } from '../charts/binning';
import { axis, chartSize, fitChart, followSize, withAlpha } from '../charts/theme';
import { byId, el } from '../dom';
import { fixed, formatR, percent, signed } from '../format';
import { demo, demos, type Demo } from '../presets/demos';
import { buildRunView } from '../results/runView';
import { speciesColours } from '../colors';
import { describeSetup, diffSpecies, otherMode, runFigures } from './compareModel';
import { applyReflectronTune, reflectronTuneRequest, switchMode } from '../../tuning/modeSwitch';
import { headlineFigures } from '../../simulation/headline';
import { diffFragments, type ProductFigures } from './fragmentDiff';

const COLOUR_A = '#4cc3b2';
const COLOUR_B = '#e9a03b';
/** Ions per setup in a comparison (both setups use the same number and seed). */
const COMPARE_IONS = 20_000;

export class CompareView {
  private readonly select = byId<HTMLSelectElement>('compare-source');
  private readonly status = byId('compare-status');
  private readonly chartHost = byId('compare-chart');
  private chart: uPlot | null = null;
  private snapshot: Preset | null = null;
  private generation = 0;
  /** The setup A the shown results were run for (JSON), and whether the last edit was refused. */
  private shownFor: string | null = null;
  private refused = false;
  private shownStatus = '';

  constructor(private readonly app: AppContext) {
    followSize(this.chartHost, () => this.chart);
    byId('btn-compare-run').addEventListener('click', () => void this.compare());
    this.select.addEventListener('change', () => {
      if (this.select.value === 'snapshot') this.snapshot = structuredClone(this.app.working());
    });
  }

  /** Refill the choice of setup B (call when the working setup or the saved presets change). */
  async refreshChoices(): Promise<void> {
    const working = this.app.working();
    const solved = working.mirror.type === 'solved' || working.source.solved !== undefined;
    const options: HTMLOptionElement[] = [
      // Solved fields vs the ideal grids they replace: the comparison such a setup is made for.
      ...(solved ? [el('option', { value: 'ideal-grids', text: 'This setup with ideal grids in place of its solved electrodes' })] : []),
      el('option', {
        value: 'other-mode',
        text: working.mirror.type === 'none' ? 'This setup in reflectron mode (dual-stage mirror, mirror and delay tuned)' : 'This setup in linear mode (same total path)',
      }),
      ...(working.mirror.type === 'none'
        ? [el('option', { value: 'other-mode-untuned', text: 'This setup in reflectron mode, UNTUNED (template mirror potentials, linear delay)' })]
        : []),
      el('option', { value: 'snapshot', text: 'This setup as it is now (frozen, to compare later edits)' }),
      ...demos().map((d) => el('option', { value: `demo:${d.id}`, text: `Demo: ${d.preset.name.replace(/^Demo: /, '')}` })),
    ];
    if (this.app.store) {
      const listing = await this.app.store.list();
      for (const r of listing.records) options.push(el('option', { value: `record:${r.id}`, text: `Saved: ${r.name}` }));
    }
    // Read the choice only now: it may have changed while the saved presets were being listed.
    const keep = this.select.value;
    this.select.replaceChildren(...options);
    if (options.some((o) => o.value === keep)) this.select.value = keep;
  }

  private async setupB(): Promise<Preset | null> {
    const working = this.app.working();
    const choice = this.select.value || 'other-mode';
    if (choice === 'ideal-grids') {
      const ideal = idealGridEquivalent(structuredClone(working));
      return { ...ideal, name: `${working.name} — ideal grids`.slice(0, 120) };
    }
    if (choice === 'other-mode' && working.mirror.type === 'none') return this.tunedReflectron(working);
    if (choice === 'other-mode') return otherMode(working, demo('dual'));
    if (choice === 'other-mode-untuned') {
      const sw = switchMode(working, demo('dual'));
      this.showChanges(['UNTUNED: the template mirror potentials and the linear delay, kept as they were (for comparison only)', sw.changes[0]]);
      return sw.untuned;
    }
    if (choice === 'snapshot') return this.snapshot ?? (this.snapshot = structuredClone(working));
    if (choice.startsWith('demo:')) return demo(choice.slice(5) as Demo['id']);
    if (choice.startsWith('record:') && this.app.store) return (await this.app.store.get(choice.slice(7)))?.preset ?? null;
    return null;
  }

  /** Linear → reflectron: Mamyrin second-order start, then mirror potentials and delay tuned together in the tuning workers. */
  private async tunedReflectron(working: Preset): Promise<Preset | null> {
    const sw = switchMode(working, demo('dual'));
    const request = reflectronTuneRequest(sw);
    if (!request) {
      this.showChanges(sw.changes);
      return sw.preset;
    }
    this.status.textContent = 'Tuning the mirror and delay of setup B…';
    const result = await this.app.tuningEngine.optimise(request, (p) => {
      this.status.textContent = `Tuning the mirror and delay of setup B: ${p.message ?? ''} ${p.done}/${p.total}`;
    });
    const tuned = applyReflectronTune(working, sw, request, result);
    this.showChanges(['Setup B is this setup switched to reflectron mode; changed:', ...tuned.changes]);
    return tuned.preset;
  }

  private showChanges(lines: readonly string[]): void {
    byId('compare-changes').replaceChildren(...lines.map((text) => el('li', { text })));
  }

  async compare(): Promise<void> {
    const generation = ++this.generation;
    this.showChanges([]);
    const a = structuredClone(this.app.working());
    let b: Preset | null;
    try {
      b = await this.setupB();
    } catch (err) {
      this.status.textContent = `Setup B could not be prepared: ${(err as Error).message}`;
      document.body.dataset.compare = 'error';
      return;
    }
    if (generation !== this.generation) return;
    if (!b) {
      this.status.textContent = 'Setup B could not be read.';
      return;
    }
    this.status.textContent = 'Running both setups…';
    document.body.dataset.compare = 'running';
    try {
      const ions = Math.min(COMPARE_IONS, a.run.ions);
      const runA = await this.app.engine.run({ preset: a, ions, seed: a.run.seed });
      const idealOfA = (this.select.value || 'other-mode') === 'ideal-grids';
      const runB = await this.app.engine.run({ preset: b, ions, seed: a.run.seed, pulseReach: idealOfA });
      if (generation !== this.generation) return;
      this.render(a, runA, b, runB);
      // Why solved fields and their ideal grids can disagree, when it applies (the same note as --compare-ideal).
      const note = idealOfA && runB.pulseReach ? pulseReachNote(runB.pulseReach) : null;
      this.status.textContent = `${ions.toLocaleString('en')} ions each, same seed.${note ? ` Why they differ: ${note}` : ''}`;
      this.shownStatus = this.status.textContent;
      this.shownFor = JSON.stringify(a);
      this.refused = false;
      this.showStaleness();
      document.body.dataset.compare = 'done';
    } catch (err) {
      if (generation !== this.generation) return;
      this.status.textContent = `Comparison failed: ${(err as Error).message}`;
      document.body.dataset.compare = 'error';
    }
  }

  /**
   * Call on every edit of the working setup: 'refused' when the panel refused a changed setting (the
   * working setup then still holds the last valid one), 'valid' otherwise. Shown results that no
   * longer describe what the panel shows are marked stale, never left looking current.
   */
  settingsChanged(state: 'valid' | 'refused'): void {
    this.refused = state === 'refused';
    this.showStaleness();
  }

  private showStaleness(): void {
    if (this.shownFor === null) return;
    const reason = this.refused
      ? 'a changed setting was refused (see the panel), so these results are for the last valid setup'
      : this.shownFor !== JSON.stringify(this.app.working())
        ? 'the setup has changed since this comparison'
        : null;
    byId('pane-compare').classList.toggle('stale', reason !== null);
    document.body.dataset.compareStale = reason === null ? 'no' : 'yes';
    this.status.textContent = reason === null ? this.shownStatus : `STALE: ${reason}; press Compare to update. (${this.shownStatus})`;
    this.status.classList.toggle('stale-note', reason !== null);
  }

  private render(a: Preset, runA: RunOutput, b: Preset, runB: RunOutput): void {
    byId('compare-a').replaceChildren(...this.card('A', COLOUR_A, a, runA));
    byId('compare-b').replaceChildren(...this.card('B', COLOUR_B, b, runB));
    const sampleA = a.acquisition?.sampleInterval_ns ?? null;
    const sampleB = b.acquisition?.sampleInterval_ns ?? null;
    const rows = diffSpecies(runA.report, runB.report, sampleA, sampleB);
    const body = (byId('compare-diff') as HTMLTableElement).tBodies[0];
    const cls = (x: number | null, goodWhenPositive: boolean): string => (x === null || x === 0 ? '' : x > 0 === goodWhenPositive ? 'better' : 'worse');
    body.replaceChildren(
      ...rows.map((r) =>
        el(
          'tr',
          {},
          el('th', { scope: 'row', text: r.label }),
          el('td', { text: fixed(r.flightTimeA_us, 3) }),
          el('td', { text: fixed(r.flightTimeB_us, 3) }),
          el('td', { text: formatR(r.a ? headlineFigures(r.a, sampleA).resolvingPower : null) }),
          el('td', { text: formatR(r.b ? headlineFigures(r.b, sampleB).resolvingPower : null) }),
          el('td', { text: r.resolvingPowerRatio === null ? '—' : `${r.resolvingPowerRatio.toFixed(2)}×`, className: cls(r.resolvingPowerRatio === null ? null : r.resolvingPowerRatio - 1, true) }),
          el('td', { text: signed(r.fwhmDifference_ns, 2), className: cls(r.fwhmDifference_ns, false) }),
          el('td', { text: r.transmissionDifference === null ? '—' : signed(r.transmissionDifference * 100, 1) + ' %', className: cls(r.transmissionDifference, true) }),
        ),
      ),
    );
    this.renderFragments(runA, runB);
    this.drawOverlay(runA, runB, Math.min(sampleA ?? Infinity, sampleB ?? Infinity));
  }

  /** The decay products of both runs side by side (a table of its own under the differences; hidden without decays). */
  private renderFragments(runA: RunOutput, runB: RunOutput): void {
    const rows = diffFragments(runA.report, runB.report);
    let host = document.getElementById('compare-fragments');
    if (!host) {
      host = el('div', { id: 'compare-fragments', className: 'table-scroll' });
      byId('compare-diff').closest('.card')?.append(host);
    }
    host.hidden = rows.length === 0;
    if (rows.length === 0) {
      host.replaceChildren();
      return;
    }
    const t = (f: ProductFigures | null): string => (f === null || f.arrival_us === null ? '—' : `${f.arrival_us.toFixed(3)}${f.behindMirror ? ' (behind mirror)' : ''}`);
    const rel = (f: ProductFigures | null): string => (f?.relativeToPrecursor == null ? '—' : f.relativeToPrecursor.toFixed(4));
    const head = ['precursor', 'channel / product', 'true m/z', 'arrival A / µs', 'arrival B / µs', 't/t(precursor) A', 't/t(precursor) B', 'apparent m/z A', 'apparent m/z B', 'R A', 'R B', 'transm. A', 'transm. B'];
    const table = el(
      'table',
      { className: 'data-table', 'data-testid': 'compare-fragments' },
      el('caption', { text: 'Decay products: arrival relative to the precursor (1: arrives with it, as in linear mode) and apparent m/z under each run\'s precursor calibration' }),
      el('thead', {}, el('tr', {}, ...head.map((text) => el('th', { scope: 'col', text })))),
      el(
        'tbody',
        {},
        ...rows.map((r) =>
          el(
            'tr',
            { 'data-role': r.role },
            el('th', { scope: 'row', text: r.precursor }),
            el('td', { text: r.product }),
            el('td', { text: fixed(r.mz, 3) }),
            el('td', { text: t(r.a) }),
            el('td', { text: t(r.b) }),
            el('td', { text: rel(r.a) }),
            el('td', { text: rel(r.b) }),
            el('td', { text: fixed(r.a?.apparentMz, 2) }),
            el('td', { text: fixed(r.b?.apparentMz, 2) }),
            el('td', { text: formatR(r.a?.resolvingPower) }),
            el('td', { text: formatR(r.b?.resolvingPower) }),
            el('td', { text: r.a ? percent(r.a.transmission) : '—' }),
            el('td', { text: r.b ? percent(r.b.transmission) : '—' }),
          ),
        ),
      ),
    );
    host.replaceChildren(el('h3', { text: 'Fragments (decay in flight)' }), table);
  }

  private card(tag: 'A' | 'B', colour: string, preset: Preset, run: RunOutput): Node[] {
    const f = runFigures(run.report, preset.acquisition?.sampleInterval_ns ?? null);
    const dl = el(
      'dl',
      {},
      el('dt', { text: 'analyser' }),
      el('dd', { text: describeSetup(preset) }),
      el('dt', { text: 'detected' }),
      el('dd', { text: percent(f.detectedFraction) }),
      el('dt', { text: preset.acquisition ? 'R (spectrum peak FWHM), best / worst' : 'R (ideal detector), best / worst' }),
      el('dd', { text: `${formatR(f.bestR)} / ${formatR(f.worstR)}` }),
      el('dt', { text: 'arrivals' }),
      el('dd', { text: `${fixed(f.firstArrival_us, 3)} – ${fixed(f.lastArrival_us, 3)} µs` }),
    );
    const head = el('div', { className: 'card-head' }, el('h2', {}, el('span', { className: `setup-tag tag-${tag.toLowerCase()}`, text: tag }), preset.name));
    void colour;
    return [head, dl];
  }

  private drawOverlay(runA: RunOutput, runB: RunOutput, sampleInterval_ns: number): void {
    const viewA = buildRunView(runA, speciesColours(runA.report.species.map((s) => s.mz)));
    const viewB = buildRunView(runB, speciesColours(runB.report.species.map((s) => s.mz)));
    const ea = viewA.spectrum.defaultExtent?.mz ?? detectedExtent(viewA.spectrum.mz, viewA.spectrum.fate, Fate.DETECTED);
    const eb = viewB.spectrum.defaultExtent?.mz ?? detectedExtent(viewB.spectrum.mz, viewB.spectrum.fate, Fate.DETECTED);
    const extent: [number, number] | null = ea && eb ? [Math.min(ea[0], eb[0]), Math.max(ea[1], eb[1])] : (ea ?? eb);
    if (!extent) return;
    // Bins one digitizer sample wide at the lightest ion (Δm = 2m·Δt/t), so peak widths show when zoomed.
    const bins = compareBins(extent, runA, runB, sampleInterval_ns) ?? binsForWidth(this.chartHost.clientWidth || 600);
    const range = paddedRange(extent, bins);
    const x = binCentres(range, new Float64Array(range.bins));
    const count = (values: Float64Array, fate: Uint8Array): Float64Array => {
      const c = accumulate(values, fate, Fate.DETECTED, 0, values.length, range, new Float64Array(range.bins));
      let max = 0;
      for (const v of c) max = Math.max(max, v);
      if (max > 0) for (let i = 0; i < c.length; i++) c[i] /= max;
      return c;
    };
    // The views' own arrays: precursors and the decay products recorded at the detector (m/z from each run's calibration).
    const data: uPlot.AlignedData = [x, count(viewA.spectrum.mz, viewA.spectrum.fate), count(viewB.spectrum.mz, viewB.spectrum.fate)];
    this.chart?.destroy();
    const stepped = uPlot.paths.stepped!({ align: 1 });
    this.chart = new uPlot(
      {
        ...chartSize(this.chartHost),
        scales: { x: { time: false }, y: { range: [0, 1.08] } },
        axes: [axis('m/z (Th)'), axis('relative intensity', { size: 46 })],
        series: [
          { label: 'Th' },
          { label: 'A', stroke: COLOUR_A, fill: withAlpha(COLOUR_A, 0.15), paths: stepped, points: { show: false } },
          { label: 'B', stroke: COLOUR_B, fill: withAlpha(COLOUR_B, 0.15), paths: stepped, points: { show: false } },
        ],
        cursor: { drag: { x: true, y: false } },
        legend: { live: false },
      },
      data,
      this.chartHost,
    );
    fitChart(this.chartHost, this.chart);
  }
}

/** Most bins of the overlay (a 2 MiB column each). */
const MAX_COMPARE_BINS = 1 << 18;

/** Bins of one digitizer sample at the lightest detected ion over the m/z extent; null without a sample interval. */
export function compareBins(extent: [number, number], runA: RunOutput, runB: RunOutput, sampleInterval_ns: number): number | null {
  if (!Number.isFinite(sampleInterval_ns) || !(sampleInterval_ns > 0)) return null;
  let first = Infinity;
  for (const run of [runA, runB]) {
    for (const s of run.report.species) if (s.flightTime_ns !== null && s.mz === Math.min(...run.report.species.map((x) => x.mz))) first = Math.min(first, s.flightTime_ns);
  }
  if (!Number.isFinite(first)) return null;
  const width_Th = (2 * extent[0] * sampleInterval_ns) / first;
  return Math.max(16, Math.min(MAX_COMPARE_BINS, Math.ceil((extent[1] - extent[0]) / width_Th)));
}
