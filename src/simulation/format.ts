/** Plain-text and CSV renderings of a run report (CLI output). */
import { FATE_DESCRIPTIONS, FATE_KEYS, type FateCounts } from '../physics/fates';
import type { Preset } from '../presets/schema';
import { csvField } from './csv';
import type { RunReport } from './report';
import type { SimulationResult } from './run';
import { formatIdealResolvingPower, formatResolvingPower, headlineFigures } from './headline';

const fmt = (x: number | null, digits: number): string => (x === null ? '—' : x.toFixed(digits));
const fmtR = (x: number | null): string => (x === null ? '—' : x >= 1e6 ? x.toExponential(2) : Math.round(x).toString());

export const HV_CAUTION =
  'Caution: TOF analysers run at kilovolts. Simulated settings are a starting point only; verify them on the instrument under your local safety rules and the maker\'s instructions.';

export function formatTable(preset: Preset, result: SimulationResult): string {
  const r = result.report;
  const sample_ns = preset.acquisition ? preset.acquisition.sampleInterval_ns : null;
  const measured = sample_ns !== null;
  const header = [
    'species',
    'm/z',
    'z',
    'ions',
    'flight time/ns',
    measured ? 'FWHM/ns' : 'FWHM/ns (ions)',
    measured ? 'R (spectrum)' : 'R (ions)',
    'ideal-detector R',
    'ideal R (76% width)',
    'mass error/ppm',
    'transmission',
  ];
  const rows = r.species.map((s) => {
    const h = headlineFigures(s, sample_ns);
    return [
      s.label,
      s.mz.toFixed(4),
      String(s.charge),
      String(s.ions),
      fmt(s.flightTime_ns, 2),
      fmt(h.fwhm_ns, 3),
      formatResolvingPower(h.resolvingPower),
      formatIdealResolvingPower(h),
      h.idealBelowDigitizer && h.idealFloor !== null ? `> ${formatResolvingPower(h.idealFloor)}` : fmtR(s.resolvingPowerShortest),
      massErrorCell(r, s),
      (s.transmission * 100).toFixed(1) + ' %',
    ];
  });
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((row) => row[c].length)));
  const line = (cells: string[]): string => cells.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  const out = [
    `${preset.name} — ${r.ions} ions, seed ${result.compiled.population.seed}, ${r.detected} detected`,
    '',
    line(header),
    line(widths.map((w) => '-'.repeat(w))),
    ...rows.map(line),
    '',
    measured
      ? `R (spectrum) is measured on the simulated spectrum peak (detector pulse ${preset.acquisition!.pulseWidth_ns} ns FWHM, jitter, ${sample_ns} ns samples); ` +
        `the ideal-detector R uses the ions' arrival times alone ("> N": ion-only FWHM below one ${sample_ns} ns sample).`
      : 'No acquisition settings: every R is the ideal-detector figure from the ions\' arrival times (no detector or digitizer).',
    ...calibrationLines(r),
    ...isotopeLines(r),
    '',
    'Ions not detected:',
    ...lostLines(r.fates),
    '',
    HV_CAUTION,
    '',
  ];
  return out.join('\n');
}

function massErrorCell(r: RunReport, s: RunReport['species'][number]): string {
  const cal = r.calibration;
  if (!cal || !('coefficients' in cal)) return '—';
  const k = cal.calibrantMz.indexOf(s.mz);
  if (k >= 0) return cal.degreesOfFreedom > 0 ? `${signedFixed(cal.residuals_ppm[k], 2)} (cal.)` : 'cal. (no d.o.f.)';
  return s.massError_ppm === null ? '—' : signedFixed(s.massError_ppm, 2);
}

const signedFixed = (x: number, digits: number): string => (x >= 0 ? '+' : '') + x.toFixed(digits);

function calibrationLines(r: RunReport): string[] {
  const cal = r.calibration;
  if (!cal) return [];
  if (!('coefficients' in cal)) return [`Calibration failed: ${cal.error}`];
  const lines = [
    `Calibration ${cal.law} on m/z ${cal.calibrantMz.map((m) => m.toFixed(4)).join(', ')} (${cal.timesFrom}): ` +
      `${cal.degreesOfFreedom} degree${cal.degreesOfFreedom === 1 ? '' : 's'} of freedom, rms residual ${cal.rms_ppm.toFixed(2)} ppm.`,
  ];
  if (cal.warning) lines.push(`Warning: calibration has ${cal.warning}.`);
  return lines;
}

function isotopeLines(r: RunReport): string[] {
  const withShifts = r.species.filter((s) => s.isotopeShiftTotals.length > 0);
  if (withShifts.length === 0) return [];
  return [
    'Isotope shifts traced (share of the species\' molecules; m/z = centroid of the shift; mass error of its largest peak ± 1 sd from the ion count):',
    ...withShifts.map(
      (s) =>
        `  ${s.label}: ` +
        s.isotopeShiftTotals
          .map((t) => {
            const largest = s.isotopePeaks.filter((p) => p.shift === t.shift).reduce((a, b) => (b.abundance > a.abundance ? b : a));
            const err = largest.massError_ppm === null ? '' : `, ${signedFixed(largest.massError_ppm, 1)} ± ${(largest.statisticalError_ppm ?? 0).toFixed(1)} ppm`;
            return `M+${t.shift} ${(t.abundance * 100).toFixed(2)} % (${t.mz.toFixed(4)}${err})`;
          })
          .join(', '),
    ),
    'Each isotope peak is measured on its own ions, so neighbouring peaks cannot pull its centroid; its error is its species\' calibration error',
    '(the law between calibrants) plus the scatter of a centroid of few traced ions (the ± above; trace more ions to shrink it).',
  ];
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
