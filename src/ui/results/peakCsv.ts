/**
 * The peak table as CSV (RFC 4180: comma separated, CRLF line ends, fields with a comma, quote or
 * line break enclosed in double quotes, quotes doubled). Numbers at full precision; missing values
 * are empty fields. Used by "Copy CSV" and the CSV download alike.
 */
import { FATE_KEYS } from '../../physics/fates';
import { csvField } from '../../simulation/csv';
import type { PeakRow } from './runView';

export const PEAK_CSV_COLUMNS = [
  'label',
  'mz',
  'charge',
  'ions',
  'detected',
  'transmission',
  'flightTime_ns',
  'fwhm_ns',
  'resolvingPower',
  'spectrumResolvingPower',
  'massError_ppm',
  'calibrant',
  ...FATE_KEYS.filter((k) => k !== 'unset' && k !== 'detected').map((k) => `lost_${k}`),
] as const;

export { csvField };

export function peakTableCsv(rows: readonly PeakRow[]): string {
  const lines = [PEAK_CSV_COLUMNS.join(',')];
  for (const r of rows) {
    const s = r.species;
    const fields: (string | number | boolean | null)[] = [
      s.label,
      s.mz,
      s.charge,
      s.ions,
      s.detected,
      s.transmission,
      s.flightTime_ns,
      s.fwhm_ns,
      s.resolvingPower,
      r.spectrumResolvingPower,
      r.massError_ppm,
      r.calibrant,
      ...FATE_KEYS.filter((k) => k !== 'unset' && k !== 'detected').map((k) => s.fates[k]),
    ];
    lines.push(fields.map(csvField).join(','));
  }
  return lines.join('\r\n') + '\r\n';
}
