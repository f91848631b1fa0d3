/**
 * The fragment table under the peaks: one row per decay-channel product of each species with a
 * preset `decay` section (what the worker's run reported: src/simulation/fragmentReport.ts). Hidden
 * when no species decays. The page computes nothing here; it only lays the figures out.
 */
import type { RunReport } from '../../simulation/report';
import { el } from '../dom';

const num = (x: number | null | undefined, digits: number): string => (x === null || x === undefined ? '—' : x.toFixed(digits));

export function renderFragmentTable(container: HTMLElement, report: RunReport): void {
  const decaying = report.species.filter((s) => s.fragments && s.fragments.length > 0);
  container.hidden = decaying.length === 0;
  if (decaying.length === 0) {
    container.replaceChildren();
    return;
  }
  const head = el(
    'tr',
    {},
    ...['precursor', 'channel / product', 'true m/z', 'apparent m/z', 't / µs', 'FWHM / ns', 'R', 'ideal R', 'transm.', 'behind mirror', 'decays (source/drift/mirror/return)'].map((t) => el('th', { scope: 'col', text: t })),
  );
  const rows = decaying.flatMap((s) =>
    s.fragments!.flatMap((c) =>
      [c.fragment, c.complement].map((p) => {
        const d = c.decaysByRegion;
        const t = p.peak ? p.peak.centroid_ns : p.flightTime_ns;
        return el(
          'tr',
          { 'data-role': p.role },
          el('td', { text: p === c.fragment ? s.label : '' }),
          el('td', { text: p === c.fragment ? c.label : `${p.role}: ${p.label}` }),
          el('td', { text: num(p.mz, 3) }),
          el('td', { text: num(p.apparentMz, 3) }),
          el('td', { text: t === null ? '—' : (t / 1000).toFixed(4) + (p.figuresFrom === 'behindMirror' ? ' (behind mirror)' : '') }),
          el('td', p.peakNote ? { text: num(p.peak?.fwhm_ns, 2) + (p.peak?.fwhm_ns == null ? ` (${p.peakNote})` : ' *'), title: p.peakNote } : { text: num(p.peak?.fwhm_ns, 2) }),
          el('td', { text: num(p.peak?.resolvingPower, 0) }),
          el('td', { text: num(p.resolvingPower, 0) }),
          el('td', { text: `${(100 * p.transmission).toFixed(1)} %` }),
          el('td', { text: String(p.detectedBehindMirror) }),
          el('td', { text: p === c.fragment ? `${d.source}/${d.drift}/${d.mirror}/${d.returnDrift}` : '' }),
        );
      }),
    ),
  );
  const table = el('table', { className: 'data-table', 'data-testid': 'fragment-table' }, el('caption', { text: 'Fragment ions (decay in flight): apparent m/z under the precursor calibration; R from the simulated spectrum peak, ideal R from the arrival times alone of the ions under it; * see the cell\'s note' }), el('thead', {}, head), el('tbody', {}, ...rows));
  container.replaceChildren(el('h3', { text: 'Fragments' }), el('div', { className: 'table-scroll' }, table));
}
