/** Plain-text and CSV renderings of a tolerance analysis (CLI output), and its JSON shape. */
import { HV_CAUTION } from '../simulation/format';
import type { ToleranceResult } from './analysis';

const num = (x: number | null | undefined, digits = 3): string => (x === null || x === undefined || !Number.isFinite(x) ? '—' : Number(x.toPrecision(digits)).toString());
const fmtR = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : Math.round(x).toString());

function table(header: string[], rows: string[][], leftColumns = 1): string[] {
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]): string => cells.map((cell, c) => (c < leftColumns ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)];
}

const unitOf = (unit: string): string => (unit === 'ppm' ? 'ppm' : unit);

export function formatToleranceTable(presetName: string, r: ToleranceResult): string {
  const lines: string[] = [];
  lines.push(`Tolerance analysis: ${presetName}`);
  lines.push(`  ${r.ions} ions, seed ${r.seed}, ${r.shots} shot(s) per spectrum`);
  lines.push(`  calibration (${r.calibration.from}): ${r.calibration.law}, t0 = ${num(r.calibration.coefficients_ns.t0_ns, 6)} ns, a = ${num(r.calibration.coefficients_ns.a_ns_per_sqrtTh, 8)} ns/√Th`);
  lines.push(`  method: ${r.method}`);
  lines.push('');
  lines.push('Species (unperturbed): peak time and R from the simulated spectrum; (ions) from the ideal detector');
  lines.push(
    ...table(
      ['species', 'm/z', 'peak time/ns', 'mean arrival (ions)/ns', 'R', 'R (ions)'],
      r.species.map((s) => [s.label, s.mz.toFixed(4), num(s.flightTime_ns, 9), num(s.flightTimeIons_ns, 9), fmtR(s.resolvingPower), fmtR(s.resolvingPowerIons)]),
    ),
  );
  lines.push('');
  lines.push("Sensitivities: apparent mass shift (spectrum peak) after the fixed calibration, ppm per unit of the parameter");
  const mzHeads = r.species.map((s) => `m/z ${s.mz.toFixed(1)}`);
  lines.push(
    ...table(
      ['parameter', 'kind', 'unit', 'tolerance', ...mzHeads, 'R at tolerance (worst)'],
      r.sensitivities.map((p) => {
        const rs = p.species.map((s) => s.resolvingPowerAtTolerance).filter((x): x is number => x !== null);
        return [p.label, p.kind, unitOf(p.unit), num(p.tolerance), ...p.species.map((s) => num(s.massShift_ppm_per_unit, 4)), rs.length ? fmtR(Math.min(...rs)) : '—'];
      }),
    ),
  );
  if (r.resolvingPowerAllShotTerms) lines.push(`  R with every shot-to-shot term at its tolerance: ${r.resolvingPowerAllShotTerms.map(fmtR).join(', ')}`);
  lines.push('');
  const b = r.budget;
  lines.push(
    `Budget: target ${num(b.targetAccuracy_ppm)} ppm (1 sd) over ${b.range_mz ? `m/z ${b.range_mz[0]}–${b.range_mz[1]}` : 'every species'}; ` +
      `combined at the stated tolerances ${num(b.combined_ppm)} ppm (worst m/z ${b.worstMz ?? '—'}) — ${b.meetsTarget === null ? 'no species in range' : b.meetsTarget ? 'meets the target' : 'MISSES the target'}`,
  );
  lines.push(
    ...table(
      ['parameter', 'unit', 'tolerance', 'ppm/unit (worst)', 'contribution/ppm', 'share', 'allowed alone', `allowed (RSS of ${b.rssParameters})`],
      b.rows.map((row) => [
        row.label,
        row.unit,
        num(row.tolerance),
        num(row.sensitivity_ppm_per_unit, 4),
        num(row.contribution_ppm),
        row.share === null ? '—' : `${(row.share * 100).toFixed(1)} %`,
        num(row.allowedAlone),
        num(row.allowedRss),
      ]),
    ),
  );
  lines.push(b.dominant.length ? `  dominated by: ${b.dominant.join(', ')}` : '  no tolerances given: add a "tolerances" section to see contributions');
  const mc = r.monteCarlo;
  if (mc) {
    lines.push('');
    lines.push(
      `Monte Carlo: ${mc.drawsRun} of ${mc.draws} draws${mc.shard ? ` (shard ${mc.shard.index + 1}/${mc.shard.count})` : ''}, draw seed ${mc.drawSeed}, ${mc.parameters.length} parameter(s) drawn` +
        (mc.failedDraws ? `, ${mc.failedDraws} failed` : ''),
    );
    lines.push(`  draws: ${mc.design.method}`);
    lines.push('  mass error of the spectrum peak (as measured, with its counting noise); ions: mean arrival time, ideal detector');
    lines.push(
      ...table(
        ['species', 'mass error median/ppm', 'p5/ppm', 'p95/ppm', 'linear p5..p95/ppm', 'ions p5..p95/ppm', 'R median', 'R p5', 'R p95'],
        mc.species.map((s) => [
          s.label,
          num(s.massError_ppm.median),
          num(s.massError_ppm.p5),
          num(s.massError_ppm.p95),
          `${num(s.linear.p5_ppm)}..${num(s.linear.p95_ppm)}`,
          `${num(s.massErrorIons_ppm.p5)}..${num(s.massErrorIons_ppm.p95)}`,
          fmtR(s.resolvingPower.median),
          fmtR(s.resolvingPower.p5),
          fmtR(s.resolvingPower.p95),
        ]),
      ),
    );
  }
  lines.push('');
  lines.push(HV_CAUTION);
  return lines.join('\n') + '\n';
}

