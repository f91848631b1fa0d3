/**
 * The tuning tab: a one-parameter scan (R and flight time against the parameter, per species) and
 * an auto-tune over chosen parameters, both on the tuning engine with progress, a cancel that
 * terminates the worker at once, and "apply" buttons that load the result as the working setup.
 */
import uPlot from 'uplot';
import { CRITERION_LABELS } from '../../simulation/headline';
import { validatePreset } from '../../presets/load';
import { formatIssues } from '../../presets/issues';
import type { Preset } from '../../presets/schema';
import type { Objective, ObjectiveName, ScanResult, TuneResult } from '../../tuning/api';
import { tuneSummary, tuneSummaryNodes } from './tuneSummary';
import { withMethodRecord } from '../../presets/methodRecord';
import { describeObjective } from '../../cli/tuningFormat';
import type { AppContext } from '../appContext';
import { axis, chartSize, fitChart, followSize } from '../charts/theme';
import { byId, el, toast } from '../dom';
import { formatR } from '../format';
import { FIELDS, type NumberField } from '../panel/fields';
import { cloneJson, getAt, setAt } from '../panel/presetPath';
import { isCancelled } from '../engine/engineClient';
import { DEFAULT_TRANSMISSION_SHARE } from '../../tuning/transmissionConstraint';

const TUNABLE_GROUPS = new Set(['source', 'timing', 'drift', 'mirror', 'detector']);

/**
 * Number fields that make sense to scan or tune in this setup (present and shown): potentials,
 * timing and lengths of the analyser; not grid transmissions, the detector's size or the digitizer.
 */
export function tunableFields(preset: Preset): NumberField[] {
  return FIELDS.filter(
    (f): f is NumberField =>
      f.kind === 'number' &&
      TUNABLE_GROUPS.has(f.group) &&
      !/Transmission$/i.test(f.key) &&
      !f.path.startsWith('acquisition.') &&
      f.key !== 'activeDiameter_mm' &&
      (!f.visible || f.visible(preset)) &&
      typeof getAt(preset, f.path) === 'number',
  );
}

/** A default range around the current value: ±5 % (at least ±100 V) for potentials, ×0.5…×1.5 otherwise, inside the limits. */
export function defaultRange(field: NumberField, value: number): [number, number] {
  let lo: number;
  let hi: number;
  if (field.path.endsWith('_V')) {
    const half = Math.max(Math.abs(value) * 0.05, 100);
    [lo, hi] = [value - half, value + half];
  } else if (value === 0) {
    [lo, hi] = [0, field.window ? field.window[1] / 4 : 1];
  } else {
    [lo, hi] = [value * 0.5, value * 1.5].sort((a, b) => a - b) as [number, number];
  }
  const snap = (x: number): number => Math.round(x / field.step) * field.step;
  return [Math.max(field.limits.min, snap(lo)), Math.min(field.limits.max, snap(hi))];
}

export class TuningView {
  private readonly scanPath = byId<HTMLSelectElement>('scan-path');
  private readonly scanFrom = byId<HTMLInputElement>('scan-from');
  private readonly scanTo = byId<HTMLInputElement>('scan-to');
  private readonly scanSteps = byId<HTMLInputElement>('scan-steps');
  private readonly scanIons = byId<HTMLInputElement>('scan-ions');
  private readonly scanSpecies = byId<HTMLSelectElement>('scan-species');
  private readonly scanProgress = byId<HTMLProgressElement>('scan-progress');
  private readonly scanStatus = byId('scan-status');
  private readonly scanStart = byId<HTMLButtonElement>('btn-scan');
  private readonly scanCancel = byId<HTMLButtonElement>('btn-scan-cancel');
  private readonly scanApply = byId<HTMLButtonElement>('btn-scan-apply');
  private readonly tuneParams = byId('tune-params');
  private readonly tuneSpecies = byId<HTMLSelectElement>('tune-species');
  private readonly tuneObjective = byId<HTMLSelectElement>('tune-objective');
  private readonly tuneProgress = byId<HTMLProgressElement>('tune-progress');
  private readonly tuneResultBox = byId('tune-result');
  private readonly tuneStart = byId<HTMLButtonElement>('btn-tune');
  private readonly tuneCancel = byId<HTMLButtonElement>('btn-tune-cancel');
  private readonly tuneApply = byId<HTMLButtonElement>('btn-tune-apply');
  private readonly tuneTransmissionKind = byId<HTMLSelectElement>('tune-transmission-kind');
  private readonly tuneTransmissionPct = byId<HTMLInputElement>('tune-transmission-pct');
  private readonly chartHost = byId('scan-chart');
  private chart: uPlot | null = null;
  private scanResult: { result: ScanResult; path: string; label: string; base: Preset; targetMz: number } | null = null;
  private tuneResult: TuneResult | null = null;
  /** What the last tune was asked, for the method record written when it is applied. */
  private tuneRequest: { parameters: { path: string; min: number; max: number }[]; objective: Objective; ions: number; seed: number } | null = null;
  private busy: 'scan' | 'tune' | null = null;

