/**
 * A measured spectrum as the rest of the program sees it, whatever file it came from: one axis
 * (time in seconds, or m/z in Th) ascending, and the intensity at each point. The parsers only map
 * what a library read into this shape; every check that a bad file fails is here, once.
 */

export type MeasuredFormat = 'text' | 'jcamp' | 'mzml';
export type MeasuredAxis = 'time' | 'mz';
/** Time units a user may state for a file that does not (CLI `--time-unit`, the app's unit choice). */
export type TimeUnit = 'ns' | 'us' | 's';
export const TIME_UNITS: readonly TimeUnit[] = ['ns', 'us', 's'];

/** Seconds per unit, for the units a file may state (ms and min appear in JCAMP-DX and mzML). */
export const SECONDS_PER_UNIT: Readonly<Record<string, number>> = { ns: 1e-9, us: 1e-6, ms: 1e-3, s: 1, min: 60 };

/** Longest spectrum accepted (as many points as the simulated record may hold). */
export const MAX_MEASURED_POINTS = 1 << 24;
/** Largest file read (bytes of text); a spectrum file beyond this is refused before parsing. */
export const MAX_MEASURED_FILE_CHARS = 256 * 1024 * 1024;

export interface MeasuredSpectrum {
  readonly format: MeasuredFormat;
  readonly axis: MeasuredAxis;
  /** Time (s) when axis is 'time', m/z (Th) when 'mz'; strictly ascending. */
  readonly x: Float64Array;
  readonly intensity: Float64Array;
  /** Title or spectrum id stated in the file, if any. */
  readonly title: string | null;
  /** Where the time unit came from: the file, the user's choice, or nothing (m/z axis). */
  readonly timeUnitFrom: 'file' | 'user' | null;
  /** Facts worth telling the user (which block or spectrum was read, what was skipped). */
  readonly notes: readonly string[];
  /** A centroided peak list (each point a peak, e.g. a JCAMP-DX ##PEAK TABLE) rather than a profile. */
  readonly centroided?: boolean;
}

/** A file that cannot be read as a spectrum. `needsTimeUnit` asks the caller for the time unit. */
export class MeasuredFileError extends Error {
  constructor(
    message: string,
    readonly needsTimeUnit = false,
  ) {
    super(message);
    this.name = 'MeasuredFileError';
  }
}

export interface RawAxis {
  readonly axis: MeasuredAxis;
  /** Seconds per x unit for a time axis whose unit the file states; null when it does not. */
  readonly secondsPerUnit: number | null;
}

/**
 * Turns parsed columns into a MeasuredSpectrum: applies the time unit (the file's, else the user's,
 * else asks), requires finite numbers and at least three points, and puts the points in ascending
 * order (a descending file is reversed; equal x values are refused).
 */
export function toMeasuredSpectrum(
  format: MeasuredFormat,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  axis: RawAxis,
  userTimeUnit: TimeUnit | undefined,
  title: string | null,
  notes: string[],
  centroided = false,
): MeasuredSpectrum {
  const n = x.length;
  if (y.length !== n) throw new MeasuredFileError(`the x and intensity arrays differ in length (${n} and ${y.length} points)`);
  if (n < 3) throw new MeasuredFileError(`holds ${n} data point${n === 1 ? '' : 's'}; a spectrum needs at least 3`);
  if (n > MAX_MEASURED_POINTS) throw new MeasuredFileError(`holds ${n} points; at most ${MAX_MEASURED_POINTS} are read`);
  let scale = 1;
  let timeUnitFrom: MeasuredSpectrum['timeUnitFrom'] = null;
  if (axis.axis === 'time') {
    if (axis.secondsPerUnit !== null) {
      scale = axis.secondsPerUnit;
      timeUnitFrom = 'file';
      if (userTimeUnit !== undefined && SECONDS_PER_UNIT[userTimeUnit] !== scale) {
        throw new MeasuredFileError(`the file states its time unit (${unitName(scale)}), which differs from the time unit given (${userTimeUnit}); leave the time unit out or correct it`);
      }
    } else if (userTimeUnit !== undefined) {
      scale = SECONDS_PER_UNIT[userTimeUnit];
      timeUnitFrom = 'user';
    } else {
      throw new MeasuredFileError(`the file does not state the unit of its time axis: give it (${TIME_UNITS.join(', ')})`, true);
    }
  }
  const order = Array.from({ length: n }, (_, i) => i);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i])) throw new MeasuredFileError(`point ${i + 1}: the ${axis.axis === 'time' ? 'time' : 'm/z'} value is not a finite number (${x[i]})`);
    if (!Number.isFinite(y[i])) throw new MeasuredFileError(`point ${i + 1}: the intensity is not a finite number (${y[i]})`);
  }
  if (x[n - 1] < x[0]) order.reverse();
  const xs = new Float64Array(n);
  const ys = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    xs[k] = x[order[k]] * scale;
    ys[k] = y[order[k]];
    if (k > 0 && !(xs[k] > xs[k - 1])) {
      throw new MeasuredFileError(`the ${axis.axis === 'time' ? 'time' : 'm/z'} values must increase (or decrease) strictly; point ${order[k] + 1} breaks the order`);
    }
  }
  if (axis.axis === 'mz' && !(xs[0] > 0)) throw new MeasuredFileError(`m/z values must be positive (the first is ${xs[0]})`);
  return { format, axis: axis.axis, x: xs, intensity: ys, title, timeUnitFrom, notes, ...(centroided ? { centroided } : {}) };
}

function unitName(secondsPerUnit: number): string {
  for (const [name, value] of Object.entries(SECONDS_PER_UNIT)) if (value === secondsPerUnit) return name;
  return `${secondsPerUnit} s`;
}

/** The time unit named by a word such as "ns", "µs", "MICROSECONDS", "sec"; null when it names none. */
export function timeUnitOfWord(word: string): number | null {
  const w = word.trim().toLowerCase().replace('μ', 'µ');
  if (['ns', 'nsec', 'nanosecond', 'nanoseconds'].includes(w)) return SECONDS_PER_UNIT.ns;
  if (['us', 'µs', 'usec', 'microsecond', 'microseconds'].includes(w)) return SECONDS_PER_UNIT.us;
  if (['ms', 'msec', 'millisecond', 'milliseconds'].includes(w)) return SECONDS_PER_UNIT.ms;
  if (['s', 'sec', 'second', 'seconds'].includes(w)) return SECONDS_PER_UNIT.s;
  if (['min', 'minute', 'minutes'].includes(w)) return SECONDS_PER_UNIT.min;
  return null;
}
