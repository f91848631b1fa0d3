/**
 * Command-line arguments of the scan, tune and merge subcommands. Parsing checks only the form of
 * each argument; whether a path exists in the preset, or a value is allowed there, is checked once
 * the preset is loaded (src/tuning/scanPlan.ts), with the flag named in the message.
 */
import type { PresetIssue } from '../presets/issues';
import { LIMITS } from '../presets/schema';
import type { ObjectiveName, ScanAxis } from '../tuning/api';
import { OBJECTIVE_NAMES } from '../tuning/objective';
import { parseCliInteger, parseCliNumber } from './numbers';
import { checkOutputFileName, outputFormatClash } from './outputFlags';

export const TUNING_USAGE = `Scans, auto-tune and merging shards:
  npm run sim -- <preset.json> --scan <path>=<from>:<to>:<steps> [--scan <path>=...] [--json | --csv]
  npm run sim -- <preset.json> --tune <path>[=<min>:<max>][,<path>...] --objective <name> [--target-mz M | --range A:B]
  npm run sim -- merge <scan files...> [--json | --csv] [--write <out.json>]

  <path>            a numeric preset parameter, e.g. source.extraction.delay_ns, mirror.backPlate_V,
                    ions.species[0].mz; a scan axis may also list values: <path>=v1,v2,v3
  --scan            one --scan for a 1-D scan, two for a 2-D scan (the first varies slowest);
                    steps = number of points, both ends included; every point uses the same seed
  --tune            parameters to tune, with bounds (default: the current value ± 50 %)
  --objective       ${OBJECTIVE_NAMES.join(' | ')}
  --target-mz M     species the objective looks at (max-r-at-mz, min-fwhm)
  --range A:B       m/z range whose least R is maximised (max-min-r-over-range)
  --keep-transmission F  tune constraint: every species keeps at least this share (0..1) of its
                    transmission at the preset's settings (the default, also in the app: 0.99)
  --min-transmission F  tune constraint instead: every species keeps a transmission of at least F (0..1)
  --allow-worse     give the search's best even when the preset's own settings score better (default: keep the preset's)
  --write <file>    save the tuned preset (tune) or the scan / merged scan as JSON; never replaces
                    an existing file, the input included, unless --force is given
  --shard i/n       run share i of n (1-based) of a scan's points; join the outputs with merge
  --ions N, --seed S  ions per point and the seed of every point
  --ideal-r         rank by the ideal-detector R (ion arrival times only) instead of the R of the
                    simulated spectrum peak (the default when the preset has "acquisition" settings)`;

export type Format = 'table' | 'json' | 'csv';

export interface TuneArg {
  readonly path: string;
  readonly min?: number;
  readonly max?: number;
}

export interface TuningArgs {
  readonly mode: 'scan' | 'tune' | 'merge';
  readonly presetPath?: string;
  readonly files: readonly string[];
  readonly format: Format;
  readonly axes: readonly ScanAxis[];
  readonly axisTexts: readonly string[];
  readonly tune: readonly TuneArg[];
  readonly objective?: ObjectiveName;
  readonly targetMz?: number;
  readonly range?: readonly [number, number];
  readonly minTransmission?: number;
  readonly keepTransmission?: number;
  readonly write?: string;
  readonly force: boolean;
  readonly allowWorse?: boolean;
  /** 0-based shard index. */
  readonly shard?: { readonly index: number; readonly count: number };
  readonly ions?: number;
  readonly seed?: number;
  /** --ideal-r: rank by the ideal-detector R. */
  readonly idealR?: boolean;
}

export type TuningArgsResult = { ok: true; args: TuningArgs } | { ok: false; issues: PresetIssue[]; help?: boolean };

/** Flags that may be given more than once (each adds an axis or parameters). */
const REPEATABLE = new Set(['--scan', '--tune']);

export function isTuningCommand(argv: readonly string[]): boolean {
  return argv[0] === 'merge' || argv.includes('--scan') || argv.includes('--tune');
}

const num = parseCliNumber;

/** `path=from:to:steps` or `path=v1,v2,...`. */
export function parseScanAxis(text: string): ScanAxis | string {
  const eq = text.indexOf('=');
  if (eq <= 0) return 'expected <path>=<from>:<to>:<steps> or <path>=<v1>,<v2>,...';
  const path = text.slice(0, eq).trim();
  const spec = text.slice(eq + 1);
  if (spec.includes(':')) {
    const parts = spec.split(':');
    if (parts.length !== 3) return `expected <from>:<to>:<steps> after "${path}=" (got "${spec}")`;
    const [from, to, steps] = parts.map(num);
    if (!Number.isFinite(from) || !Number.isFinite(to)) return `range ends must be numbers (got "${parts[0]}:${parts[1]}")`;
    if (!Number.isInteger(steps)) return `steps must be a whole number of points (got "${parts[2]}")`;
    return { path, from, to, steps };
  }
  const values = spec.split(',').map(num);
  if (spec.trim() === '' || values.some((v) => !Number.isFinite(v))) return `expected a range <from>:<to>:<steps> or a list of numbers after "${path}=" (got "${spec}")`;
  return { path, values };
}

