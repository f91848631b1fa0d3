/**
 * Plain two-column text (x, intensity), read with papaparse: comma, tab, semicolon or space
 * separated, lines starting with '#' are comments, and any leading lines that are not numbers are a
 * header. The x column is m/z when its header says so ("m/z", "mz"), else time; a header such as
 * "time_ns", "t (µs)" or "time [s]" states the unit. With ';', tab or space as separator a decimal
 * comma is read as a decimal point (a comma between digits cannot then be a separator).
 */
import Papa from 'papaparse';
import { MeasuredFileError, timeUnitOfWord, toMeasuredSpectrum, type MeasuredSpectrum, type RawAxis, type TimeUnit } from './measuredSpectrum';

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const DECIMAL_COMMA = /^[+-]?\d*,\d+([eE][+-]?\d+)?$/;

export function parseTextSpectrum(text: string, userTimeUnit?: TimeUnit): MeasuredSpectrum {
  const parsed = Papa.parse<string[]>(text, { delimitersToGuess: [',', '\t', ';', ' ', '|'], skipEmptyLines: 'greedy', comments: '#' });
  const delimiter = parsed.meta.delimiter;
  const rows = parsed.data.map((row) => row.map((field) => field.trim()).filter((field) => field !== '' || delimiter !== ' '));
  const toNumber = (field: string): number => {
    if (NUMBER.test(field)) return Number(field);
    if (delimiter !== ',' && DECIMAL_COMMA.test(field)) return Number(field.replace(',', '.'));
    return NaN;
  };
  let first = 0;
  while (first < rows.length && !(rows[first].length >= 2 && Number.isFinite(toNumber(rows[first][0])) && Number.isFinite(toNumber(rows[first][1])))) first++;
  if (first === rows.length) throw new MeasuredFileError('no line holds two numbers (x, intensity); is this a two-column text file?');
  if (first > 20) throw new MeasuredFileError(`the first ${first} lines are not numbers; at most 20 header lines are read`);
  const header = first > 0 ? rows[first - 1] : null;
  const x: number[] = [];
  const y: number[] = [];
  for (let r = first; r < rows.length; r++) {
    const row = rows[r];
    const a = row.length >= 2 ? toNumber(row[0]) : NaN;
    const b = row.length >= 2 ? toNumber(row[1]) : NaN;
    if (!Number.isFinite(a) || !Number.isFinite(b)) {
      throw new MeasuredFileError(`data line ${r - first + 1} ("${row.join(delimiter).slice(0, 60)}") is not two numbers separated by "${printable(delimiter)}"`);
    }
    x.push(a);
    y.push(b);
  }
  const notes = [`read ${x.length} points separated by "${printable(delimiter)}"${header ? `, header "${header.join(' | ')}"` : ', no header'}`];
  return toMeasuredSpectrum('text', x, y, axisOfHeader(header?.[0] ?? null), userTimeUnit, null, notes);
}

/** m/z or time, and the time unit the column header states (if any). */
export function axisOfHeader(header: string | null): RawAxis {
  if (header === null) return { axis: 'time', secondsPerUnit: null };
  const h = header.toLowerCase();
  if (/m\s*\/\s*z|^mz\b|\bmz\b|mass.to.charge/.test(h)) return { axis: 'mz', secondsPerUnit: null };
  for (const word of h.split(/[^a-zµμ]+/)) {
    const unit = timeUnitOfWord(word);
    if (unit !== null && word !== 'min') return { axis: 'time', secondsPerUnit: unit };
  }
  return { axis: 'time', secondsPerUnit: null };
}

const printable = (d: string): string => (d === '\t' ? 'tab' : d === ' ' ? 'space' : d);
