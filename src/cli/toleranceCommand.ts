/**
 * The tolerance subcommand: `npm run sim -- <preset.json> --tolerance [--draws N] [--target-ppm X]
 * [--range A:B] [--json | --csv] [--ions N] [--seed S] [--draw-seed S] [--shard i/n] [--write f]
 * [--join f1 f2 ...]`. Arguments and the preset are checked first, every problem named by its flag;
 * the work runs on the engine pool (one worker thread per core by default).
 * A shard runs every n-th Monte-Carlo draw; `--join` reads the shards' JSON files and reports the
 * whole set as an unsharded run would (the sensitivities are recomputed, the draws taken from the files).
 */
import { existsSync, writeFileSync } from 'node:fs';
import { formatIssues, type PresetIssue } from '../presets/issues';
import { parsePresetText } from '../presets/load';
import { LIMITS } from '../presets/schema';
import { simulate } from '../simulation/run';
import { TuningInputError } from '../tuning/errors';
import { monteCarloDesign, monteCarloSpecies, type MonteCarloDraw, type ToleranceRequest, type ToleranceResult } from '../tolerance/analysis';
import { toleranceParameters } from '../tolerance/parameters';
import { formatToleranceCsv, formatToleranceTable, toleranceJson } from '../tolerance/format';
import { createThreadPoolClient, defaultThreadCount } from './threadPool';

export const TOLERANCE_USAGE = `Tolerance and stability analysis:
  npm run sim -- <preset.json> --tolerance [--draws N] [--target-ppm X] [--range A:B] [--json | --csv]

  --tolerance       sensitivities of flight time, apparent mass (fixed calibration) and R to every
                    tolerance parameter, and the budget for a target mass accuracy ("tolerances" section)
  --draws N         also run N seeded Monte-Carlo draws of the tolerances (0..100000)
  --target-ppm X    target mass accuracy, ppm (1 sd); default tolerances.target, else 5
  --range A:B       m/z range the target applies to (default every species)
  --draw-seed S     seed of the tolerance draws (default the preset's seed)
  --shard i/n       run share i of n (1-based) of the draws; save each with --write and combine with --join
  --join f1 f2 ...  report the draws of shard files (same preset, --draws and seeds) as one run
  --write <file>    save the JSON output; never replaces a file unless --force`;

export interface ToleranceArgs {
  readonly presetPath: string;
  readonly format: 'table' | 'json' | 'csv';
  readonly draws: number;
  readonly targetPpm?: number;
  readonly range?: [number, number];
  readonly ions?: number;
  readonly seed?: number;
  readonly drawSeed?: number;
  readonly shard?: { index: number; count: number };
  readonly write?: string;
  readonly force: boolean;
  readonly join: string[];
}

export function isToleranceCommand(argv: readonly string[]): boolean {
  return argv.includes('--tolerance');
}