/** `a[=min:max],b[=min:max]`. */
export function parseTuneList(text: string): TuneArg[] | string {
  const out: TuneArg[] = [];
  for (const item of text.split(',')) {
    const eq = item.indexOf('=');
    if (eq < 0) {
      if (!item.trim()) return 'empty parameter in the list';
      out.push({ path: item.trim() });
      continue;
    }
    const path = item.slice(0, eq).trim();
    const bounds = item.slice(eq + 1).split(':');
    const [min, max] = bounds.map(num);
    if (!path || bounds.length !== 2 || !Number.isFinite(min) || !Number.isFinite(max)) return `expected <path>=<min>:<max> (got "${item}")`;
    out.push({ path, min, max });
  }
  return out;
}

export function parseTuningArgs(argv: readonly string[]): TuningArgsResult {
  const issues: PresetIssue[] = [];
  const merge = argv[0] === 'merge';
  const rest = merge ? argv.slice(1) : argv;
  const files: string[] = [];
  const axes: ScanAxis[] = [];
  const axisTexts: string[] = [];
  let tune: TuneArg[] = [];
  let tuneGiven = false;
  let format: Format = 'table';
  let objective: ObjectiveName | undefined;
  let targetMz: number | undefined;
  let range: [number, number] | undefined;
  let minTransmission: number | undefined;
  let keepTransmission: number | undefined;
  let write: string | undefined;
  let force = false;
  let allowWorse = false;
  // Flags that appeared (even with a bad value), so a later "is required" check does not add a second message.
  const given = new Set<string>();
  let shard: { index: number; count: number } | undefined;
  let ions: number | undefined;
  let seed: number | undefined;
  let idealR = false;
  const bad = (path: string, message: string): void => void issues.push({ path, message });

  for (let i = 0; i < rest.length; i++) {
    const arg = rest[i];
    const takesValue = ['--scan', '--tune', '--objective', '--target-mz', '--range', '--min-transmission', '--keep-transmission', '--write', '--shard', '--ions', '--seed'].includes(arg);
    const value = takesValue ? rest[++i] : undefined;
    if (takesValue && given.has(arg) && !REPEATABLE.has(arg)) {
      bad(arg, 'is given twice: give it once');
      continue;
    }
    given.add(arg);
    if (takesValue && (value === undefined || value.startsWith('--'))) {
      bad(arg, 'needs a value (see --help)');
      if (value !== undefined) i--;
      continue;
    }
    switch (arg) {
      case '--help':
      case '-h':
        return { ok: false, issues: [], help: true };
      case '--json':
      case '--csv': {
        const clash = outputFormatClash(format, arg);
        if (clash) bad(arg, clash);
        else format = arg === '--json' ? 'json' : 'csv';
        break;
      }
      case '--force':
        force = true;
        break;
      case '--allow-worse':
        allowWorse = true;
        break;
      case '--ideal-r':
        idealR = true;
        break;
      case '--scan': {
        const axis = parseScanAxis(value!);
        if (typeof axis === 'string') bad('--scan', axis);
        else {
          axes.push(axis);
          axisTexts.push(value!);
        }
        break;
      }
      case '--tune': {
        const list = parseTuneList(value!);
        tuneGiven = true;
        if (typeof list === 'string') bad('--tune', list);
        else tune = [...tune, ...list];
        break;
      }
      case '--objective':
        if (!OBJECTIVE_NAMES.includes(value as ObjectiveName)) bad('--objective', `unknown objective "${value}" (choose ${OBJECTIVE_NAMES.join(', ')})`);
        else objective = value as ObjectiveName;
        break;
      case '--target-mz': {
        const mz = num(value!);
        if (!(mz > 0)) bad('--target-mz', `must be a positive m/z (got "${value}")`);
        else targetMz = mz;
        break;
      }
      case '--range': {
        const parts = value!.split(':').map(num);
        if (parts.length !== 2 || !parts.every(Number.isFinite) || !(parts[0] < parts[1])) bad('--range', `expected A:B with A < B, two m/z values (got "${value}")`);
        else range = [parts[0], parts[1]];
        break;
      }
      case '--min-transmission': {
        const f = num(value!);
        if (!(f >= 0 && f <= 1)) bad('--min-transmission', `must be a fraction from 0 to 1 (got "${value}")`);
        else minTransmission = f;
        break;
      }
      case '--keep-transmission': {
        const f = num(value!);
        if (!(f >= 0 && f <= 1)) bad('--keep-transmission', `must be a fraction from 0 to 1 of each species' current transmission (got "${value}")`);
        else keepTransmission = f;
        break;
      }
      case '--write': {
        const problem = checkOutputFileName(value!);
        if (problem) bad('--write', problem);
        else write = value;
        break;
      }
      case '--shard': {
        const m = /^(\d+)\/(\d+)$/.exec(value!.trim());
        const index = m ? Number(m[1]) : NaN;
        const count = m ? Number(m[2]) : NaN;
        if (!m || !(count >= 1) || !(index >= 1 && index <= count)) bad('--shard', `expected i/n with 1 ≤ i ≤ n, e.g. 2/8 (got "${value}")`);
        else shard = { index: index - 1, count };
        break;
      }
      case '--ions':
      case '--seed': {
        const parsedInt = parseCliInteger(value, arg === '--ions' ? LIMITS.ions : LIMITS.seed);
        if (!parsedInt.ok) bad(arg, parsedInt.message);
        else if (arg === '--ions') ions = parsedInt.value;
        else seed = parsedInt.value;
        break;
      }
      default:
        if (arg.startsWith('-')) bad(arg, 'unknown option (see --help)');
        else files.push(arg);
    }
  }

  const mode: TuningArgs['mode'] = merge ? 'merge' : tuneGiven ? 'tune' : 'scan';
  if (merge) {
    if (files.length === 0) bad('merge', 'give the scan files to merge');
    for (const flag of ['--scan', '--tune', '--objective', '--target-mz', '--range', '--shard', '--ions', '--seed', '--min-transmission', '--keep-transmission', '--allow-worse']) {
      if (rest.includes(flag)) bad(flag, 'does not apply to merge');
    }
  } else {
    if (files.length === 0) bad('<preset.json>', 'is required');
    if (files.length > 1) bad(files[1], 'unexpected extra argument: give one preset file');
    if (axes.length > 0 && tuneGiven) bad('--tune', 'cannot be combined with --scan: run the scan and the tune separately');
    if (mode === 'scan' && axes.length > 2) bad('--scan', 'at most two --scan axes (a 1-D or 2-D scan)');
    if (mode === 'tune' && shard) bad('--shard', 'applies to scans only');
    if (mode === 'scan' && minTransmission !== undefined) bad('--min-transmission', 'applies to --tune only');
    if (mode === 'scan' && keepTransmission !== undefined) bad('--keep-transmission', 'applies to --tune only');
    if (given.has('--min-transmission') && given.has('--keep-transmission')) bad('--keep-transmission', 'give either --min-transmission (an absolute floor) or --keep-transmission (a share of the current transmission), not both');
    if (mode === 'scan' && allowWorse) bad('--allow-worse', 'applies to --tune only');
    // Infer the objective from a lone target or range; a tune needs one. A flag that was given with a
    // bad value already has its message, so nothing is inferred from or required of it here.
    const objectiveGiven = given.has('--objective');
    const targetGiven = given.has('--target-mz');
    const rangeGiven = given.has('--range');
    if (!objectiveGiven && targetMz !== undefined && !rangeGiven) objective = 'max-r-at-mz';
    if (!objectiveGiven && range !== undefined && !targetGiven) objective = 'max-min-r-over-range';
    if (!objectiveGiven && targetGiven && rangeGiven) bad('--objective', 'is required when both --target-mz and --range are given');
    if (mode === 'tune' && !objectiveGiven && !targetGiven && !rangeGiven) {
      bad('--objective', `is required with --tune (choose ${OBJECTIVE_NAMES.join(', ')})`);
    }
    if (objective === 'max-min-r-over-range' && !rangeGiven) bad('--range', `is required by --objective ${objective} (give the m/z range as A:B)`);
    if ((objective === 'max-r-at-mz' || objective === 'min-fwhm') && !targetGiven) bad('--target-mz', `is required by --objective ${objective} (give the m/z of a species of the preset)`);
  }
  if (force && !given.has('--write')) bad('--force', 'only applies together with --write');
  if (issues.length) return { ok: false, issues };
  return {
    ok: true,
    args: { mode, presetPath: merge ? undefined : files[0], files, format, axes, axisTexts, tune, objective, targetMz, range, minTransmission, keepTransmission, write, force, allowWorse, shard, ions, seed, idealR },
  };
}
