/**
 * The tolerances tab: runs the stability analysis of the working setup on the tuning pool (with
 * progress and an immediate cancel), shows the contributions per parameter as a sorted bar chart,
 * the budget table and the Monte-Carlo histograms, and holds the data-sheet form that writes a
 * tolerances section into the working setup. The page only draws what the workers computed.
 */
import type { Preset } from '../../presets/schema';
import { formatIssues } from '../../presets/issues';
import type { ToleranceResult } from '../../tolerance/analysis';
import type { AppContext } from '../appContext';
import { byId, el, toast } from '../dom';
import { formatR, percent } from '../format';
import { isCancelled } from '../engine/engineClient';
import { applyDataSheet, dataSheetFields, MATERIAL_CHOICES, readDataSheet } from './dataSheet';
import { contributionBars, renderContributionChart, renderHistogram } from './toleranceCharts';

const num = (x: number | null | undefined, digits = 3): string => (x === null || x === undefined || !Number.isFinite(x) ? '—' : Number(x.toPrecision(digits)).toString());

export class ToleranceView {
  private readonly ions = byId<HTMLInputElement>('tol-ions');
  private readonly draws = byId<HTMLInputElement>('tol-draws');
  private readonly start = byId<HTMLButtonElement>('btn-tol-run');
  private readonly cancelButton = byId<HTMLButtonElement>('btn-tol-cancel');
  private readonly progress = byId<HTMLProgressElement>('tol-progress');
  private readonly status = byId('tol-status');
  private readonly bars = byId('tol-bars');
  private readonly summary = byId('tol-budget-summary');
  private readonly budgetBody = byId<HTMLTableElement>('tol-budget').tBodies[0];
  private readonly hists = byId('tol-hists');
  private readonly sheetFields = byId('tol-sheet-fields');
  private readonly sheetStatus = byId('tol-sheet-status');
  private busy = false;
  private runCounter = 0;

  constructor(private readonly app: AppContext) {
    byId<HTMLFormElement>('tol-run-form').addEventListener('submit', (e) => {
      e.preventDefault();
      void this.run();
    });
    this.cancelButton.addEventListener('click', () => this.cancel());
    byId<HTMLFormElement>('tol-sheet-form').addEventListener('submit', (e) => {
      e.preventDefault();
      this.applySheet();
    });
  }

  /** Refill the data-sheet form from the working setup. */
  refresh(): void {
    const preset = this.app.working();
    const values = readDataSheet(preset);
    this.sheetFields.replaceChildren(
      ...dataSheetFields(preset).map((f) => {
        const input =
          f.kind === 'material'
            ? el('select', { name: f.path }, ...MATERIAL_CHOICES.map((c) => el('option', { value: c.value, text: c.text })))
            : el('input', { name: f.path, type: 'number', min: String(f.min), max: String(f.max), step: 'any', value: values[f.path] ?? '' });
        if (f.kind === 'material') (input as HTMLSelectElement).value = values[f.path] ?? 'stainless-304';
        return el('label', {}, f.label, input);
      }),
    );
  }

  private applySheet(): void {
    const values: Record<string, string> = {};
    for (const node of this.sheetFields.querySelectorAll<HTMLInputElement | HTMLSelectElement>('input, select')) {
      values[node.name] = node.value;
      node.removeAttribute('aria-invalid');
    }
    const r = applyDataSheet(this.app.working(), values);
    if (!r.ok) {
      this.sheetStatus.textContent = formatIssues(r.issues);
      for (const issue of r.issues) this.sheetFields.querySelector(`[name="${CSS.escape(issue.path)}"]`)?.setAttribute('aria-invalid', 'true');
      return;
    }
    this.app.loadSetup(r.value, { recordId: this.app.recordId(), state: 'dirty' });
    this.sheetStatus.textContent = 'Applied: the working setup now carries these tolerances (save it to keep them).';
  }

  private setBusy(on: boolean): void {
    this.busy = on;
    this.start.disabled = on;
    this.cancelButton.disabled = !on;
  }

  private cancel(): void {
    if (!this.busy) return;
    this.runCounter++;
    this.app.tuningEngine.cancel();
    this.setBusy(false);
    this.status.textContent = 'Cancelled.';
  }

