/**
 * JCAMP-DX mass spectra (IUPAC JCAMP-DX recommendations; the mass-spectrometry form of Lampen et al.,
 * Appl. Spectrosc. 48 (1994) 1545), read with the jcampconverter library, which decodes ##XYDATA
 * (including the compressed ASDF forms and XFACTOR/YFACTOR) and ##PEAK TABLE. Only the mapping is
 * here: the first block that holds data is read, ##XUNITS decides the axis (M/Z, or a time unit
 * such as MICROSECONDS or SECONDS); a time axis without a stated unit asks for one.
 */
import { convert, type Entry } from 'jcampconverter';
import { MeasuredFileError, timeUnitOfWord, toMeasuredSpectrum, type MeasuredSpectrum, type RawAxis, type TimeUnit } from './measuredSpectrum';

export function parseJcampSpectrum(text: string, userTimeUnit?: TimeUnit): MeasuredSpectrum {
  let entries: Entry[];
  try {
    entries = convert(text, { keepRecordsRegExp: /^$/ }).flatten;
  } catch (err) {
    throw new MeasuredFileError(`is not readable as JCAMP-DX (${(err as Error).message})`);
  }
  const withData = entries.filter((e) => e.spectra.some((s) => (s.data?.x?.length ?? 0) > 0));
  if (withData.length === 0) throw new MeasuredFileError('holds no JCAMP-DX data block (##XYDATA or ##PEAK TABLE)');
  const entry = withData[0];
  const spectrum = entry.spectra.find((s) => (s.data?.x?.length ?? 0) > 0)!;
  const notes: string[] = [];
  if (withData.length > 1 || entry.spectra.length > 1) notes.push(`the file holds ${withData.length} data blocks; the first was read`);
  const dataType = String(entry.dataType ?? '');
  if (dataType && !/MASS/i.test(dataType)) notes.push(`##DATA TYPE is "${dataType}", not a mass spectrum; read as one`);
  notes.push(`${spectrum.isPeaktable ? '##PEAK TABLE' : '##XYDATA'} with ${spectrum.data.x.length} points, ##XUNITS=${String(spectrum.xUnits ?? '(none)')}`);
  const title = typeof entry.title === 'string' && entry.title.trim() ? entry.title.trim() : null;
  return toMeasuredSpectrum('jcamp', spectrum.data.x, spectrum.data.y, axisOfXUnits(spectrum.xUnits), userTimeUnit, title, notes, spectrum.isPeaktable === true);
}

/**
 * ##XUNITS: "M/Z" (the form the MS recommendations use) or a time unit, alone or in parentheses
 * after a label ("time (MICROSECONDS)", as some writers put it); anything else is a time axis of
 * unknown unit.
 */
export function axisOfXUnits(xUnits: unknown): RawAxis {
  const whole = typeof xUnits === 'string' ? xUnits.trim() : '';
  const inner = /\(([^)]*)\)\s*$/.exec(whole)?.[1]?.trim();
  for (const u of inner === undefined ? [whole] : [inner, whole]) {
    if (/^(M\/Z|MZ|M\/E|TH|THOMSON)$/i.test(u)) return { axis: 'mz', secondsPerUnit: null };
    const unit = u ? timeUnitOfWord(u) : null;
    if (unit !== null) return { axis: 'time', secondsPerUnit: unit };
  }
  return { axis: 'time', secondsPerUnit: null };
}
