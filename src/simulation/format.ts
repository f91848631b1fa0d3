/** Plain-text and CSV renderings of a run report (CLI output). */
import { FATE_DESCRIPTIONS, FATE_KEYS, type FateCounts } from '../physics/fates';
import type { Preset } from '../presets/schema';
import { csvField } from './csv';
import type { RunReport } from './report';
import type { SimulationResult } from './run';

const fmt = (x: number | null, digits: number): string => (x === null ? '—' : x.toFixed(digits));
const fmtR = (x: number | null): string => (x === null ? '—' : x >= 1e6 ? x.toExponential(2) : Math.round(x).toString());

export const HV_CAUTION =
  'Caution: TOF analysers run at kilovolts. Simulated settings are a starting point only; verify them on the instrument under your local safety rules and the maker\'s instructions.';

export function formatTable(preset: Preset, result: SimulationResult): string {
  const r = result.report;
  const header = ['species', 'm/z', 'z', 'ions', 'flight time/ns', 'FWHM/ns', 'R (FWHM)', 'R (76% width)', 'transmission'];
  const rows = r.species.map((s) => [
    s.label,
    s.mz.toFixed(4),
    String(s.charge),
    String(s.ions),
    fmt(s.flightTime_ns, 2),
    fmt(s.fwhm_ns, 3),
    fmtR(s.resolvingPower),
    fmtR(s.resolvingPowerShortest),
    (s.transmission * 100).toFixed(1) + ' %',
  ]);
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((row) => row[c].length)));
  const line = (cells: string[]): string => cells.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  const out = [
    `${preset.name} — ${r.ions} ions, seed ${result.compiled.population.seed}, ${r.detected} detected`,
    '',
    line(header),
    line(widths.map((w) => '-'.repeat(w))),
    ...rows.map(line),
    '',
    'Ions not detected:',
    ...lostLines(r.fates),
    '',
    HV_CAUTION,
    '',
  ];
  return out.join('\n');
}

function lostLines(fates: FateCounts): string[] {
  const lines = FATE_KEYS.filter((k) => k !== 'detected' && fates[k] > 0).map((k) => `  ${fates[k]}  ${FATE_DESCRIPTIONS[k]}`);
  return lines.length ? lines : ['  none'];
}

export function formatCsv(report: RunReport): string {
  const cols = [
    'label',
    'mz',
    'charge',
    'ions',
    'detected',
    'transmission',
    'flightTime_ns',
    'medianFlightTime_ns',
    'fwhm_ns',
    'fwhmShortest_ns',
    'resolvingPower',
    'resolvingPowerShortest',
    ...FATE_KEYS.filter((k) => k !== 'unset').map((k) => `fate_${k}`),
  ];
  const rows = report.species.map((s) =>
    [
      csvField(s.label),
      csvField(s.mz),
      csvField(s.charge),
      csvField(s.ions),
      csvField(s.detected),
      csvField(s.transmission),
      csvField(s.flightTime_ns),
      csvField(s.medianFlightTime_ns),
      csvField(s.fwhm_ns),
      csvField(s.fwhmShortest_ns),
      csvField(s.resolvingPower),
      csvField(s.resolvingPowerShortest),
      ...FATE_KEYS.filter((k) => k !== 'unset').map((k) => csvField(s.fates[k])),
    ].join(','),
  );
  return [cols.join(','), ...rows].join('\n') + '\n';
}
