/** The results pane's DOM: the peak table (one row per species peak), the loss reasons and the focus notes. */
import { FATE_DESCRIPTIONS, FATE_KEYS, type FateCounts } from '../../physics/fates';
import type { RunReport } from '../../simulation/report';
import { el } from '../dom';
import { fixed, formatCount, formatR, percent, signed } from '../format';
import type { PeakRow } from './runView';
import { formatIdealResolvingPower } from '../../simulation/headline';

/** A calibrant's residual says nothing when no degree of freedom is left: show that instead of "+0.0". */
export function massErrorText(r: PeakRow, calibrationFreedom: number): string {
  if (r.calibrant && calibrationFreedom <= 0) return 'cal. (no d.o.f.)';
  return signed(r.massError_ppm, 1) + (r.calibrant && r.massError_ppm !== null ? ' (cal.)' : '');
}

export function renderPeakTable(table: HTMLTableElement, rows: readonly PeakRow[], calibrationNote: string, calibrationFreedom = 1): void {
  const body = table.tBodies[0];
  body.replaceChildren(
    ...rows.map((r) =>
      el(
        'tr',
        { 'data-mz': String(r.species.mz) },
        el('th', { scope: 'row' }, el('span', { className: 'swatch', 'data-colour': r.colour }), r.species.label),
        el('td', { text: r.species.mz.toFixed(2), title: String(r.species.mz) }),
        el('td', { text: fixed(r.flightTime_us, 3) }),
        el('td', { text: fixed(r.headline.fwhm_ns, 2) }),
        el('td', {
          className: 'r-value',
          text: formatR(r.headline.resolvingPower),
          title: r.headline.source === 'spectrum' ? 'R of the simulated spectrum peak (FWHM)' : 'no acquisition settings: R from the ions\' arrival times (ideal detector)',
        }),
        el('td', { text: formatIdealResolvingPower(r.headline), title: 'ideal-detector limit: R from the ions\' arrival times alone' }),
        el('td', { text: percent(r.transmission) }),
        el('td', { text: massErrorText(r, calibrationFreedom), title: calibrationNote }),
      ),
    ),
  );
  paintSwatches(body);
}

/** Swatch colours are set through the CSSOM (allowed under the CSP), not through style attributes. */
export function paintSwatches(root: ParentNode): void {
  for (const swatch of root.querySelectorAll<HTMLElement>('.swatch[data-colour]')) swatch.style.background = swatch.dataset.colour ?? '';
}

export function renderFates(list: HTMLElement, fates: FateCounts, total: number): void {
  const lost = FATE_KEYS.filter((k) => k !== 'detected' && fates[k] > 0);
  if (!lost.length) {
    list.replaceChildren(el('li', { text: `none: all ${formatCount(total)} ions reached the detector` }));
    return;
  }
  list.replaceChildren(
    ...lost.map((k) => el('li', { 'data-fate': k }, el('span', { className: 'count', text: formatCount(fates[k]) }), FATE_DESCRIPTIONS[k])),
  );
}

export function runSummary(report: RunReport, elapsed_ms: number): string {
  return `${formatCount(report.ions)} ions · ${percent(report.detected / Math.max(report.ions, 1))} detected · engine ${elapsed_ms.toFixed(0)} ms`;
}
