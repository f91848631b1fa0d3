/** Shared uPlot settings in the app's colours, and a ResizeObserver that keeps a chart at its host's size. */
import uPlot from 'uplot';

export const AXIS_COLOUR = '#8d9cab';
export const GRID_COLOUR = '#222c36';

export function axis(label: string, extra: Partial<uPlot.Axis> = {}): uPlot.Axis {
  return {
    label,
    stroke: AXIS_COLOUR,
    labelSize: 18,
    labelFont: '600 11px system-ui, sans-serif',
    font: '11px system-ui, sans-serif',
    grid: { stroke: GRID_COLOUR, width: 1 },
    ticks: { stroke: GRID_COLOUR, width: 1, size: 4 },
    ...extra,
  };
}

/** Host size minus the legend's height (estimated before the chart exists); never below a usable minimum. */
export function chartSize(host: HTMLElement, legendHeight = 30): { width: number; height: number } {
  return { width: Math.max(200, host.clientWidth), height: Math.max(110, host.clientHeight - legendHeight) };
}

/** Size the chart to its host, measuring the legend it actually has (it may wrap onto several lines). */
export function fitChart(host: HTMLElement, chart: uPlot): void {
  const legend = chart.root.querySelector<HTMLElement>('.u-legend');
  const size = chartSize(host, legend ? legend.offsetHeight + 4 : 30);
  if (size.width !== chart.width || size.height !== chart.height) chart.setSize(size);
}

export function followSize(host: HTMLElement, chart: () => uPlot | null): ResizeObserver {
  let pending = 0;
  const observer = new ResizeObserver(() => {
    cancelAnimationFrame(pending);
    pending = requestAnimationFrame(() => {
      const c = chart();
      if (c) fitChart(host, c);
    });
  });
  observer.observe(host);
  return observer;
}

/** A colour with an alpha channel for area fills ("#rrggbb" → "#rrggbbaa"). */
export function withAlpha(hex: string, alpha: number): string {
  return hex + Math.round(alpha * 255).toString(16).padStart(2, '0');
}

/** The chart's canvas (plot and axes) as a PNG blob. */
export function chartPng(chart: uPlot | null): Promise<Blob | null> {
  if (!chart) return Promise.resolve(null);
  const src = chart.ctx.canvas;
  // Paint the background in: the chart canvas itself is transparent.
  const out = document.createElement('canvas');
  out.width = src.width;
  out.height = src.height;
  const ctx = out.getContext('2d');
  if (!ctx) return Promise.resolve(null);
  ctx.fillStyle = '#151c24';
  ctx.fillRect(0, 0, out.width, out.height);
  ctx.drawImage(src, 0, 0);
  return new Promise((resolve) => out.toBlob(resolve, 'image/png'));
}
