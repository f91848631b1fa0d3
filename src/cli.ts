/**
 * Headless runs of a preset: `npm run sim -- <preset.json> [--json|--csv] [--ions N] [--seed S]`.
 * Bad input ends with one line per problem on stderr and a non-zero exit code, never a stack trace.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { htmlReport } from './simulation/htmlReport';
import { formatIssues, type PresetIssue } from './presets/issues';
import { parsePresetText } from './presets/load';
import { LIMITS } from './presets/schema';
import { simulate } from './simulation/run';
import { formatCsv, formatTable } from './simulation/format';
import { isTuningCommand, runTuningCommand, type TuningCliOptions } from './cli/tuningCommand';
import { TUNING_USAGE } from './cli/tuningArgs';
import { parseCliInteger } from './cli/numbers';
import { outputFormatClash } from './cli/outputFlags';
import type { SpectrumSection } from './simulation/analysisReport';
import { compareWithIdeal, formatIdealComparison } from './simulation/idealComparison';
import { isMeasuredCommand, MEASURED_USAGE, runMeasuredCommand } from './cli/measuredCommand';
import { isToleranceCommand, runToleranceCommand, TOLERANCE_USAGE, type ToleranceCliOptions } from './cli/toleranceCommand';
import { formatMirrorMap } from './physics/solvedMirrorMap';
import { formatSourceMap } from './physics/solvedSourceMap';
import { FRAGMENT_USAGE, formatFragmentTable, isSteppingCommand, runSteppingCommand } from './cli/fragmentCommand';
import { applyIonLoadArgs, formatIonLoad, ION_LOAD_USAGE, takeIonLoadArg, type IonLoadArgs } from './cli/ionLoadArgs';

export const USAGE = `Usage: npm run sim -- <preset.json> [--json | --csv] [--ions N] [--seed S]

  <preset.json>   analyser + ion population preset (see presets/ and presets/preset.schema.json)
  --json          print one JSON object (species array with flight times, FWHM, R, transmission, fates)
  --csv           print one CSV row per species
  --ions N        override the preset's ion count (${LIMITS.ions.min}..${LIMITS.ions.max})
  --seed S        override the preset's random seed (${LIMITS.seed.min}..${LIMITS.seed.max})
  --spectrum      with --json: add the simulated spectrum (time_ns, intensity, mz arrays; needs "acquisition")
  --compare-ideal also run the same instrument with ideal grids in place of solved fields and print both
                  (flight time, FWHM, R, transmission; in --json as "idealComparison")
  --report F.html also write one self-contained HTML page for a lab notebook (settings, results, spectrum
                  and focus plots, method record, version, seed, high-voltage caution); never replaces a file
${ION_LOAD_USAGE}
  --help          show this text

${TUNING_USAGE}

${MEASURED_USAGE}
${TOLERANCE_USAGE}
${FRAGMENT_USAGE}`;

export interface CliArgs {
  presetPath: string;
  format: 'table' | 'json' | 'csv';
  spectrum?: boolean;
  compareIdeal?: boolean;
  report?: string;
  ions?: number;
  seed?: number;
  ionLoad?: IonLoadArgs;
}

export type ArgsResult = { ok: true; args: CliArgs } | { ok: false; issues: PresetIssue[]; help?: boolean };

export function parseArgs(argv: readonly string[]): ArgsResult {
  const issues: PresetIssue[] = [];
  let presetPath: string | undefined;
  let format: CliArgs['format'] = 'table';
  let ions: number | undefined;
  let seed: number | undefined;
  let spectrum = false;
  let compareIdeal = false;
  let report: string | undefined;
  const ionLoad: IonLoadArgs = {};
  for (let i = 0; i < argv.length; i++) {
    const used = takeIonLoadArg(argv, i, ionLoad, issues);
    if (used > 0) {
      i += used - 1;
      continue;
    }
    const arg = argv[i];
    if (arg === '--help' || arg === '-h') return { ok: false, issues: [], help: true };
    if (arg === '--spectrum') {
      spectrum = true;
    } else if (arg === '--compare-ideal') {
      compareIdeal = true;
    } else if (arg === '--report') {
      report = argv[++i];
      if (report === undefined || report.startsWith('--')) issues.push({ path: '--report', message: 'needs an output file name, e.g. --report run.html' });
    } else if (arg === '--json' || arg === '--csv') {
      const clash = outputFormatClash(format, arg);
      if (clash) issues.push({ path: arg, message: clash });
      else format = arg === '--json' ? 'json' : 'csv';
    } else if (arg === '--ions' || arg === '--seed') {
      const range = arg === '--ions' ? LIMITS.ions : LIMITS.seed;
      const text = argv[++i];
      const parsed = parseCliInteger(text, range);
      if ((arg === '--ions' ? ions : seed) !== undefined) issues.push({ path: arg, message: 'is given twice: give it once' });
      else if (!parsed.ok) issues.push({ path: arg, message: parsed.message });
      else if (arg === '--ions') ions = parsed.value;
      else seed = parsed.value;
    } else if (arg.startsWith('-')) {
      issues.push({ path: arg, message: 'unknown option (see --help)' });
    } else if (presetPath === undefined) {
      presetPath = arg;
    } else {
      issues.push({ path: arg, message: 'unexpected extra argument: give one preset file' });
    }
  }
  if (presetPath === undefined) issues.push({ path: '<preset.json>', message: 'is required' });
  if (issues.length || presetPath === undefined) return { ok: false, issues };
  if (spectrum && format !== 'json') issues.push({ path: '--spectrum', message: 'needs --json' });
  if (issues.length) return { ok: false, issues };
  return { ok: true, args: { presetPath, format, ions, seed, spectrum, compareIdeal, ionLoad, ...(report ? { report } : {}) } };
}

export interface CliIo {
  out(text: string): void;
  err(text: string): void;
  readFile(path: string): string;
  /** Used by --write (scan/tune/merge); default node:fs, never replacing a file unless `overwrite`. */
  writeFile?(path: string, text: string, overwrite: boolean): void;
  fileExists?(path: string): boolean;
}