export function parseToleranceArgs(argv: readonly string[]): { ok: true; args: ToleranceArgs } | { ok: false; issues: PresetIssue[] } {
  const issues: PresetIssue[] = [];
  const bad = (path: string, message: string): void => void issues.push({ path, message });
  let presetPath: string | undefined;
  let format: ToleranceArgs['format'] = 'table';
  let draws = 0;
  let targetPpm: number | undefined;
  let range: [number, number] | undefined;
  let ions: number | undefined;
  let seed: number | undefined;
  let drawSeed: number | undefined;
  let shard: { index: number; count: number } | undefined;
  let write: string | undefined;
  let force = false;
  const join: string[] = [];
  const integer = (flag: string, text: string | undefined, min: number, max: number): number | undefined => {
    const v = Number(text);
    if (text === undefined || !Number.isInteger(v) || v < min || v > max) {
      bad(flag, `must be an integer from ${min} to ${max} (got ${text ?? 'nothing'})`);
      return undefined;
    }
    return v;
  };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    switch (arg) {
      case '--tolerance':
        break;
      case '--json':
      case '--csv':
        format = arg === '--json' ? 'json' : 'csv';
        break;
      case '--force':
        force = true;
        break;
      case '--draws':
        draws = integer(arg, argv[++i], 0, 100_000) ?? 0;
        break;
      case '--ions':
        ions = integer(arg, argv[++i], LIMITS.ions.min, LIMITS.ions.max);
        break;
      case '--seed':
        seed = integer(arg, argv[++i], LIMITS.seed.min, LIMITS.seed.max);
        break;
      case '--draw-seed':
        drawSeed = integer(arg, argv[++i], LIMITS.seed.min, LIMITS.seed.max);
        break;
      case '--target-ppm': {
        const text = argv[++i];
        const v = Number(text);
        if (text === undefined || !(Number.isFinite(v) && v > 0 && v <= 1e5)) bad(arg, `must be a number > 0 and ≤ 100000 ppm (got ${text ?? 'nothing'})`);
        else targetPpm = v;
        break;
      }
      case '--range': {
        const text = argv[++i] ?? '';
        const m = /^([^:]+):([^:]+)$/.exec(text);
        const a = m ? Number(m[1]) : NaN;
        const b = m ? Number(m[2]) : NaN;
        if (!(a > 0 && b >= a)) bad(arg, `expected A:B with 0 < A ≤ B, m/z (got "${text}")`);
        else range = [a, b];
        break;
      }
      case '--shard': {
        const text = argv[++i] ?? '';
        const m = /^(\d+)\/(\d+)$/.exec(text);
        const index = m ? Number(m[1]) : NaN;
        const count = m ? Number(m[2]) : NaN;
        if (!m || !(count >= 1) || !(index >= 1 && index <= count)) bad(arg, `expected i/n with 1 ≤ i ≤ n, e.g. 2/8 (got "${text}")`);
        else shard = { index: index - 1, count };
        break;
      }
      case '--write':
        write = argv[++i];
        if (write === undefined) bad(arg, 'needs a file name');
        break;
      case '--join':
        while (i + 1 < argv.length && !argv[i + 1].startsWith('--')) join.push(argv[++i]);
        if (join.length === 0) bad(arg, 'needs the shard files');
        break;
      default:
        if (arg.startsWith('-')) bad(arg, 'unknown option with --tolerance (see --help)');
        else if (presetPath === undefined) presetPath = arg;
        else bad(arg, 'unexpected extra argument: give one preset file');
    }
  }
  if (presetPath === undefined) bad('<preset.json>', 'is required');
  if (shard && draws === 0) bad('--shard', 'splits the Monte-Carlo draws: give --draws N');
  if (shard && join.length > 0) bad('--join', 'combines shards: leave out --shard');
  if (join.length > 0 && draws === 0) bad('--join', 'needs the --draws N the shards were run with');
  if (issues.length || presetPath === undefined) return { ok: false, issues };
  return { ok: true, args: { presetPath, format, draws, targetPpm, range, ions, seed, drawSeed, shard, write, force, join } };
}

export interface ToleranceIo {
  out(text: string): void;
  err(text: string): void;
  readFile(path: string): string;
  writeFile?(path: string, text: string, overwrite: boolean): void;
  fileExists?(path: string): boolean;
}

export interface ToleranceEngine {
  tolerance(request: ToleranceRequest): Promise<ToleranceResult>;
  close(): void;
}

export interface ToleranceCliOptions {
  /** Tests inject an in-process pool; default: worker threads, one per core. */
  readonly createToleranceEngine?: (workers: number) => ToleranceEngine;
}

const defaultEngine = (workers: number): ToleranceEngine => {
  const client = createThreadPoolClient(workers);
  return { tolerance: (r) => client.tolerance(r), close: () => client.dispose() };
};

/** Draws from shard files, checked against this run's settings; throws TuningInputError naming the file. */
function joinedDraws(args: ToleranceArgs, io: ToleranceIo, presetName: string, result: ToleranceResult): MonteCarloDraw[] {
  const byIndex = new Map<number, MonteCarloDraw>();
  for (const file of args.join) {
    let doc: { preset?: unknown; tolerance?: { ions?: unknown; seed?: unknown; monteCarlo?: { draws?: unknown; drawSeed?: unknown; perDraw?: MonteCarloDraw[] } } };
    try {
      doc = JSON.parse(io.readFile(file));
    } catch (err) {
      throw new TuningInputError(file, `cannot read a tolerance shard (${(err as { code?: string }).code ?? (err as Error).message})`);
    }
    const mc = doc.tolerance?.monteCarlo;
    if (doc.preset !== presetName || !mc || !Array.isArray(mc.perDraw)) throw new TuningInputError(file, `is not a tolerance shard of preset "${presetName}"`);
    if (mc.draws !== args.draws || mc.drawSeed !== result.monteCarlo?.drawSeed || doc.tolerance?.ions !== result.ions || doc.tolerance?.seed !== result.seed) {
      throw new TuningInputError(file, `was run with other settings (draws ${String(mc.draws)}, draw seed ${String(mc.drawSeed)}, ions ${String(doc.tolerance?.ions)}, seed ${String(doc.tolerance?.seed)})`);
    }
    for (const d of mc.perDraw) byIndex.set(d.index, d);
  }
  const missing = [];
  for (let d = 0; d < args.draws; d++) if (!byIndex.has(d)) missing.push(d);
  if (missing.length) throw new TuningInputError('--join', `${missing.length} of ${args.draws} draws are missing (first: ${missing[0]}); give every shard`);
  return [...byIndex.values()].sort((a, b) => a.index - b.index);
}