  constructor(private readonly app: AppContext) {
    followSize(this.chartHost, () => this.chart);
    this.scanPath.addEventListener('change', () => this.fillScanRange());
    byId<HTMLFormElement>('scan-form').addEventListener('submit', (e) => {
      e.preventDefault();
      void this.startScan();
    });
    byId<HTMLFormElement>('tune-form').addEventListener('submit', (e) => {
      e.preventDefault();
      void this.startTune();
    });
    this.scanCancel.addEventListener('click', () => this.cancel());
    this.tuneCancel.addEventListener('click', () => this.cancel());
    this.scanApply.addEventListener('click', () => this.applyBestScanPoint());
    this.tuneApply.addEventListener('click', () => this.applyTuned());
    for (const radio of document.querySelectorAll<HTMLInputElement>('input[name="scan-y"]')) radio.addEventListener('change', () => this.drawScan());
    byId<HTMLInputElement>('scan-log').addEventListener('change', () => this.drawScan());
    // One default everywhere: the tuning API's (each species keeps 99 % of its current transmission).
    this.tuneTransmissionPct.value = String(DEFAULT_TRANSMISSION_SHARE * 100);
    this.tuneTransmissionKind.addEventListener('change', () => {
      if (this.tuneTransmissionKind.value === 'share') this.tuneTransmissionPct.value = String(DEFAULT_TRANSMISSION_SHARE * 100);
    });
    this.tuneObjective.addEventListener('change', () => (this.tuneSpecies.disabled = this.tuneObjective.value === 'max-min-r-over-range'));
  }

  /** Refill the choices from the working setup (keeps the user's picks where they still apply). */
  refresh(): void {
    const preset = this.app.working();
    const fields = tunableFields(preset);
    const keepPath = this.scanPath.value;
    this.scanPath.replaceChildren(...fields.map((f) => el('option', { value: f.path, text: f.label })));
    if (fields.some((f) => f.path === keepPath)) this.scanPath.value = keepPath;
    else if (fields.some((f) => f.path === 'source.extraction.delay_ns')) this.scanPath.value = 'source.extraction.delay_ns';
    if (!this.busy) this.fillScanRange();
    for (const select of [this.scanSpecies, this.tuneSpecies]) {
      const keep = select.value;
      select.replaceChildren(...preset.ions.species.map((s) => el('option', { value: String(s.mz), text: `${s.label ?? 'm/z'} (${s.mz.toFixed(4)})` })));
      const middle = preset.ions.species[Math.floor((preset.ions.species.length - 1) / 2)];
      select.value = preset.ions.species.some((s) => String(s.mz) === keep) ? keep : String(middle.mz);
    }
    const checked = new Set(Array.from(this.tuneParams.querySelectorAll<HTMLInputElement>('input[type="checkbox"]:checked')).map((c) => c.value));
    const first = checked.size === 0;
    this.tuneParams.replaceChildren(
      ...fields.map((f) => {
        const value = getAt(preset, f.path) as number;
        const [lo, hi] = defaultRange(f, value);
        const on = first ? f.path === 'source.extraction.delay_ns' : checked.has(f.path);
        const id = `tune-${f.key}`;
        return el(
          'div',
          { className: 'tune-param' },
          el('input', { type: 'checkbox', id, value: f.path, ...(on ? { checked: '' } : {}) }),
          el('label', { for: id, text: f.label }),
          el('input', { type: 'number', step: 'any', value: String(lo), 'aria-label': `${f.label}: lowest value`, 'data-bound': 'min' }),
          el('input', { type: 'number', step: 'any', value: String(hi), 'aria-label': `${f.label}: highest value`, 'data-bound': 'max' }),
        );
      }),
    );
  }

