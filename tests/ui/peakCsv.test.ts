import { describe, expect, it } from 'vitest';
import { emptyFateCounts } from '../../src/physics/fates';
import type { SpeciesReport } from '../../src/simulation/report';
import { csvField, PEAK_CSV_COLUMNS, peakTableCsv } from '../../src/ui/results/peakCsv';
import type { PeakRow } from '../../src/ui/results/runView';
import { headlineFigures } from '../../src/simulation/headline';

/** A small RFC 4180 reader (quoted fields, doubled quotes, CRLF), independent of the writer. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (c === '"') quoted = false;
      else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ',') {
      row.push(field);
      field = '';
    } else if (c === '\r' && text[i + 1] === '\n') {
      row.push(field);
      rows.push(row);
      row = [];
      field = '';
      i++;
    } else field += c;
  }
  return rows;
}

function row(label: string, mz: number, over: Partial<SpeciesReport> = {}, extra: Partial<PeakRow> = {}): PeakRow {
  const fates = { ...emptyFateCounts(), detected: 90, struckRepeller: 10 };
  const species: SpeciesReport = {
    label,
    mz,
    charge: 1,
    ions: 100,
    detected: 90,
    transmission: 0.9,
    flightTime_ns: 20565.123456789,
    medianFlightTime_ns: 20565,
    sdFlightTime_ns: 1.2,
    fwhm_ns: 3.18,
    fwhmShortest_ns: 3.1,
    resolvingPower: 3238.4,
    resolvingPowerShortest: 3300,
    fates,
    peak: null,
    massError_ppm: null,
    ...over,
  } as SpeciesReport;
  return { species, colour: '#fff', flightTime_us: 20.565, fwhm_ns: 3.18, resolvingPower: 3238.4, spectrumResolvingPower: null, transmission: 0.9, massError_ppm: 1.5, calibrant: false, headline: headlineFigures(species, null), ...extra };
}

describe('peak table CSV', () => {
  it('quotes only where needed', () => {
    expect(csvField('plain')).toBe('plain');
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('two\nlines')).toBe('"two\nlines"');
    expect(csvField(null)).toBe('');
    expect(csvField(NaN)).toBe('');
    expect(csvField(0.1 + 0.2)).toBe('0.30000000000000004');
  });

  it('round-trips labels with commas, quotes and line breaks, and full-precision numbers', () => {
    const rows = [row('kelvatide-10 [M+H]+, "heavy"\nbatch 2', 1058.5629), row('valquorin-22', 2508.2994, { resolvingPower: null }, { calibrant: true, massError_ppm: null })];
    const parsed = parseCsv(peakTableCsv(rows));
    expect(parsed[0]).toEqual([...PEAK_CSV_COLUMNS]);
    expect(parsed).toHaveLength(3);
    const col = (name: string): number => parsed[0].indexOf(name);
    expect(parsed[1][col('label')]).toBe('kelvatide-10 [M+H]+, "heavy"\nbatch 2');
    expect(Number(parsed[1][col('flightTime_ns')])).toBe(20565.123456789);
    expect(parsed[1][col('massError_ppm')]).toBe('1.5');
    expect(parsed[1][col('lost_struckRepeller')]).toBe('10');
    expect(parsed[2][col('resolvingPower')]).toBe('');
    expect(parsed[2][col('calibrant')]).toBe('true');
    for (const r of parsed) expect(r).toHaveLength(PEAK_CSV_COLUMNS.length);
  });
});
