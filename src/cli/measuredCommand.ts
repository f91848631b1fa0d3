/**
 * `npm run sim -- <preset> --measured <file> [--time-unit ns|us|s] [--fit path[=min:max],...]
 * [--write fitted.json]`: the plain run of the preset (printed as usual), then the measured
 * spectrum's peaks, their match to the species and, with --fit, the fit. The plain run is the CLI's
 * own (passed in), so its output is the same as without --measured; `--json` adds `measured`.
 */
import { existsSync, writeFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { formatIssues, type PresetIssue } from '../presets/issues';
import { parsePresetText } from '../presets/load';
import { analyseMeasured } from '../measured/analyse';
import { FitError, type FitParameterRequest } from '../measured/fit';
import { importMeasuredSpectrum } from '../measured/importSpectrum';
import { TIME_UNITS, type TimeUnit } from '../measured/measuredSpectrum';
import { formatMeasuredTable, measuredSection } from '../measured/report';
import { parseTuneList } from './tuningArgs';

export const MEASURED_USAGE = `Measured spectra:
  npm run sim -- <preset.json> --measured <file> [--time-unit ns|us|s] [--fit <path>[=<min>:<max>][,<path>...]] [--write <fitted.json>] [--json]

  --measured <file>  a measured spectrum: two-column text (time or m/z, intensity), JCAMP-DX or mzML;
                     its peaks are picked and matched to the preset's species (nearest within 0.5 % of
                     the flight time, or --match-window <ns>)
  --time-unit U      unit of the file's time axis when the file does not state it (${TIME_UNITS.join(', ')})
  --fit <paths>      preset parameters to fit to the measured peak centroids and widths, with bounds
                     (default: the value ± 50 %, ± 100 for a value of 0), e.g.
                     acquisition.timeOffset_ns,drift.length_mm=1190:1210,acquisition.pulseWidth_ns=0:5
  --write <file>     save the fitted preset as a new file (never replaces a file)`;

interface MeasuredArgs {
  readonly measured: string;
  readonly timeUnit?: TimeUnit;
  readonly fit: FitParameterRequest[];
  readonly write?: string;
  readonly matchWindow_ns?: number;
  /** The arguments left for the plain run. */
  readonly rest: string[];
  readonly presetPath?: string;
  readonly json: boolean;
  readonly ions?: number;
  readonly seed?: number;
}

export interface MeasuredIo {
  out(text: string): void;
  err(text: string): void;
  readFile(path: string): string;
  writeFile?(path: string, text: string, overwrite: boolean): void;
  fileExists?(path: string): boolean;
}

export type PlainRun = (argv: readonly string[], io: MeasuredIo) => number | Promise<number>;

export function isMeasuredCommand(argv: readonly string[]): boolean {
  return argv.includes('--measured');
}

const OWN = ['--measured', '--time-unit', '--fit', '--write', '--match-window'];

export function parseMeasuredArgs(argv: readonly string[]): { ok: true; args: MeasuredArgs } | { ok: false; issues: PresetIssue[] } {
  const issues: PresetIssue[] = [];
  const rest: string[] = [];
  let measured: string | undefined;
  let timeUnit: TimeUnit | undefined;
  let fit: FitParameterRequest[] = [];
  let write: string | undefined;
  let matchWindow_ns: number | undefined;
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!OWN.includes(arg)) {
      rest.push(arg);
      continue;
    }
    const value = argv[++i];
    if (value === undefined || value.startsWith('--')) {
      issues.push({ path: arg, message: 'needs a value (see --help)' });
      if (value !== undefined) i--;
      continue;
    }
    if (arg === '--measured') measured = value;
    else if (arg === '--time-unit') {
      if ((TIME_UNITS as readonly string[]).includes(value)) timeUnit = value as TimeUnit;
      else issues.push({ path: '--time-unit', message: `must be one of ${TIME_UNITS.join(', ')} (got "${value}")` });
    } else if (arg === '--fit') {
      const list = parseTuneList(value);
      if (typeof list === 'string') issues.push({ path: '--fit', message: list });
      else fit = [...fit, ...list];
    } else if (arg === '--write') write = value;
    else if (arg === '--match-window') {
      const w = Number(value);
      if (!(w > 0) || !Number.isFinite(w)) issues.push({ path: '--match-window', message: `must be a positive number of ns (got "${value}")` });
      else matchWindow_ns = w;
    }
  }
  for (const flag of ['--scan', '--tune', '--csv', '--spectrum']) {
    if (rest.includes(flag)) issues.push({ path: flag, message: 'cannot be combined with --measured' });
  }
  if (write !== undefined && fit.length === 0) issues.push({ path: '--write', message: 'writes the fitted preset: give --fit too' });
  const intOf = (flag: string): number | undefined => {
    const k = rest.indexOf(flag);
    const v = k >= 0 ? Number(rest[k + 1]) : NaN;
    return Number.isInteger(v) ? v : undefined;
  };
  const valued = new Set(['--ions', '--seed']);
  const presetPath = rest.find((a, k) => !a.startsWith('-') && !(k > 0 && valued.has(rest[k - 1])));
  if (issues.length || measured === undefined) return { ok: false, issues };
  return {
    ok: true,
    args: { measured, timeUnit, fit, write, matchWindow_ns, rest, presetPath, json: rest.includes('--json'), ions: intOf('--ions'), seed: intOf('--seed') },
  };
}

