/**
 * The scan, tune and merge subcommands of the CLI. Arguments and the preset are checked first (every
 * problem named by its flag), then the work runs on the engine pool: by default one worker thread
 * per core, the same scheduler and tasks as the app's Web Workers, so both give identical numbers.
 */
import { existsSync, writeFileSync } from 'node:fs';
import { withMethodRecord } from '../presets/methodRecord';
import { resolve } from 'node:path';
import { formatIssues, type PresetIssue } from '../presets/issues';
import { parsePresetText, validatePreset } from '../presets/load';
import type { Preset } from '../presets/schema';
import type { EngineApi, Objective, ScanRequest, TuneParameter, TuneRequest } from '../tuning/api';
import { TuningInputError } from '../tuning/errors';
import { cloneJson, numberAt, parsePath, withValues } from '../tuning/paramPath';
import { checkScanRequest, type ScanLabels } from '../tuning/scan';
import { mergeScanDocuments, scanDocument, type ScanDocument } from '../tuning/scanDocument';
import { validateScanText } from '../tuning/mergeValidation';
import { stripByteOrderMark } from '../presets/textInput';
import { checkTuneRequest, type TuneLabels } from '../tuning/tune';
import { createThreadPoolClient, defaultThreadCount } from './threadPool';
import { parseTuningArgs, TUNING_USAGE, type TuningArgs } from './tuningArgs';
import { emptyShardWarning } from './shardWarning';
import { describeObjective, formatScanCsv, formatScanTable, formatTuneTable } from './tuningFormat';

export interface TuningIo {
  out(text: string): void;
  err(text: string): void;
  readFile(path: string): string;
  /** Write a file; must refuse to replace an existing one unless `overwrite` (default: node:fs with flag 'wx'). */
  writeFile?(path: string, text: string, overwrite: boolean): void;
  fileExists?(path: string): boolean;
}

export interface EngineHandle {
  readonly api: Pick<EngineApi, 'scan' | 'optimise'>;
  close(): void;
}

export interface TuningCliOptions {
  /** The engine to use (tests inject an in-process pool); default: worker threads, one per core. */
  readonly createEngine?: (workers: number) => EngineHandle;
}

const defaultEngine = (workers: number): EngineHandle => {
  const client = createThreadPoolClient(workers);
  return { api: client, close: () => client.dispose() };
};

/** Default tune bounds: the current value ± this fraction of it. */
const DEFAULT_BOUND_FRACTION = 0.5;

export async function runTuningCommand(argv: readonly string[], io: TuningIo, options: TuningCliOptions = {}): Promise<number> {
  const parsed = parseTuningArgs(argv);
  if (!parsed.ok) {
    if (parsed.help) {
      io.out(TUNING_USAGE + '\n');
      return 0;
    }
    io.err(formatIssues(parsed.issues) + '\nRun with --help for usage.\n');
    return 2;
  }
  const args = parsed.args;
  try {
    if (args.mode === 'merge') return runMerge(args, io);
    const loaded = loadPreset(args.presetPath!, io);
    if (!loaded) return 2;
    if (args.write) checkWriteTarget(args, io);
    return args.mode === 'scan' ? await runScan(args, loaded, io, options) : await runTune(args, loaded, io, options);
  } catch (err) {
    if (err instanceof TuningInputError) {
      io.err(`${err.message}\n`);
      return 2;
    }
    io.err(`engine error: ${(err as Error).message}\n`);
    return 1;
  }
}

interface LoadedPreset {
  readonly text: string;
  readonly preset: Preset;
}

function loadPreset(path: string, io: TuningIo): LoadedPreset | null {
  let text: string;
  try {
    text = io.readFile(path);
  } catch (err) {
    io.err(`${path}: cannot read the preset file (${(err as { code?: string }).code ?? 'unreadable'})\n`);
    return null;
  }
  const r = parsePresetText(text);
  if (!r.ok) {
    io.err(r.issues.map((i) => `${path}: ${i.path}: ${i.message}`).join('\n') + '\n');
    return null;
  }
  return { text, preset: r.value };
}

const fileExists = (io: TuningIo, path: string): boolean => (io.fileExists ? io.fileExists(path) : existsSync(path));

/** Refuse, before any work, to replace an existing file (the input preset included) without --force. */
function checkWriteTarget(args: TuningArgs, io: TuningIo): void {
  const target = args.write!;
  if (args.force) return;
  if (args.presetPath && resolve(target) === resolve(args.presetPath)) {
    throw new TuningInputError('--write', `${target} is the input preset; it is not overwritten (add --force to replace it)`);
  }
  if (fileExists(io, target)) throw new TuningInputError('--write', `${target} exists; it is not overwritten (add --force to replace it)`);
}