  private fillScanRange(): void {
    const field = tunableFields(this.app.working()).find((f) => f.path === this.scanPath.value);
    if (!field) return;
    const [lo, hi] = defaultRange(field, getAt(this.app.working(), field.path) as number);
    this.scanFrom.value = String(lo);
    this.scanTo.value = String(hi);
  }

  private setBusy(kind: 'scan' | 'tune' | null): void {
    this.busy = kind;
    this.scanStart.disabled = kind !== null;
    this.tuneStart.disabled = kind !== null;
    this.scanCancel.disabled = kind !== 'scan';
    this.tuneCancel.disabled = kind !== 'tune';
    document.body.dataset.tuning = kind ?? 'idle';
  }

  cancel(): void {
    if (!this.busy) return;
    const kind = this.busy;
    this.app.tuningEngine.cancel();
    this.setBusy(null);
    if (kind === 'scan') this.scanStatus.textContent = 'Scan cancelled.';
    else this.tuneResultBox.textContent = 'Auto-tune cancelled.';
  }

  private async startScan(): Promise<void> {
    const from = Number(this.scanFrom.value);
    const to = Number(this.scanTo.value);
    const steps = Math.round(Number(this.scanSteps.value));
    const ions = Math.round(Number(this.scanIons.value));
    if (![from, to].every(Number.isFinite) || !(steps >= 2 && steps <= 201) || !(ions >= 100)) {
      this.scanStatus.textContent = 'Give finite from/to values, 2–201 points and at least 100 ions.';
      return;
    }
    const base = structuredClone(this.app.working());
    const path = this.scanPath.value;
    const label = this.scanPath.selectedOptions[0]?.textContent ?? path;
    const targetMz = Number(this.scanSpecies.value);
    this.setBusy('scan');
    this.scanApply.disabled = true;
    this.scanProgress.value = 0;
    this.scanStatus.textContent = `Scanning ${label}…`;
    const started = performance.now();
    try {
      const result = await this.app.tuningEngine.scan(
        {
          preset: base,
          axes: [{ path, from, to, steps }],
          objective: { name: 'max-r-at-mz', targetMz },
          ions,
          ...(byId<HTMLInputElement>('scan-ideal').checked || !base.acquisition ? { criterion: 'ideal' as const } : {}),
        },
        (p) => {
          this.scanProgress.value = p.total > 0 ? p.done / p.total : 0;
          this.scanStatus.textContent = `Scanning ${label}: ${p.done} of ${p.total} points${p.message ? ` (${p.message})` : ''}`;
        },
      );
      this.scanResult = { result, path, label, base, targetMz };
      this.scanProgress.value = 1;
      this.scanStatus.textContent = `${result.points.length} points in ${((performance.now() - started) / 1000).toFixed(1)} s.`;
      this.scanApply.disabled = !this.bestScanPoint();
      this.drawScan();
    } catch (err) {
      if (!isCancelled(err)) this.scanStatus.textContent = `Scan failed: ${(err as Error).message}`;
    } finally {
      if (this.busy === 'scan') this.setBusy(null);
    }
  }

  private bestScanPoint(): { value: number; objective: number } | null {
    if (!this.scanResult) return null;
    let best: { value: number; objective: number } | null = null;
    for (const p of this.scanResult.result.points) {
      if (p.objective !== null && Number.isFinite(p.objective) && (!best || p.objective > best.objective)) best = { value: p.values[0], objective: p.objective };
    }
    return best;
  }

