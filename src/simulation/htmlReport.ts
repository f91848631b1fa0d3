/**
 * One self-contained HTML page for a lab notebook: the high-voltage caution, tool version, seed and
 * date, the results table (headline spectrum R beside the ideal-detector R), the calibration, the
 * spectrum and focus plots as inline SVG, the method record and the full settings. No scripts, no
 * external resources; shared by the CLI (--report) and the app ("Report"). Pure: returns a string.
 */
import type { Preset } from '../presets/schema';
import { HV_CAUTION } from './format';
import { formatIdealResolvingPower, formatResolvingPower, headlineFigures } from './headline';
import type { RunReport } from './report';
import { TOOL_VERSION } from '../version';

export interface ReportSeries {
  readonly time_ns: ArrayLike<number>;
  readonly intensity: ArrayLike<number>;
  /** What the curve is, e.g. "simulated spectrum (digitizer samples)". */
  readonly label: string;
}

export interface HtmlReportInput {
  readonly preset: Preset;
  readonly report: RunReport;
  readonly ions: number;
  readonly seed: number;
  readonly spectrum: ReportSeries | null;
  /** ISO date of the run. */
  readonly date: string;
  /** "CLI" or "app". */
  readonly producedBy: string;
}

const escapeHtml = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
const fixed = (x: number | null, d: number): string => (x === null || !Number.isFinite(x) ? '—' : x.toFixed(d));

/** Most points drawn per curve: min/max per column keeps narrow peaks visible. */
const PLOT_COLUMNS = 900;

function polyline(xs: ArrayLike<number>, ys: ArrayLike<number>, w: number, h: number, pad: number): { points: string; xRange: [number, number]; yMax: number } {
  const n = Math.min(xs.length, ys.length);
  let x0 = Infinity;
  let x1 = -Infinity;
  let yMax = 0;
  for (let i = 0; i < n; i++) {
    x0 = Math.min(x0, xs[i]);
    x1 = Math.max(x1, xs[i]);
    yMax = Math.max(yMax, ys[i]);
  }
  if (!(x1 > x0) || !(yMax > 0)) return { points: '', xRange: [0, 1], yMax: 1 };
  const cols = Math.min(PLOT_COLUMNS, n);
  const lo = new Float64Array(cols).fill(Infinity);
  const hi = new Float64Array(cols).fill(-Infinity);
  for (let i = 0; i < n; i++) {
    const c = Math.min(cols - 1, Math.floor(((xs[i] - x0) / (x1 - x0)) * cols));
    lo[c] = Math.min(lo[c], ys[i]);
    hi[c] = Math.max(hi[c], ys[i]);
  }
  const px = (c: number): number => pad + ((c + 0.5) / cols) * (w - 2 * pad);
  const py = (y: number): number => h - pad - (y / yMax) * (h - 2 * pad);
  const pts: string[] = [];
  for (let c = 0; c < cols; c++) {
    if (!Number.isFinite(hi[c])) continue;
    pts.push(`${px(c).toFixed(1)},${py(lo[c]).toFixed(1)}`, `${px(c).toFixed(1)},${py(hi[c]).toFixed(1)}`);
  }
  return { points: pts.join(' '), xRange: [x0, x1], yMax };
}

