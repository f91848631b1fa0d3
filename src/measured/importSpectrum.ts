/**
 * One entry point for a measured spectrum file: pick the format from the content (an XML file
 * with <mzML>, a JCAMP-DX file starting with "##", else two-column text) and read it. A file that
 * cannot be read gives one MeasuredFileError and no partial result.
 */
import { parseJcampSpectrum } from './parseJcamp';
import { parseMzmlSpectrum } from './parseMzml';
import { parseTextSpectrum } from './parseText';
import { MAX_MEASURED_FILE_CHARS, MeasuredFileError, type MeasuredFormat, type MeasuredSpectrum, type TimeUnit } from './measuredSpectrum';

export interface ImportOptions {
  readonly timeUnit?: TimeUnit;
  /** mzML: which spectrum (0-based). */
  readonly spectrumIndex?: number;
}

export type ImportResult =
  | { readonly ok: true; readonly spectrum: MeasuredSpectrum }
  | { readonly ok: false; readonly error: string; readonly needsTimeUnit: boolean };

export function detectFormat(text: string): MeasuredFormat {
  const head = text.slice(0, 4096).replace(/^\uFEFF/, '').trimStart();
  if (head.startsWith('<')) return 'mzml';
  if (head.startsWith('##')) return 'jcamp';
  return 'text';
}

export function readMeasuredSpectrum(text: string, options: ImportOptions = {}): MeasuredSpectrum {
  if (text.length > MAX_MEASURED_FILE_CHARS) throw new MeasuredFileError(`is ${text.length} characters long; at most ${MAX_MEASURED_FILE_CHARS} are read`);
  const format = detectFormat(text);
  if (format === 'mzml') return parseMzmlSpectrum(text, options);
  if (format === 'jcamp') return parseJcampSpectrum(text, options.timeUnit);
  return parseTextSpectrum(text.replace(/^\uFEFF/, ''), options.timeUnit);
}

/** readMeasuredSpectrum without throwing: the error message, and whether a time unit would help. */
export function importMeasuredSpectrum(text: string, options: ImportOptions = {}): ImportResult {
  try {
    return { ok: true, spectrum: readMeasuredSpectrum(text, options) };
  } catch (err) {
    if (err instanceof MeasuredFileError) return { ok: false, error: err.message, needsTimeUnit: err.needsTimeUnit };
    throw err;
  }
}