  private drawScan(): void {
    const scan = this.scanResult;
    if (!scan) return;
    const showR = (document.querySelector<HTMLInputElement>('input[name="scan-y"]:checked')?.value ?? 'r') === 'r';
    const log = byId<HTMLInputElement>('scan-log').checked;
    const criterion = scan.result.criterion ?? 'ideal';
    const figure = showR ? CRITERION_LABELS[criterion] : 'mean flight time (µs)';
    const points = [...scan.result.points].sort((a, b) => a.values[0] - b.values[0]);
    const species = points[0]?.species ?? [];
    const colours = this.app.speciesColours();
    const x = Float64Array.from(points.map((p) => p.values[0]));
    const ys: (number | null)[][] = [];
    const series: uPlot.Series[] = [{ label: scan.label }];
    species.forEach((s, i) => {
      ys.push(points.map((p) => {
        const sp = p.species[i];
        const v = showR ? (criterion === 'spectrum' ? sp?.spectrumResolvingPower : sp?.resolvingPower) : sp?.flightTime_ns;
        // A log axis has no place for zero or negative values: those points become gaps.
        return v === null || v === undefined || (log && !(v > 0)) ? null : showR ? v : v / 1000;
      }));
      series.push({
        label: s.label ?? `m/z ${s.mz}`,
        stroke: colours[i] ?? '#8fd0ff',
        width: 1.5,
        points: { show: true, size: 4 },
        value: (_u, v) => (v === null || v === undefined ? '—' : showR ? formatR(v) : v.toFixed(4)),
      });
    });
    const data = [x, ...ys] as uPlot.AlignedData;
    this.chart?.destroy();
    this.chart = new uPlot(
      {
        ...chartSize(this.chartHost),
        scales: { x: { time: false }, y: log ? { distr: 3, log: 10 } : { auto: true } },
        axes: [
          axis(scan.label),
          axis(figure, { size: 62, values: (_u, ticks) => ticks.map((v) => (showR ? formatR(v) : v.toPrecision(6))) }),
        ],
        series,
        // Live legend: the hover read-out of every curve at the cursor's scan value.
        legend: { live: true },
      },
      data,
      this.chartHost,
    );
    fitChart(this.chartHost, this.chart);
  }

  private applyBestScanPoint(): void {
    const scan = this.scanResult;
    const best = this.bestScanPoint();
    if (!scan || !best) return;
    const doc = cloneJson(this.app.working());
    setAt(doc, scan.path, best.value);
    const checked = validatePreset(doc);
    if (!checked.ok) {
      toast(`Could not apply: ${formatIssues(checked.issues)}`);
      return;
    }
    const point = scan.result.points.find((p) => p.values[0] === best.value);
    const recorded = withMethodRecord(checked.value, {
      kind: 'scan',
      ions: scan.result.ions ?? scan.base.run.ions,
      seed: scan.result.seed ?? scan.base.run.seed,
      objective: describeObjective(scan.result.objective),
      criterion: scan.result.criterion ?? 'ideal',
      parameters: [{ path: scan.path, min: scan.result.axes[0].from ?? best.value, max: scan.result.axes[0].to ?? best.value, before: getAt(scan.base, scan.path) as number, applied: best.value }],
      result: point?.objective ?? null,
      note: `best of ${scan.result.points.length} scan points`,
    });
    this.app.loadSetup(recorded, { recordId: this.app.recordId(), state: 'dirty' });
    toast(`Applied ${scan.label} = ${best.value} (${CRITERION_LABELS[scan.result.criterion ?? 'ideal']} ${formatR(best.objective)} for m/z ${scan.targetMz}).`);
  }

