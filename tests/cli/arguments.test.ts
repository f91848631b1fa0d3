/** Argument parsing of every command: one number grammar, no silent choices, one message per problem. */
import { describe, expect, it } from 'vitest';
import { parseArgs } from '../../src/cli';
import { parseCliInteger, parseCliNumber } from '../../src/cli/numbers';
import { emptyShardWarning } from '../../src/cli/shardWarning';
import { parseTuningArgs } from '../../src/cli/tuningArgs';

const DEMO = 'presets/demo-linear-delayed.json';
const issuesOf = (r: ReturnType<typeof parseTuningArgs> | ReturnType<typeof parseArgs>) => (r.ok ? [] : r.issues.map((i) => `${i.path}: ${i.message}`));

describe('one number grammar', () => {
  it('takes decimal numbers with a sign, a fraction and an exponent, and nothing else', () => {
    for (const [text, value] of [['250', 250], [' -1.5 ', -1.5], ['+2e4', 2e4], ['.5', 0.5], ['3.', 3], ['1E-3', 1e-3]] as const) expect(parseCliNumber(text)).toBe(value);
    for (const text of ['0x10', '0b11', '0o7', '', ' ', 'Infinity', 'NaN', '1e400', '1,5', '1_000', '12abc', undefined]) expect(parseCliNumber(text)).toBeNaN();
    expect(parseCliInteger('1e3', { min: 1, max: 5000 })).toEqual({ ok: true, value: 1000 });
    expect(parseCliInteger('2.5', { min: 1, max: 5000 })).toMatchObject({ ok: false });
  });

  it('--ions 0x10 is refused the same way in a plain run and in a scan, tune or merge', () => {
    const plain = issuesOf(parseArgs([DEMO, '--ions', '0x10']));
    const scan = issuesOf(parseTuningArgs([DEMO, '--scan', 'source.extraction.delay_ns=100:200:3', '--ions', '0x10']));
    expect(plain).toEqual([expect.stringMatching(/^--ions: must be an integer from 1 to \d+ \(got "0x10"\)$/)]);
    expect(scan).toEqual(plain);
    expect(issuesOf(parseArgs([DEMO, '--seed', '']))).toEqual([expect.stringMatching(/^--seed: must be an integer from 0 to \d+ \(got ""\)$/)]);
    expect(issuesOf(parseTuningArgs([DEMO, '--scan', 'source.extraction.delay_ns=0x10:200:3']))[0]).toMatch(/^--scan: range ends must be numbers/);
    expect(issuesOf(parseTuningArgs([DEMO, '--tune', 'source.extraction.delay_ns', '--target-mz', '0x10']))).toEqual(['--target-mz: must be a positive m/z (got "0x10")']);
  });
});

describe('output flags', () => {
  it('an empty --write is refused', () => {
    expect(issuesOf(parseTuningArgs([DEMO, '--scan', 'source.extraction.delay_ns=100:200:3', '--write', '']))).toEqual(['--write: needs a file name (got an empty one)']);
    expect(issuesOf(parseTuningArgs(['merge', 'a.json', '--write', '  ']))).toEqual(['--write: needs a file name (got an empty one)']);
  });
  it('conflicting output formats are refused, in plain runs and subcommands; a repeated one is harmless', () => {
    expect(issuesOf(parseArgs([DEMO, '--json', '--csv']))).toEqual(['--csv: conflicts with --json: give one output format (--json or --csv)']);
    expect(issuesOf(parseTuningArgs(['merge', 'a.json', '--csv', '--json']))).toEqual(['--json: conflicts with --csv: give one output format (--json or --csv)']);
    expect(parseArgs([DEMO, '--json', '--json']).ok).toBe(true);
  });
  it('a single-valued flag given twice is refused instead of silently taking the last', () => {
    expect(issuesOf(parseTuningArgs([DEMO, '--scan', 'source.extraction.delay_ns=100:200:3', '--write', 'a.json', '--write', 'b.json']))).toEqual(['--write: is given twice: give it once']);
    expect(issuesOf(parseArgs([DEMO, '--ions', '100', '--ions', '200']))).toEqual(['--ions: is given twice: give it once']);
    // --scan and --tune add up.
    expect(parseTuningArgs([DEMO, '--scan', 'source.extraction.delay_ns=100:200:3', '--scan', 'source.repeller.potential_V=19000:21000:3']).ok).toBe(true);
  });
});

describe('one message per problem', () => {
  it('an unknown objective gives only its own message', () => {
    expect(issuesOf(parseTuningArgs([DEMO, '--tune', 'source.extraction.delay_ns', '--objective', 'best']))).toEqual([
      '--objective: unknown objective "best" (choose max-r-at-mz, max-min-r-over-range, min-fwhm)',
    ]);
    expect(issuesOf(parseTuningArgs([DEMO, '--tune', 'source.extraction.delay_ns', '--objective', 'best', '--target-mz', '1336.70']))).toHaveLength(1);
  });
  it('a bad --target-mz or --range is not also reported missing', () => {
    expect(issuesOf(parseTuningArgs([DEMO, '--tune', 'source.extraction.delay_ns', '--objective', 'max-r-at-mz', '--target-mz', 'abc']))).toEqual(['--target-mz: must be a positive m/z (got "abc")']);
    expect(issuesOf(parseTuningArgs([DEMO, '--tune', 'source.extraction.delay_ns', '--objective', 'max-min-r-over-range', '--range', '5:1']))).toHaveLength(1);
    expect(issuesOf(parseTuningArgs([DEMO, '--tune', 'source.extraction.delay_ns', '--target-mz']))).toEqual(['--target-mz: needs a value (see --help)']);
  });
  it('every problem of one command line is still listed, each once', () => {
    const list = issuesOf(parseTuningArgs([DEMO, '--scan', 'x', '--ions', 'many', '--json', '--csv', '--bogus']));
    expect(list.map((l) => l.split(':')[0])).toEqual(['--scan', '--ions', '--csv', '--bogus']);
  });
});

describe('an empty shard', () => {
  it('warns (and a shard that holds points does not)', () => {
    expect(emptyShardWarning({ index: 3, count: 4 }, 3, 0)).toBe(
      "warning: --shard 4/4: this share holds none of the scan's 3 points (at most 3 shards hold points); its output lists no points",
    );
    expect(emptyShardWarning({ index: 2, count: 4 }, 3, 1)).toBeNull();
    expect(emptyShardWarning(undefined, 3, 3)).toBeNull();
  });
});