function svgPlot(title: string, xLabel: string, yLabel: string, curves: { xs: ArrayLike<number>; ys: ArrayLike<number>; colour: string; name: string }[], shared?: { x: [number, number]; y: [number, number] }): string {
  const w = 760;
  const h = 260;
  const pad = 60;
  let body = '';
  let xr: [number, number] = [0, 1];
  let yr: [number, number] = [0, 1];
  if (shared) {
    xr = shared.x;
    yr = shared.y;
    for (const c of curves) {
      const pts: string[] = [];
      for (let i = 0; i < Math.min(c.xs.length, c.ys.length); i++) {
        const x = pad + ((c.xs[i] - xr[0]) / (xr[1] - xr[0])) * (w - 2 * pad);
        const y = h - pad - ((c.ys[i] - yr[0]) / (yr[1] - yr[0])) * (h - 2 * pad);
        pts.push(`${x.toFixed(1)},${y.toFixed(1)}`);
      }
      body += `<polyline fill="none" stroke="${c.colour}" stroke-width="1.5" points="${pts.join(' ')}"/>`;
    }
  } else if (curves[0]) {
    const p = polyline(curves[0].xs, curves[0].ys, w, h, pad);
    xr = p.xRange;
    yr = [0, p.yMax];
    body += `<polyline fill="none" stroke="${curves[0].colour}" stroke-width="1" points="${p.points}"/>`;
  }
  const legend = curves.map((c, i) => `<text x="${w - pad - 4}" y="${pad + 14 * i}" text-anchor="end" fill="${c.colour}">${escapeHtml(c.name)}</text>`).join('');
  const tick = (v: number): string => (Math.abs(v) >= 1e4 || (Math.abs(v) < 1e-2 && v !== 0) ? v.toExponential(3) : v.toPrecision(6));
  return `<figure><figcaption>${escapeHtml(title)}</figcaption><svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}" font-size="11" font-family="sans-serif">
<rect x="${pad}" y="${pad}" width="${w - 2 * pad}" height="${h - 2 * pad}" fill="none" stroke="#999"/>${body}${legend}
<text x="${pad}" y="${h - pad + 14}">${tick(xr[0])}</text><text x="${w - pad}" y="${h - pad + 14}" text-anchor="end">${tick(xr[1])}</text>
<text x="${w / 2}" y="${h - 6}" text-anchor="middle">${escapeHtml(xLabel)}</text>
<text x="${pad - 4}" y="${h - pad}" text-anchor="end">${tick(yr[0])}</text><text x="${pad - 4}" y="${pad + 4}" text-anchor="end">${tick(yr[1])}</text>
<text x="12" y="${h / 2}" transform="rotate(-90 12 ${h / 2})" text-anchor="middle">${escapeHtml(yLabel)}</text></svg></figure>`;
}

/** Flight-time change (ppm) against start energy and start position from the focus analysis's derivatives (second-order Taylor model). */
function focusPlot(report: RunReport): string {
  const f = report.focus;
  if (!f || 'error' in f) return `<p>Focus analysis: ${escapeHtml(f && 'error' in f ? f.error : 'not available')}</p>`;
  const n = 81;
  const spanU = Math.max(1, 3 * f.referenceEnergy_eV);
  const spanZ = 0.1;
  const u = Float64Array.from({ length: n }, (_, i) => -1 + (2 * i) / (n - 1));
  // Undefined energy derivatives (the analysis had no energy spread to probe) draw as a flat line.
  const dU = f.dT_dU0_ns_per_eV ?? 0;
  const dUU = f.d2T_dU02_ns_per_eV2 ?? 0;
  const dtU = u.map((s) => ((dU * s * spanU + 0.5 * dUU * (s * spanU) ** 2) / f.flightTime_ns) * 1e6);
  const dtZ = u.map((s) => ((f.dT_dz0_ns_per_mm * s * spanZ + 0.5 * f.d2T_dz02_ns_per_mm2 * (s * spanZ) ** 2) / f.flightTime_ns) * 1e6);
  let lo = 0;
  let hi = 0;
  for (const v of [...dtU, ...dtZ]) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  if (!(hi > lo)) hi = lo + 1;
  return svgPlot(
    `Focus of the reference ion (m/z ${f.referenceMz.toFixed(4)}): flight-time change from the focus analysis's first and second derivatives (Taylor model), ` +
      `start energy ±${spanU.toPrecision(3)} eV about ${f.referenceEnergy_eV.toPrecision(3)} eV and start position ±${spanZ} mm`,
    'fraction of the range (−1 … +1)',
    'ΔT/T (ppm)',
    [
      { xs: u, ys: dtU, colour: '#c0392b', name: `energy: dT/dU0 = ${f.dT_dU0_ns_per_eV === null ? 'not probed' : `${f.dT_dU0_ns_per_eV.toPrecision(4)} ns/eV`}` },
      { xs: u, ys: dtZ, colour: '#2471a3', name: `position: dT/dz0 = ${f.dT_dz0_ns_per_mm.toPrecision(4)} ns/mm` },
    ],
    { x: [-1, 1], y: [lo, hi] },
  );
}