const processIo: CliIo = {
  out: (text) => void process.stdout.write(text),
  err: (text) => void process.stderr.write(text),
  readFile: (path) => readFileSync(path, 'utf8'),
};

function spectrumJson(s: SpectrumSection | null) {
  if (!s) return { error: 'the preset has no "acquisition" settings, or no ion was detected' };
  return { sampleInterval_ns: s.sampleInterval_ns, time_ns: Array.from(s.time_ns), intensity: Array.from(s.intensity), mz: s.mz ? Array.from(s.mz) : null };
}

/** Plain runs return their exit code at once; scans, tunes and merges (worker pool) return a promise of it. */
export function main(argv: readonly string[], io: CliIo = processIo, options: TuningCliOptions & ToleranceCliOptions = {}): number | Promise<number> {
  if (isMeasuredCommand(argv) && !argv.includes('--help')) return runMeasuredCommand(argv, io, (rest, plainIo) => main(rest, plainIo, options));
  if (isToleranceCommand(argv) && !argv.includes('--help')) return runToleranceCommand(argv, io, options);
  if (isTuningCommand(argv)) return runTuningCommand(argv, io, options);
  if (isSteppingCommand(argv) && !argv.includes('--help')) return runSteppingCommand(argv, io);
  const parsed = parseArgs(argv);
  if (!parsed.ok) {
    if (parsed.help) {
      io.out(USAGE + '\n');
      return 0;
    }
    io.err(formatIssues(parsed.issues) + '\n' + 'Run with --help for usage.\n');
    return 2;
  }
  const { args } = parsed;
  let text: string;
  try {
    text = io.readFile(args.presetPath);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code ?? 'unreadable';
    io.err(`${args.presetPath}: cannot read the preset file (${code})\n`);
    return 2;
  }
  const loaded = parsePresetText(text);
  if (!loaded.ok) {
    io.err(loaded.issues.map((i) => `${args.presetPath}: ${i.path}: ${i.message}`).join('\n') + '\n');
    return 2;
  }
  const withLoad = applyIonLoadArgs(loaded.value, args.ionLoad ?? {});
  if (!withLoad.ok) {
    io.err(withLoad.issues.map((i) => `${args.presetPath}: ${i.path}: ${i.message}`).join('\n') + '\n');
    return 2;
  }
  const preset = withLoad.value;
  const result = simulate(preset, { ions: args.ions, seed: args.seed, withSpectrum: args.spectrum || args.report !== undefined });
  if (args.report !== undefined) {
    const page = htmlReport({
      preset,
      report: result.report,
      ions: result.report.ions,
      seed: result.compiled.population.seed,
      spectrum: result.analysis.spectrum && { time_ns: result.analysis.spectrum.time_ns, intensity: result.analysis.spectrum.intensity, label: 'simulated spectrum (digitizer samples)' },
      date: new Date().toISOString(),
      producedBy: 'CLI',
    });
    try {
      if (io.writeFile) io.writeFile(args.report, page, false);
      else writeFileSync(args.report, page, { flag: 'wx' });
    } catch (err) {
      io.err(`${args.report}: cannot write the report (${(err as NodeJS.ErrnoException).code ?? (err as Error).message}); an existing file is never replaced\n`);
      return 2;
    }
  }
  const comparison = args.compareIdeal ? compareWithIdeal(preset, result.report, { ions: args.ions, seed: args.seed }) : null;
  if (args.format === 'json') {
    const out = {
      preset: preset.name,
      ions: result.report.ions,
      seed: result.compiled.population.seed,
      detected: result.report.detected,
      fates: result.report.fates,
      species: result.report.species,
      calibration: result.report.calibration,
      focus: result.report.focus,
      ...(args.spectrum ? { spectrum: spectrumJson(result.analysis.spectrum) } : {}),
      ...(comparison ? { idealComparison: comparison } : {}),
      ...(result.report.solvedMirrorMap ? { solvedMirrorMap: result.report.solvedMirrorMap } : {}),
      ...(result.report.solvedSourceMap ? { solvedSourceMap: result.report.solvedSourceMap } : {}),
      ...(result.ionLoad
        ? { ionLoad: { ionsPerShot: result.ionLoad.ionsPerShot, countLaw: result.ionLoad.countLaw, shots: result.ionLoad.shots }, detection: result.ionLoad.detection, spaceCharge: result.ionLoad.spaceCharge }
        : {}),
    };
    io.out(JSON.stringify(out) + '\n');
  } else if (args.format === 'csv') {
    io.out(formatCsv(result.report));
    if (comparison) io.err(formatIdealComparison(comparison)); // keeps stdout a clean CSV
  } else {
    io.out(formatTable(preset, result));
    if (result.fragments) io.out(formatFragmentTable(result.fragments.report));
    if (result.report.solvedMirrorMap) io.out(formatMirrorMap(result.report.solvedMirrorMap));
    if (result.report.solvedSourceMap) io.out(formatSourceMap(result.report.solvedSourceMap));
    if (comparison) io.out(formatIdealComparison(comparison));
    if (result.ionLoad) io.out(formatIonLoad(result.ionLoad));
  }
  return 0;
}

// Run when executed directly (not when imported by the tests).
if (import.meta.url === `file://${process.argv[1]}` || process.argv[1]?.endsWith('/src/cli.ts')) {
  try {
    process.exitCode = await main(process.argv.slice(2));
  } catch (err) {
    process.stderr.write(`internal error: ${(err as Error).message}\n`);
    process.exitCode = 1;
  }
}
