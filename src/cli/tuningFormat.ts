/** Plain-text and CSV renderings of scans and tunes (CLI output). */
import { transmissionFindings } from '../tuning/transmissionConstraint';
import { HV_CAUTION } from '../simulation/format';
import type { Objective, ScanSpeciesPoint, TuneResult } from '../tuning/api';
import type { ScanDocument } from '../tuning/scanDocument';
import { describeFigure } from '../tuning/tuneVerdict';
import { CRITERION_LABELS } from '../simulation/headline';

const fmt = (x: number | null | undefined, digits: number): string => (x === null || x === undefined ? '—' : x.toFixed(digits));
const fmtR = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : x >= 1e6 ? x.toExponential(2) : Math.round(x).toString());
/** Parameter values: enough digits to tell neighbouring scan points apart, no trailing noise. */
const fmtValue = (x: number): string => (Number.isInteger(x) ? String(x) : Number(x.toPrecision(8)).toString());

export function describeObjective(objective: Objective | null | undefined): string {
  if (!objective) return 'none';
  if (objective.name === 'max-min-r-over-range') return `${objective.name}, least R (FWHM) over m/z ${objective.range?.[0]}–${objective.range?.[1]}`;
  if (objective.name === 'min-fwhm') return `${objective.name}, FWHM (ns) at m/z ${objective.targetMz}`;
  return `${objective.name}, R (FWHM) at m/z ${objective.targetMz}`;
}

const fmtObjective = (objective: Objective | null | undefined, value: number | null): string =>
  !objective ? '' : objective.name === 'min-fwhm' ? fmt(value, 4) : fmtR(value);

function table(header: string[], rows: string[][], leftColumns = 0): string[] {
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]): string => cells.map((cell, c) => (c < leftColumns ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)];
}

export function formatScanTable(doc: ScanDocument): string {
  const paths = doc.axes.map((a) => a.path);
  const header = ['point', ...paths, 'm/z', 'flight time/ns', 'FWHM/ns (ions)', 'R (spectrum)', 'ideal R (FWHM)', 'ideal R (76%)', 'transmission', ...(doc.objective ? ['objective'] : [])];
  const rows: string[][] = [];
  let best: { index: number; values: readonly number[]; value: number } | null = null;
  for (const p of doc.points) {
    p.species.forEach((s, k) => {
      rows.push([
        k === 0 ? String(p.index) : '',
        ...p.values.map((v) => (k === 0 ? fmtValue(v) : '')),
        s.mz.toFixed(4),
        fmt(s.flightTime_ns, 2),
        fmt(s.fwhm_ns, 3),
        fmtR(s.spectrumResolvingPower),
        fmtR(s.resolvingPower),
        fmtR(s.resolvingPowerShortest),
        (s.transmission * 100).toFixed(1) + ' %',
        ...(doc.objective ? [k === 0 ? fmtObjective(doc.objective, p.objective) : ''] : []),
      ]);
    });
    if (doc.objective && p.objective !== null) {
      const better = !best || (doc.objective.name === 'min-fwhm' ? p.objective < best.value : p.objective > best.value);
      if (better) best = { index: p.index, values: p.values, value: p.objective };
    }
  }
  const shard = doc.shard ? `, shard ${doc.shard.index + 1}/${doc.shard.count} (${doc.points.length} points)` : '';
  const out = [
    `${doc.preset} — scan of ${paths.join(' × ')}: ${doc.totalPoints} points${shard}, ${doc.ions} ions per point, seed ${doc.seed} at every point`,
    `objective: ${describeObjective(doc.objective)}${doc.objective ? `; R read: ${CRITERION_LABELS[doc.criterion ?? 'ideal']}` : ''}`,
    '',
    ...table(header, rows),
    '',
  ];
  if (best) out.push(`best point: ${best.index}, ${paths.map((p, i) => `${p} = ${fmtValue(best!.values[i])}`).join(', ')} → ${fmtObjective(doc.objective, best.value)}`, '');
  out.push(HV_CAUTION, '');
  return out.join('\n');
}

const CSV_SPECIES_KEYS: (keyof ScanSpeciesPoint)[] = ['mz', 'flightTime_ns', 'fwhm_ns', 'resolvingPower', 'transmission', 'sdFlightTime_ns', 'fwhmShortest_ns', 'resolvingPowerShortest', 'spectrumFwhm_ns', 'spectrumResolvingPower'];