export async function runToleranceCommand(argv: readonly string[], io: ToleranceIo, options: ToleranceCliOptions = {}): Promise<number> {
  const parsed = parseToleranceArgs(argv);
  if (!parsed.ok) {
    io.err(formatIssues(parsed.issues) + '\nRun with --help for usage.\n');
    return 2;
  }
  const args = parsed.args;
  let text: string;
  try {
    text = io.readFile(args.presetPath);
  } catch (err) {
    io.err(`${args.presetPath}: cannot read the preset file (${(err as { code?: string }).code ?? 'unreadable'})\n`);
    return 2;
  }
  const loaded = parsePresetText(text);
  if (!loaded.ok) {
    io.err(loaded.issues.map((i) => `${args.presetPath}: ${i.path}: ${i.message}`).join('\n') + '\n');
    return 2;
  }
  const preset = loaded.value;
  const exists = (p: string): boolean => (io.fileExists ? io.fileExists(p) : existsSync(p));
  if (args.write && !args.force && exists(args.write)) {
    io.err(`--write: ${args.write} exists; it is not overwritten (add --force to replace it)\n`);
    return 2;
  }
  // With --join the draws come from the files: run the sensitivities only.
  const request: ToleranceRequest = {
    preset,
    ions: args.ions,
    seed: args.seed,
    draws: args.join.length ? 0 : args.draws,
    drawSeed: args.drawSeed,
    targetAccuracy_ppm: args.targetPpm,
    range: args.range,
    shard: args.shard,
  };
  const engine = (options.createToleranceEngine ?? defaultEngine)(defaultThreadCount());
  let result: ToleranceResult;
  try {
    result = await engine.tolerance(request);
    if (args.join.length) {
      const drawSeed = args.drawSeed ?? preset.run.seed;
      // The shards' design, recomputed from the same sensitivities (the same preset, seed and draws).
      const { design } = monteCarloDesign(result.sensitivities, result.species.length, result.shots, toleranceParameters(preset), args.draws, drawSeed);
      const stub = { ...result, monteCarlo: { draws: args.draws, drawSeed, shard: null, parameters: [], design, drawsRun: 0, failedDraws: 0, species: [], perDraw: [] } };
      const perDraw = joinedDraws(args, io, preset.name, stub);
      result = {
        ...result,
        monteCarlo: {
          ...stub.monteCarlo,
          parameters: result.sensitivities.filter((p) => p.tolerance > 0).map((p) => p.parameter),
          drawsRun: perDraw.length,
          failedDraws: perDraw.filter((d) => d.error !== undefined).length,
          species: monteCarloSpecies(perDraw, result.species, result.sensitivities),
          perDraw,
        },
      };
    }
  } catch (err) {
    if (err instanceof TuningInputError || (err as Error).name === 'TuningInputError') {
      io.err(`${(err as Error).message}\n`);
      return 2;
    }
    io.err(`engine error: ${(err as Error).message}\n`);
    return 1;
  } finally {
    engine.close();
  }
  const run = args.format === 'json' || args.write ? simulate(preset, { ions: args.ions, seed: args.seed }) : null;
  const json = () =>
    JSON.stringify({
      preset: preset.name,
      ions: run!.report.ions,
      seed: run!.compiled.population.seed,
      detected: run!.report.detected,
      species: run!.report.species,
      calibration: run!.report.calibration,
      tolerance: toleranceJson(result),
    });
  if (args.write) {
    const out = json() + '\n';
    try {
      if (io.writeFile) io.writeFile(args.write, out, args.force);
      else writeFileSync(args.write, out, { encoding: 'utf8', flag: args.force ? 'w' : 'wx' });
    } catch (err) {
      io.err(`--write: cannot write ${args.write} (${(err as { code?: string }).code ?? (err as Error).message})\n`);
      return 2;
    }
  }
  if (args.format === 'json') io.out(json() + '\n');
  else if (args.format === 'csv') io.out(formatToleranceCsv(result));
  else io.out(formatToleranceTable(preset.name, result) + (args.write ? `saved: ${args.write}\n` : ''));
  return 0;
}
