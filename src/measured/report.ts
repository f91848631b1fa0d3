/**
 * The measured-spectrum section of a report: plain JSON (units in every key) for `--json` and the
 * worker, and a readable table for the terminal.
 */
import type { MeasuredAnalysis } from './analyse';
import type { FitParameterResult, FitResidual } from './fit';

export interface MeasuredSection {
  readonly file: string | null;
  readonly format: string;
  readonly axis: 'time' | 'mz';
  readonly points: number;
  readonly title: string | null;
  readonly timeUnitFrom: 'file' | 'user' | null;
  readonly notes: readonly string[];
  /** Picked peaks: centroid_ns and fwhm_ns on a time axis, mz and fwhm_Th on an m/z axis. */
  readonly peaks: readonly Record<string, number | null>[];
  readonly matches: readonly Record<string, number | string | null>[];
  readonly fit: FitSection | null;
}

export interface FitSection {
  readonly parameters: readonly FitParameterResult[];
  /** Centroid residuals after the fit, as mass errors 2·Δt/t (ppm), one per matched peak. */
  readonly residuals_ppm: readonly number[];
  readonly residuals: readonly FitResidual[];
  readonly covariance: readonly (readonly number[])[];
  readonly correlation: readonly (readonly number[])[];
  readonly chiSquare: number;
  readonly degreesOfFreedom: number;
  readonly reducedChiSquare: number | null;
  readonly converged: boolean;
  readonly rounds: number;
  readonly iterations: number;
  readonly simulations: number;
  /** Where the fitted preset was written, if it was. */
  readonly written: string | null;
}

const finite = (v: number | null): number | null => (v === null || !Number.isFinite(v) ? null : v);

export function measuredSection(a: MeasuredAnalysis, file: string | null, written: string | null = null): MeasuredSection {
  const time = a.spectrum.axis === 'time';
  const peaks = a.peaks.map((p): Record<string, number | null> =>
    time
      ? { centroid_ns: p.position * 1e9, height: p.height, fwhm_ns: p.fwhm === null ? null : p.fwhm * 1e9, area: p.area }
      : { mz: p.position, height: p.height, fwhm_Th: p.fwhm, area: p.area },
  );
  const matches = a.matches.map((m): Record<string, number | string | null> =>
    time
      ? { label: m.label, mz: m.mz, predicted_ns: m.predicted * 1e9, measured_ns: m.measured * 1e9, difference_ns: m.difference * 1e9, difference_ppm: (2 * m.difference * 1e6) / m.predicted }
      : { label: m.label, mz: m.mz, predicted_mz: m.predicted, measured_mz: m.measured, difference_Th: m.difference, difference_ppm: (m.difference * 1e6) / m.predicted },
  );
  const f = a.fit;
  const fit: FitSection | null = f && {
    parameters: f.parameters,
    residuals_ppm: f.residuals.flatMap((r) => (r.residual_ppm === null ? [] : [r.residual_ppm])),
    residuals: f.residuals,
    covariance: f.covariance,
    correlation: f.correlation,
    chiSquare: f.chiSquare,
    degreesOfFreedom: f.degreesOfFreedom,
    reducedChiSquare: finite(f.reducedChiSquare),
    converged: f.converged,
    rounds: f.rounds,
    iterations: f.iterations,
    simulations: f.simulations,
    written,
  };
  return {
    file,
    format: a.spectrum.format,
    axis: a.spectrum.axis,
    points: a.spectrum.x.length,
    title: a.spectrum.title,
    timeUnitFrom: a.spectrum.timeUnitFrom,
    notes: a.spectrum.notes,
    peaks,
    matches,
    fit,
  };
}

const fmt = (v: number | null | undefined, digits = 4): string => (v === null || v === undefined || !Number.isFinite(v) ? '—' : Number(v.toPrecision(digits)).toString());

export function formatMeasuredTable(s: MeasuredSection): string {
  const lines: string[] = [];
  const time = s.axis === 'time';
  lines.push('', `Measured spectrum${s.file ? ` ${s.file}` : ''} (${s.format}, ${s.points} points, ${time ? 'time' : 'm/z'} axis${s.timeUnitFrom === 'user' ? ', time unit as given' : ''})`);
  for (const note of s.notes) lines.push(`  ${note}`);
  lines.push(`  ${s.peaks.length} peaks picked, ${s.matches.length} matched to species:`);
  lines.push(time ? '  species                          m/z     predicted_ns   measured_ns   diff_ns   diff_ppm' : '  species                          m/z     measured_mz   diff_ppm');
  for (const m of s.matches) {
    const label = String(m.label).padEnd(30).slice(0, 30);
    lines.push(
      time
        ? `  ${label} ${fmt(m.mz as number, 7).padStart(9)} ${fmt(m.predicted_ns as number, 9).padStart(14)} ${fmt(m.measured_ns as number, 9).padStart(13)} ${fmt(m.difference_ns as number).padStart(9)} ${fmt(m.difference_ppm as number).padStart(10)}`
        : `  ${label} ${fmt(m.mz as number, 7).padStart(9)} ${fmt(m.measured_mz as number, 9).padStart(13)} ${fmt(m.difference_ppm as number).padStart(10)}`,
    );
  }
  const f = s.fit;
  if (f) {
    lines.push('', `Fit (${f.converged ? 'converged' : 'NOT converged'} after ${f.rounds} rounds, ${f.iterations} iterations, ${f.simulations} simulations): χ² = ${fmt(f.chiSquare)} for ${f.degreesOfFreedom} degrees of freedom${f.reducedChiSquare === null ? '' : ` (reduced ${fmt(f.reducedChiSquare)})`}`);
    lines.push('  parameter                              initial        fitted   ± std error (counting)   ± scaled by √χ²ᵣ   bounds');
    for (const p of f.parameters) {
      lines.push(
        `  ${p.path.padEnd(36).slice(0, 36)} ${fmt(p.initial, 8).padStart(9)} ${fmt(p.value, 8).padStart(13)} ${('± ' + fmt(p.standardError, 3)).padStart(24)} ${('± ' + fmt(p.standardErrorScaled, 3)).padStart(18)}   ${fmt(p.min, 6)}:${fmt(p.max, 6)}${p.atBound ? '  AT BOUND' : ''}`,
      );
    }
    if (f.parameters.length > 1) {
      lines.push('  correlations:');
      f.correlation.forEach((row, a) => lines.push(`    ${f.parameters[a].path.padEnd(36).slice(0, 36)} ${row.map((v) => v.toFixed(3).padStart(7)).join(' ')}`));
    }
    lines.push('  residuals (measured − fitted model):');
    for (const r of f.residuals) {
      lines.push(
        `    ${r.label.padEnd(30).slice(0, 30)} ${r.quantity === 'centroid' ? 'centroid ' : 'rms width'} ${fmt(r.measured_ns, 9).padStart(12)} ns  ${fmt(r.residual_ns, 3).padStart(10)} ns${r.residual_ppm === null ? '' : `  ${fmt(r.residual_ppm, 3).padStart(8)} ppm`}  (σ ${fmt(r.sigma_ns, 2)} ns)`,
      );
    }
    if (f.written) lines.push(`  fitted preset written to ${f.written}`);
  }
  return lines.join('\n') + '\n';
}