  private async run(): Promise<void> {
    const engine = this.app.tuningEngine;
    if (this.busy || !engine.tolerance) return;
    const ions = Number(this.ions.value);
    const draws = Number(this.draws.value);
    if (!(Number.isInteger(ions) && ions >= 100 && ions <= 200_000)) return void (this.status.textContent = 'Ions per run: an integer from 100 to 200000.');
    if (!(Number.isInteger(draws) && draws >= 0 && draws <= 2000)) return void (this.status.textContent = 'Monte-Carlo draws: an integer from 0 to 2000.');
    const preset: Preset = this.app.working();
    const counter = ++this.runCounter;
    this.setBusy(true);
    this.progress.value = 0;
    this.status.textContent = 'Running…';
    try {
      const result = await engine.tolerance({ preset, ions, draws }, (p) => {
        if (counter !== this.runCounter) return;
        this.progress.value = p.total > 0 ? p.done / p.total : 0;
        this.status.textContent = `${p.message}: ${p.done} of ${p.total} runs`;
      });
      if (counter !== this.runCounter) return;
      this.show(result);
      this.status.textContent = `Done: ${result.sensitivities.length} parameters, ${result.monteCarlo?.drawsRun ?? 0} draws at ${result.ions} ions.`;
      document.body.dataset.tolerance = 'done';
    } catch (err) {
      if (counter !== this.runCounter || isCancelled(err)) return;
      this.status.textContent = `Failed: ${(err as Error).message}`;
      toast('The stability analysis failed; see the tolerances tab.');
    } finally {
      if (counter === this.runCounter) this.setBusy(false);
    }
  }

  private show(r: ToleranceResult): void {
    const bars = contributionBars(r);
    this.bars.replaceChildren(
      bars.length > 0 ? renderContributionChart(bars) : el('p', { className: 'summary', text: 'No tolerances given: fill in the data-sheet form below to see what dominates. The budget table lists what each parameter may be alone.' }),
    );
    const b = r.budget;
    this.summary.textContent =
      `Target ${num(b.targetAccuracy_ppm)} ppm over ${b.range_mz ? `m/z ${b.range_mz[0]}–${b.range_mz[1]}` : 'every species'}: ` +
      `combined ${num(b.combined_ppm)} ppm at the stated tolerances (worst m/z ${b.worstMz ?? '—'}), ${b.meetsTarget ? 'meets the target' : 'misses the target'}. ` +
      `Calibration ${r.calibration.law} fixed on the unperturbed run (${r.calibration.from}); ${r.shots} shot(s) per spectrum.`;
    this.budgetBody.replaceChildren(
      ...b.rows.map((row) =>
        el(
          'tr',
          {},
          el('td', { text: `${row.label} (${row.kind === 'shot' ? 'shot to shot' : 'slow'})` }),
          el('td', { text: `${num(row.tolerance)} ${row.unit}` }),
          el('td', { text: num(row.sensitivity_ppm_per_unit, 4) }),
          el('td', { text: num(row.contribution_ppm) }),
          el('td', { text: percent(row.share) }),
          el('td', { text: row.allowedAlone === null ? '—' : `${num(row.allowedAlone)} ${row.unit}` }),
          el('td', { text: row.allowedRss === null ? '—' : `${num(row.allowedRss)} ${row.unit}` }),
        ),
      ),
    );
    const mc = r.monteCarlo;
    if (!mc) {
      this.hists.replaceChildren(el('p', { className: 'summary', text: 'Monte Carlo not run (0 draws).' }));
      return;
    }
    this.hists.replaceChildren(
      el('p', { className: 'summary', text: `Draws: ${mc.design.method}.` }),
      ...mc.species.map((s, i) =>
        el(
          'div',
          { className: 'tol-hist-card' },
          el('h3', { text: `${s.label} (m/z ${s.mz})` }),
          renderHistogram(s.histograms.massError_ppm, 'apparent mass error', 'ppm'),
          el('p', {
            className: 'summary',
            text:
              `spectrum peak: median ${num(s.massError_ppm.median)} ppm, 5–95 % ${num(s.massError_ppm.p5)}…${num(s.massError_ppm.p95)} ppm (linear ±${num(s.linear.p95_ppm)}); ` +
              `ideal detector: 5–95 % ${num(s.massErrorIons_ppm.p5)}…${num(s.massErrorIons_ppm.p95)} ppm`,
          }),
          renderHistogram(s.histograms.resolvingPower, 'resolving power (spectrum)', ''),
          el('p', { className: 'summary', text: `R median ${formatR(s.resolvingPower.median)}, 5–95 % ${formatR(s.resolvingPower.p5)}…${formatR(s.resolvingPower.p95)} (unperturbed ${formatR(r.species[i].resolvingPower ?? r.species[i].resolvingPowerIons)})` }),
        ),
      ),
    );
  }
}