export function htmlReport(input: HtmlReportInput): string {
  const { preset, report } = input;
  const sample = preset.acquisition?.sampleInterval_ns ?? null;
  const cal = report.calibration && 'coefficients' in report.calibration ? report.calibration : null;
  const rows = report.species
    .map((s) => {
      const h = headlineFigures(s, sample);
      const k = cal ? cal.calibrantMz.indexOf(s.mz) : -1;
      const err = k >= 0 ? (cal!.degreesOfFreedom > 0 ? `${fixed(cal!.residuals_ppm[k], 2)} (cal.)` : 'cal. (no d.o.f.)') : fixed(s.massError_ppm, 2);
      return `<tr><th>${escapeHtml(s.label)}</th><td>${s.mz.toFixed(4)}</td><td>${fixed(s.flightTime_ns, 2)}</td><td>${fixed(h.fwhm_ns, 3)}</td><td>${formatResolvingPower(h.resolvingPower)}</td><td>${escapeHtml(formatIdealResolvingPower(h))}</td><td>${(s.transmission * 100).toFixed(1)} %</td><td>${err}</td></tr>`;
    })
    .join('\n');
  const calText = !report.calibration
    ? 'No calibrants set.'
    : 'error' in report.calibration
      ? `Calibration failed: ${report.calibration.error}`
      : `Calibration ${report.calibration.law} on m/z ${report.calibration.calibrantMz.map((m) => m.toFixed(4)).join(', ')} (${report.calibration.timesFrom}); ` +
        `${report.calibration.degreesOfFreedom} degree(s) of freedom, rms residual ${report.calibration.rms_ppm.toFixed(2)} ppm.` +
        (report.calibration.warning ? ` Warning: ${report.calibration.warning}.` : '');
  const records = preset.method?.records ?? [];
  const recordRows = records
    .map(
      (r) =>
        `<tr><td>${escapeHtml(r.date)}</td><td>${r.kind}</td><td>${escapeHtml(r.objective)} (${r.criterion === 'spectrum' ? 'spectrum R' : 'ideal-detector R'})</td>` +
        `<td>${r.parameters.map((p) => `${escapeHtml(p.path)}: ${p.before} → ${p.applied} (range ${p.min} … ${p.max})`).join('<br>')}</td>` +
        `<td>${r.result === null ? '—' : r.result.toPrecision(6)}</td><td>${r.ions} ions, seed ${r.seed}, tool ${escapeHtml(r.toolVersion)}</td><td>${escapeHtml(r.note ?? '')}</td></tr>`,
    )
    .join('\n');
  const spectrum = input.spectrum
    ? svgPlot(input.spectrum.label, 'flight time (ns)', 'intensity', [{ xs: input.spectrum.time_ns, ys: input.spectrum.intensity, colour: '#1e8449', name: input.spectrum.label }])
    : '<p>No spectrum: the preset has no acquisition settings (detector and digitizer).</p>';
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(preset.name)} — TOF simulation report</title>
<style>body{font-family:sans-serif;max-width:980px;margin:24px auto;color:#222}table{border-collapse:collapse;font-size:13px}th,td{border:1px solid #bbb;padding:3px 6px;text-align:right;vertical-align:top}th:first-child,td:first-child{text-align:left}.caution{border:2px solid #b9770e;background:#fef5e7;padding:8px 12px}pre{background:#f4f6f7;padding:8px;font-size:12px;overflow:auto}figcaption{font-size:13px;margin-bottom:4px}</style></head>
<body>
<h1>${escapeHtml(preset.name)}</h1>
<p class="caution"><strong>High-voltage caution.</strong> ${escapeHtml(HV_CAUTION.replace(/^Caution: /, ''))}</p>
<p>Simulated with tof-flight-bench ${escapeHtml(TOOL_VERSION)} (${escapeHtml(input.producedBy)}) on ${escapeHtml(input.date)}: ${report.ions} ions, seed ${input.seed}, ${report.detected} detected.</p>
${preset.description ? `<p>${escapeHtml(preset.description)}</p>` : ''}
<h2>Results</h2>
<table><thead><tr><th>species</th><th>m/z</th><th>flight time / ns</th><th>FWHM / ns</th><th>R${sample !== null ? ' (spectrum peak)' : ' (ions, no acquisition)'}</th><th>ideal-detector R</th><th>transmission</th><th>mass error / ppm</th></tr></thead>
<tbody>
${rows}
</tbody></table>
<p>${escapeHtml(calText)}</p>
<h2>Spectrum</h2>
${spectrum}
<h2>Focus</h2>
${focusPlot(report)}
<h2>Method record (how these settings were found)</h2>
${records.length ? `<table><thead><tr><th>date</th><th>kind</th><th>objective</th><th>parameters</th><th>result</th><th>run</th><th>note</th></tr></thead><tbody>\n${recordRows}\n</tbody></table>` : '<p>No scan or tune has been applied to this preset.</p>'}
<h2>Settings (the preset, every digit)</h2>
<pre>${escapeHtml(JSON.stringify(preset, null, 2))}</pre>
</body></html>
`;
}
