/**
 * Chart geometry for the tolerance tab, as plain data (tested in Node), and its rendering as
 * inline SVG: a horizontal bar per parameter (contribution to the mass error at its tolerance,
 * sorted, largest on top; with no tolerances given, the allowed value alone is listed instead) and
 * a histogram of the Monte-Carlo draws.
 */
import type { ToleranceResult } from '../../tolerance/analysis';
import type { Histogram } from '../../tolerance/statistics';

export interface ContributionBar {
  readonly label: string;
  readonly value_ppm: number;
  /** Bar length as a fraction of the longest (0..1). */
  readonly fraction: number;
  readonly share: number | null;
  readonly kind: 'slow' | 'shot';
}

/** Bars of the contributions that are not zero, largest first. */
export function contributionBars(result: ToleranceResult): ContributionBar[] {
  const rows = result.budget.rows.filter((r) => (r.contribution_ppm ?? 0) > 0);
  const longest = Math.max(0, ...rows.map((r) => r.contribution_ppm ?? 0));
  return rows
    .map((r) => ({ label: r.label, value_ppm: r.contribution_ppm ?? 0, fraction: longest > 0 ? (r.contribution_ppm ?? 0) / longest : 0, share: r.share, kind: r.kind }))
    .sort((a, b) => b.value_ppm - a.value_ppm);
}

export interface HistogramBar {
  readonly x: number;
  readonly width: number;
  readonly height: number;
}

/** Bars of a histogram scaled into a width × height box (y grows downwards, as in SVG). */
export function histogramBars(h: Histogram, width: number, height: number): HistogramBar[] {
  if (h.counts.length === 0) return [];
  const lo = h.edges[0];
  const hi = h.edges[h.edges.length - 1];
  const span = hi > lo ? hi - lo : 1;
  const top = Math.max(...h.counts);
  return h.counts.map((c, k) => {
    const x0 = h.counts.length === 1 ? 0 : ((h.edges[k] - lo) / span) * width;
    const x1 = h.counts.length === 1 ? width : ((h.edges[k + 1] - lo) / span) * width;
    return { x: x0, width: Math.max(0.5, x1 - x0 - 0.5), height: top > 0 ? (c / top) * height : 0 };
  });
}

const SVG = 'http://www.w3.org/2000/svg';

function svg<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number>, text?: string): SVGElementTagNameMap[K] {
  const node = document.createElementNS(SVG, tag);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
  if (text !== undefined) node.textContent = text;
  return node;
}

const fmt = (x: number): string => Number(x.toPrecision(3)).toString();

export function renderContributionChart(bars: readonly ContributionBar[]): SVGSVGElement {
  const rowH = 20;
  const labelW = 230;
  const barW = 260;
  const height = Math.max(1, bars.length) * rowH + 8;
  const root = svg('svg', { viewBox: `0 0 ${labelW + barW + 140} ${height}`, role: 'img', 'aria-label': 'Contribution of each parameter to the mass error (ppm, 1 sd)', class: 'tol-bars' });
  bars.forEach((b, i) => {
    const y = 4 + i * rowH;
    root.append(svg('text', { x: labelW - 6, y: y + 14, 'text-anchor': 'end', class: 'tol-label' }, b.label));
    root.append(svg('rect', { x: labelW, y: y + 3, width: Math.max(1, b.fraction * barW), height: rowH - 6, class: b.kind === 'shot' ? 'tol-bar tol-shot' : 'tol-bar' }));
    root.append(svg('text', { x: labelW + b.fraction * barW + 6, y: y + 14, class: 'tol-value' }, `${fmt(b.value_ppm)} ppm${b.share === null ? '' : ` (${(b.share * 100).toFixed(0)} %)`}`));
  });
  return root;
}

export function renderHistogram(h: Histogram, title: string, unit: string): SVGSVGElement {
  const w = 260;
  const plotH = 90;
  const root = svg('svg', { viewBox: `0 0 ${w} ${plotH + 36}`, role: 'img', 'aria-label': title, class: 'tol-hist' });
  root.append(svg('text', { x: 0, y: 12, class: 'tol-label' }, title));
  for (const b of histogramBars(h, w, plotH)) root.append(svg('rect', { x: b.x, y: 18 + plotH - b.height, width: b.width, height: b.height, class: 'tol-bar' }));
  if (h.edges.length > 0) {
    root.append(svg('text', { x: 0, y: plotH + 32, class: 'tol-value' }, `${fmt(h.edges[0])} ${unit}`));
    root.append(svg('text', { x: w, y: plotH + 32, 'text-anchor': 'end', class: 'tol-value' }, `${fmt(h.edges[h.edges.length - 1])} ${unit}`));
  }
  return root;
}