/** Captures what the plain run prints. */
function capture(): MeasuredIo & { stdout: string; stderr: string } {
  const io = {
    stdout: '',
    stderr: '',
    out: (t: string) => void (io.stdout += t),
    err: (t: string) => void (io.stderr += t),
    readFile: (_: string): string => '',
  };
  return io;
}

export async function runMeasuredCommand(argv: readonly string[], io: MeasuredIo, plainRun: PlainRun): Promise<number> {
  const parsed = parseMeasuredArgs(argv);
  if (!parsed.ok) {
    io.err(formatIssues(parsed.issues) + '\nRun with --help for usage.\n');
    return 2;
  }
  const args = parsed.args;
  const exists = (p: string): boolean => (io.fileExists ? io.fileExists(p) : existsSync(p));
  if (args.write !== undefined) {
    if (args.presetPath && resolve(args.write) === resolve(args.presetPath)) {
      io.err(`--write: ${args.write} is the input preset; a fitted preset is always written as a new file\n`);
      return 2;
    }
    if (exists(args.write)) {
      io.err(`--write: ${args.write} exists; it is not overwritten (choose a new file name)\n`);
      return 2;
    }
  }
  // The measured file first: a bad file stops everything before any simulation.
  let text: string;
  try {
    text = io.readFile(args.measured);
  } catch (err) {
    io.err(`${args.measured}: cannot read the measured spectrum (${(err as NodeJS.ErrnoException).code ?? 'unreadable'})\n`);
    return 2;
  }
  const imported = importMeasuredSpectrum(text, { timeUnit: args.timeUnit });
  if (!imported.ok) {
    io.err(`${args.measured}: ${imported.error}${imported.needsTimeUnit ? ' with --time-unit' : ''}\n`);
    return 2;
  }

  const plain = capture();
  plain.readFile = io.readFile;
  const code = await plainRun(args.rest, plain);
  if (code !== 0) {
    io.out(plain.stdout);
    io.err(plain.stderr);
    return code;
  }
  const loaded = parsePresetText(io.readFile(args.presetPath!));
  if (!loaded.ok) throw new Error('the preset was read by the plain run but not here');
  let section;
  try {
    const analysis = analyseMeasured(loaded.value, imported.spectrum, {
      fit: args.fit,
      ions: args.ions,
      seed: args.seed,
      matchWindow: args.matchWindow_ns,
    });
    let written: string | null = null;
    if (analysis.fit && args.write !== undefined) {
      const out = JSON.stringify(analysis.fit.fittedPreset, null, 2) + '\n';
      try {
        if (io.writeFile) io.writeFile(args.write, out, false);
        else writeFileSync(args.write, out, { encoding: 'utf8', flag: 'wx' });
      } catch (err) {
        io.err(`--write: cannot write ${args.write} (${(err as NodeJS.ErrnoException).code ?? 'error'}); nothing was written\n`);
        return 2;
      }
      written = args.write;
    }
    section = measuredSection(analysis, args.measured, written);
  } catch (err) {
    if (err instanceof FitError) {
      io.err(`--fit: ${err.path}: ${err.message}\n`);
      return 2;
    }
    throw err;
  }
  if (args.json) {
    const doc = JSON.parse(plain.stdout) as Record<string, unknown>;
    io.out(JSON.stringify({ ...doc, measured: section }) + '\n');
  } else {
    io.out(plain.stdout);
    io.out(formatMeasuredTable(section));
  }
  if (plain.stderr) io.err(plain.stderr);
  return 0;
}