function writeOut(args: TuningArgs, io: TuningIo, text: string): void {
  const target = args.write!;
  try {
    if (io.writeFile) io.writeFile(target, text, args.force);
    else writeFileSync(target, text, { encoding: 'utf8', flag: args.force ? 'w' : 'wx' });
  } catch (err) {
    const code = (err as { code?: string }).code;
    if (code === 'EEXIST') throw new TuningInputError('--write', `${target} exists; it is not overwritten (add --force to replace it)`);
    throw new TuningInputError('--write', `cannot write ${target} (${code ?? (err as Error).message})`);
  }
}

function objectiveOf(args: TuningArgs): Objective | undefined {
  if (!args.objective) return undefined;
  return { name: args.objective, targetMz: args.targetMz, range: args.range };
}

const CLI_OBJECTIVE_LABELS = { name: '--objective', targetMz: '--target-mz', range: '--range' };

async function runScan(args: TuningArgs, loaded: LoadedPreset, io: TuningIo, options: TuningCliOptions): Promise<number> {
  const request: ScanRequest = {
    preset: loaded.preset,
    axes: args.axes,
    objective: objectiveOf(args),
    ions: args.ions,
    seed: args.seed,
    shard: args.shard,
    ...(args.idealR ? { criterion: 'ideal' as const } : {}),
  };
  const labels: ScanLabels = { axis: (i) => `--scan ${args.axisTexts[i] ?? ''}`.trim(), objective: CLI_OBJECTIVE_LABELS, shard: '--shard', ions: '--ions', seed: '--seed' };
  const checked = checkScanRequest(request, labels);
  const empty = emptyShardWarning(args.shard, checked.total, checked.indices.length);
  if (empty) io.err(empty + '\n');
  const engine = (options.createEngine ?? defaultEngine)(Math.min(defaultThreadCount(), Math.max(1, checked.indices.length)));
  let doc: ScanDocument;
  try {
    doc = scanDocument(loaded.preset, await engine.api.scan(request));
  } finally {
    engine.close();
  }
  if (args.write) writeOut(args, io, JSON.stringify(doc, null, 1) + '\n');
  printScan(args, io, doc);
  return 0;
}

function printScan(args: TuningArgs, io: TuningIo, doc: ScanDocument): void {
  if (args.format === 'json') io.out(JSON.stringify(doc) + '\n');
  else if (args.format === 'csv') io.out(formatScanCsv(doc));
  else io.out(formatScanTable(doc) + (args.write ? `saved: ${args.write}\n` : ''));
}

function tuneParameters(args: TuningArgs, preset: Preset): TuneParameter[] {
  return args.tune.map((t) => {
    if (t.min !== undefined && t.max !== undefined) return { path: t.path, min: t.min, max: t.max };
    const found = numberAt(preset, t.path);
    if (!found.ok) throw new TuningInputError(`--tune ${t.path}`, `${t.path} ${found.reason}`);
    const half = DEFAULT_BOUND_FRACTION * Math.abs(found.value);
    if (half === 0) throw new TuningInputError(`--tune ${t.path}`, `the current value is 0, so there is no default range: give bounds as ${t.path}=<min>:<max>`);
    return { path: t.path, min: found.value - half, max: found.value + half };
  });
}

async function runTune(args: TuningArgs, loaded: LoadedPreset, io: TuningIo, options: TuningCliOptions): Promise<number> {
  const parameters = tuneParameters(args, loaded.preset);
  const objective = objectiveOf(args)!;
  const request: TuneRequest = { preset: loaded.preset, parameters, objective, ions: args.ions, seed: args.seed, minTransmission: args.minTransmission, keepTransmission: args.keepTransmission, allowWorse: args.allowWorse, ...(args.idealR ? { criterion: 'ideal' as const } : {}) };
  const labels: TuneLabels = {
    parameter: (i) => `--tune ${parameters[i]?.path ?? ''}`.trim(),
    objective: CLI_OBJECTIVE_LABELS,
    minTransmission: '--min-transmission',
    keepTransmission: '--keep-transmission',
    ions: '--ions',
    seed: '--seed',
    measure: 'measure',
    restarts: 'restarts',
  };
  try {
    checkTuneRequest(request, labels);
  } catch (err) {
    const defaulted = args.tune.some((t) => t.min === undefined) && err instanceof TuningInputError && err.argument.startsWith('--tune');
    if (defaulted) throw new TuningInputError(err.argument, `${err.reason} (bounds not given default to the current value ± 50 %; give <path>=<min>:<max>)`);
    throw err;
  }
  const engine = (options.createEngine ?? defaultEngine)(defaultThreadCount());
  let result;
  try {
    result = await engine.api.optimise(request);
  } finally {
    engine.close();
  }
  if (args.write) {
    // A saved method keeps every digit it was evaluated with (no rounding of the tuned values).
    const entry = withMethodRecord(loaded.preset, {
      kind: 'tune',
      ions: args.ions ?? loaded.preset.run.ions,
      seed: args.seed ?? loaded.preset.run.seed,
      objective: describeObjective(objective),
      criterion: result.criterion ?? 'ideal',
      parameters: parameters.map((p, i) => ({ ...p, before: result.start[i], applied: result.best[i] })),
      result: result.objective,
      note: `auto-tune (CLI), ${result.evaluations} evaluations; start: ${(result.startSource ?? []).join('; ') || 'current settings'}${result.transmissionConstraint ? `; transmission: ${result.transmissionConstraint}` : ''}`,
    }).method!;
    writeOut(args, io, tunedPresetText(loaded, parameters, result.best, { ...result.tunedPreset, method: entry }, entry));
  }
  const ions = args.ions ?? loaded.preset.run.ions;
  const seed = args.seed ?? loaded.preset.run.seed;
  if (args.format === 'json') {
    io.out(JSON.stringify({ preset: loaded.preset.name, ions, seed, objectiveDefinition: objective, ...result }) + '\n');
  } else if (args.format === 'csv') {
    const lines = ['path,start,tuned,flatLow,flatHigh,preset,recommendation', ...result.flatness.map((f, i) => [f.path, result.start[i], result.best[i], f.low, f.high, result.presetValues?.[i] ?? '', result.recommendation ?? ''].join(','))];
    io.out(lines.join('\n') + '\n');
  } else {
    const saved = result.recommendation === 'preset' ? "the preset's own values" : 'tuned values at full precision';
    io.out(formatTuneTable(loaded.preset.name, ions, seed, objective, result) + (args.write ? `saved: ${args.write} (${saved})\n` : ''));
  }
  return 0;
}