/** One row per point and species (long format), the objective repeated on each of the point's rows. */
export function formatScanCsv(doc: ScanDocument): string {
  const quote = (s: string): string => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
  const num = (x: unknown): string => (x === null || x === undefined ? '' : String(x));
  const lines = [['point', ...doc.axes.map((a) => quote(a.path)), 'label', ...CSV_SPECIES_KEYS, 'objective'].join(',')];
  for (const p of doc.points) {
    for (const s of p.species) {
      lines.push([String(p.index), ...p.values.map(String), quote(s.label ?? ''), ...CSV_SPECIES_KEYS.map((k) => num(s[k])), num(p.objective)].join(','));
    }
  }
  return lines.join('\n') + '\n';
}

export function formatTuneTable(presetName: string, ions: number, seed: number, objective: Objective, result: TuneResult): string {
  const measure = result.measure ?? 'sd';
  const presetValues = result.presetValues ?? result.start;
  const rows = result.flatness.map((f, i) => [f.path, fmtValue(presetValues[i]), fmtValue(result.start[i]), fmtValue(result.best[i]), `${fmtValue(f.low)} … ${fmtValue(f.high)}`]);
  const pct = (s: ScanSpeciesPoint | undefined): string => (s ? (s.transmission * 100).toFixed(1) + ' %' : '—');
  const speciesRows = (result.species ?? []).map((s, k) => [
    s.label ?? `m/z ${s.mz}`,
    s.mz.toFixed(4),
    pct(result.presetSpecies?.[k]),
    pct(result.startSpecies?.[k]),
    pct(s),
    result.transmissionFloors?.[k] ? `${(result.transmissionFloors[k] * 100).toFixed(1)} %` : '—',
    fmt(s.flightTime_ns, 2),
    fmt(s.fwhm_ns, 3),
    fmtR(s.resolvingPower),
    fmtR(s.resolvingPowerShortest),
  ]);
  const keptPreset = result.recommendation === 'preset';
  const verdict = keptPreset
    ? [
        `recommendation: keep the preset's own settings: no setting found scores better (preset ${fmtObjective(objective, result.presetObjective ?? null)}, best found ` +
          `${fmtObjective(objective, result.searchObjective ?? null)} at ${(result.searchBest ?? []).map(fmtValue).join(', ')}); add --allow-worse to be given the search's best instead.`,
      ]
    : result.worseThanPreset
      ? [`WARNING: as asked (--allow-worse), the tuned setting is shown although it scores worse than the preset's own settings (${fmtObjective(objective, result.objective)} vs ${fmtObjective(objective, result.presetObjective ?? null)}).`]
      : [];
  const out = [
    `${presetName} — tuned for ${describeObjective(objective)}; ${ions} ions per evaluation, seed ${seed}`,
    `figure optimised and reported: ${describeFigure(objective, measure)}`,
    `R read: ${CRITERION_LABELS[result.criterion ?? 'ideal']}`,
    `start: ${result.startSource && result.startSource.length ? result.startSource.join('; ') : 'current settings (no published condition applies to these parameters)'}`,
    '',
    ...table(['parameter', 'preset', 'start', keptPreset ? 'recommended (preset)' : 'tuned', 'objective within 10 % of best over'], rows, 1),
    '',
    ...transmissionFindings({ violated: result.transmissionViolated ?? [], binding: result.transmissionBinding ?? null }),
    `objective: ${fmtObjective(objective, result.presetObjective ?? null)} with the preset's settings, ${fmtObjective(objective, result.startObjective ?? null)} at the start, ` +
      `${fmtObjective(objective, result.objective)} ${keptPreset ? 'recommended (the preset\'s)' : 'tuned'}`,
    ...verdict,
    `${result.evaluations} evaluations; transmission constraint: ${result.transmissionConstraint ?? 'none'}`,
    '',
    ...table(['species', 'm/z', 'transm. preset', 'start', keptPreset ? 'recommended' : 'tuned', 'floor', 'flight time/ns', 'FWHM/ns', 'R (FWHM)', 'R (76% width)'], speciesRows, 1),
    `(flight time, FWHM and R per species at the ${keptPreset ? 'recommended' : 'tuned'} setting, from the ion arrival times)`,
    '',
    HV_CAUTION,
    '',
  ];
  return out.join('\n');
}