  private async startTune(): Promise<void> {
    const parameters: { path: string; min: number; max: number; label: string }[] = [];
    for (const row of this.tuneParams.querySelectorAll<HTMLElement>('.tune-param')) {
      const box = row.querySelector<HTMLInputElement>('input[type="checkbox"]');
      if (!box?.checked) continue;
      const min = Number(row.querySelector<HTMLInputElement>('[data-bound="min"]')?.value);
      const max = Number(row.querySelector<HTMLInputElement>('[data-bound="max"]')?.value);
      if (!(Number.isFinite(min) && Number.isFinite(max) && max > min)) {
        this.tuneResultBox.textContent = `Give a range with highest > lowest for ${row.querySelector('label')?.textContent}.`;
        return;
      }
      parameters.push({ path: box.value, min, max, label: row.querySelector('label')?.textContent ?? box.value });
    }
    if (!parameters.length) {
      this.tuneResultBox.textContent = 'Tick at least one parameter to adjust.';
      return;
    }
    const objectiveName = this.tuneObjective.value as ObjectiveName;
    const preset = structuredClone(this.app.working());
    const mzs = preset.ions.species.map((s) => s.mz);
    const objective =
      objectiveName === 'max-min-r-over-range'
        ? { name: objectiveName, range: [Math.min(...mzs), Math.max(...mzs)] as [number, number] }
        : { name: objectiveName, targetMz: Number(this.tuneSpecies.value) };
    const transmission = this.transmissionConstraint();
    if (typeof transmission === 'string') {
      this.tuneResultBox.textContent = transmission;
      return;
    }
    const ions = Math.round(Number(byId<HTMLInputElement>('tune-ions').value));
    this.setBusy('tune');
    this.tuneApply.disabled = true;
    this.tuneProgress.value = 0;
    this.tuneResultBox.textContent = 'Tuning…';
    try {
      const result = await this.app.tuningEngine.optimise(
        {
          preset,
          parameters: parameters.map(({ path, min, max }) => ({ path, min, max })),
          objective,
          ...transmission,
          ions: ions >= 100 ? ions : undefined,
        },
        (p) => {
          this.tuneProgress.value = p.total > 0 ? p.done / p.total : 0;
          this.tuneResultBox.textContent = `Tuning: ${p.done} of ${p.total}${p.message ? ` — ${p.message}` : ''}`;
        },
      );
      this.tuneResult = result;
      this.tuneRequest = { parameters: parameters.map(({ path, min, max }) => ({ path, min, max })), objective, ions: ions >= 100 ? ions : preset.run.ions, seed: preset.run.seed };
      this.tuneProgress.value = 1;
      this.renderTune(result, parameters, objective);
      this.tuneApply.disabled = result.recommendation === 'preset'; // nothing to apply when the preset's own settings are kept
    } catch (err) {
      if (!isCancelled(err)) this.tuneResultBox.textContent = `Auto-tune failed: ${(err as Error).message}`;
    } finally {
      if (this.busy === 'tune') this.setBusy(null);
    }
  }

  /** The transmission constraint asked for, as request fields; a one-line message when the value is out of range. */
  private transmissionConstraint(): { keepTransmission: number } | { minTransmission: number } | string {
    const input = this.tuneTransmissionPct;
    const pct = input.value.trim() === '' ? NaN : Number(input.value);
    const ok = pct >= 0 && pct <= 100;
    input.classList.toggle('invalid', !ok);
    if (!ok) return `Transmission each species keeps: must be a percentage from 0 to 100 (got "${input.value}").`;
    return this.tuneTransmissionKind.value === 'floor' ? { minTransmission: pct / 100 } : { keepTransmission: pct / 100 };
  }

  private renderTune(result: TuneResult, parameters: readonly { path: string; label: string }[], objective: Objective): void {
    this.tuneResultBox.replaceChildren(...tuneSummaryNodes(tuneSummary(result, parameters, objective)));
  }

  private applyTuned(): void {
    const result = this.tuneResult;
    if (!result) return;
    const checked = validatePreset(result.tunedPreset);
    if (!checked.ok) {
      toast(`Could not apply: ${formatIssues(checked.issues)}`);
      return;
    }
    const asked = this.tuneRequest;
    const recorded = asked
      ? withMethodRecord(checked.value, {
          kind: 'tune',
          ions: asked.ions,
          seed: asked.seed,
          objective: describeObjective(asked.objective),
          criterion: result.criterion ?? 'ideal',
          parameters: asked.parameters.map((p, i) => ({ ...p, before: getAt(this.app.working(), p.path) as number, applied: result.best[i] })),
          result: result.objective,
          note: `auto-tune, ${result.evaluations} evaluations; start: ${(result.startSource ?? []).join('; ') || 'current settings'}${result.transmissionConstraint ? `; transmission: ${result.transmissionConstraint}` : ''}`,
        })
      : checked.value;
    this.app.loadSetup(recorded, { recordId: this.app.recordId(), state: 'dirty' });
    toast('Applied the tuned values.');
  }
}