/** x rounded to a decimal step ≤ (high − low)/1000, kept inside the parameter's bounds. */
export function roundWithin(x: number, low: number, high: number, bounds: { min: number; max: number }): number {
  const width = high - low;
  if (!(width > 0)) return x;
  const decimals = -Math.floor(Math.log10(width / 1000));
  const rounded = decimals >= 0 ? Number(x.toFixed(Math.min(decimals, 100))) : Math.round(x / 10 ** -decimals) * 10 ** -decimals;
  return Math.min(Math.max(rounded, bounds.min), bounds.max);
}

/**
 * The tuned preset as a file: the input document with only the tuned numbers changed (its layout and
 * omitted defaults kept), or the validated tuned preset if that document cannot take the values.
 */
function tunedPresetText(loaded: LoadedPreset, parameters: readonly TuneParameter[], best: readonly number[], tunedPreset: Preset, method: Preset['method']): string {
  const raw = JSON.parse(stripByteOrderMark(loaded.text)) as unknown;
  const paths = parameters.map((p) => p.path);
  if (paths.every((p) => numberAt(raw, p).ok)) {
    const r = withValues(raw, paths, best);
    if (r.ok) {
      const copy = cloneJson(raw) as Record<string | number, unknown>;
      paths.forEach((p, i) => {
        const keys = parsePath(p)!;
        let node = copy;
        for (let k = 0; k < keys.length - 1; k++) node = node[keys[k]] as Record<string | number, unknown>;
        node[keys[keys.length - 1]] = best[i];
      });
      copy.method = method; // the method record: how these values were found
      return JSON.stringify(copy, null, 2) + '\n';
    }
  }
  const check = validatePreset(tunedPreset);
  if (!check.ok) throw new Error(`tuned preset does not validate: ${formatIssues(check.issues)}`);
  return JSON.stringify(tunedPreset, null, 2) + '\n';
}

function runMerge(args: TuningArgs, io: TuningIo): number {
  const docs: { label: string; doc: ScanDocument }[] = [];
  const issues: PresetIssue[] = [];
  for (const file of args.files) {
    let text: string;
    try {
      text = io.readFile(file);
    } catch (err) {
      issues.push({ path: file, message: `cannot read the scan file (${(err as { code?: string }).code ?? 'unreadable'})` });
      continue;
    }
    const checked = validateScanText(text, file);
    if (checked.ok) docs.push({ label: file, doc: checked.doc });
    else issues.push(...checked.issues);
  }
  if (issues.length) {
    io.err(formatIssues(issues) + '\n');
    return 2;
  }
  if (args.write) {
    for (const file of args.files) {
      if (!args.force && resolve(file) === resolve(args.write)) throw new TuningInputError('--write', `${args.write} is one of the inputs; it is not overwritten (add --force to replace it)`);
    }
    if (!args.force && fileExists(io, args.write)) throw new TuningInputError('--write', `${args.write} exists; it is not overwritten (add --force to replace it)`);
  }
  const merged = mergeScanDocuments(docs);
  if (args.write) writeOut(args, io, JSON.stringify(merged, null, 1) + '\n');
  printScan(args, io, merged);
  return 0;
}

export { isTuningCommand } from './tuningArgs';