/** One row per parameter and species. */
export function formatToleranceCsv(r: ToleranceResult): string {
  const head = [
    'parameter',
    'kind',
    'unit',
    'tolerance',
    'mz',
    'flightTime_ns_per_unit',
    'massShift_ppm_per_unit',
    'massShiftIons_ppm_per_unit',
    'resolvingPower_per_unit',
    'massError_ppm_atTolerance',
    'resolvingPowerAtTolerance',
    'resolvingPowerIonsAtTolerance',
    'allowedAlone',
    'allowedRss',
  ];
  const cell = (x: number | null): string => (x === null || !Number.isFinite(x) ? '' : String(x));
  const lines = [head.join(',')];
  for (const p of r.sensitivities) {
    const row = r.budget.rows.find((b) => b.parameter === p.parameter);
    for (const s of p.species) {
      lines.push(
        [
          p.parameter,
          p.kind,
          p.unit,
          p.tolerance,
          s.mz,
          cell(s.flightTime_ns_per_unit),
          cell(s.massShift_ppm_per_unit),
          cell(s.massShiftIons_ppm_per_unit),
          cell(s.resolvingPower_per_unit),
          cell(s.massError_ppm_atTolerance),
          cell(s.resolvingPowerAtTolerance),
          cell(s.resolvingPowerIonsAtTolerance),
          cell(row?.allowedAlone ?? null),
          cell(row?.allowedRss ?? null),
        ].join(','),
      );
    }
  }
  return lines.join('\n') + '\n';
}

/** The `tolerance` object of the JSON output (units in the key names). */
export function toleranceJson(r: ToleranceResult) {
  return {
    method: r.method,
    ions: r.ions,
    seed: r.seed,
    shots: r.shots,
    calibration: { from: r.calibration.from, law: r.calibration.law, calibrantMz: r.calibration.calibrantMz, coefficients: r.calibration.coefficients_ns },
    species: r.species,
    sensitivities: r.sensitivities,
    resolvingPowerAllShotTerms: r.resolvingPowerAllShotTerms,
    budget: r.budget,
    monteCarlo: r.monteCarlo,
  };
}
