/** The results pane's controls: spectrum axis and peak zoom, and the downloads of the run last shown. */
import { htmlReport } from '../../simulation/htmlReport';
import type { SpectrumAxis, SpectrumChart } from '../charts/spectrumChart';
import { byId, copyText, downloadBlob, downloadText, toast } from '../dom';
import { arrivalHistogram } from '../results/arrivalHistogram';
import { peakTableCsv } from '../results/peakCsv';
import type { RunRenderer } from './runRenderer';

/** `baseName()`: the file name stem of the working setup. */
export function wireResultDownloads(spectrum: SpectrumChart, renderer: RunRenderer, zoomSelect: HTMLSelectElement, baseName: () => string): void {
  for (const radio of document.querySelectorAll<HTMLInputElement>('input[name="spectrum-axis"]')) {
    radio.addEventListener('change', () => {
      if (!radio.checked) return;
      spectrum.setAxis(radio.value as SpectrumAxis);
      renderer.rezoom();
    });
  }
  zoomSelect.addEventListener('change', () => spectrum.zoomToSpecies(zoomSelect.value === '' ? null : Number(zoomSelect.value)));
  byId('btn-spectrum-png').addEventListener('click', () => void spectrum.toPng().then((b) => b && downloadBlob(b, `${baseName()}-spectrum.png`)));
  byId('btn-csv').addEventListener('click', () => renderer.shown && downloadText(peakTableCsv(renderer.shown.view.rows), `${baseName()}-peaks.csv`, 'text/csv'));
  byId('btn-copy-csv').addEventListener('click', () => {
    const shown = renderer.shown;
    if (!shown) return;
    void copyText(peakTableCsv(shown.view.rows)).then((ok) => toast(ok ? 'Peak table copied as CSV.' : 'The clipboard is not available here; use the CSV button.'));
  });
  byId('btn-json').addEventListener('click', () => {
    const shown = renderer.shown;
    if (!shown) return;
    const doc = { preset: shown.job.preset, ions: shown.job.ions, elapsed_ms: shown.output.elapsed_ms, report: shown.output.report };
    downloadText(JSON.stringify(doc, null, 2) + '\n', `${baseName()}-results.json`, 'application/json');
  });
  byId('btn-report').addEventListener('click', () => {
    const shown = renderer.shown;
    if (!shown) return;
    const page = htmlReport({
      preset: shown.job.preset,
      report: shown.output.report,
      ions: shown.output.report.ions,
      seed: shown.job.preset.run.seed,
      spectrum: arrivalHistogram(shown.output, shown.job.preset.acquisition?.sampleInterval_ns ?? null),
      date: new Date().toISOString(),
      producedBy: 'app',
    });
    downloadText(page, `${baseName()}-report.html`, 'text/html');
  });
}
