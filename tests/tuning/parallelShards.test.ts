/**
 * A scan split into four shards run as separate CLI processes by GNU parallel (Debian package
 * `parallel`, installed by .ci/run), then merged: the merged document must equal the unsharded run.
 * This is the README's "one or more hosts" recipe on one host. Skipped, saying so, only where the
 * binary is missing on a developer's machine; under CI a missing binary is a failure.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const TSX_CLI = join(ROOT, 'node_modules/tsx/dist/cli.mjs');
const CLI = join(ROOT, 'src/cli.ts');
const PRESET = join(ROOT, 'presets/demo-linear-delayed.json');
const SCAN = ['--scan', 'source.extraction.delay_ns=180:240:6', '--target-mz', '1336.7008', '--ions', '400'];

const probe = spawnSync('parallel', ['--version'], { encoding: 'utf8' });
const hasParallel = probe.status === 0 && /GNU parallel/.test(probe.stdout);
if (!hasParallel) {
  if (process.env.CI) throw new Error('GNU parallel is missing under CI: .ci/run installs the Debian package `parallel`');
  console.warn('parallelShards.test.ts: GNU parallel not found (Debian package `parallel`); skipping the four-shard run');
}

const cli = (args: string[], cwd: string): string => execFileSync(process.execPath, [TSX_CLI, CLI, ...args], { cwd, encoding: 'utf8' });

describe('sharded scan through GNU parallel', () => {
  it.skipIf(!hasParallel)(
    'four shards run by `parallel`, merged, equal the unsharded scan',
    () => {
      const dir = mkdtempSync(join(tmpdir(), 'tof-shards-'));
      try {
        const whole = JSON.parse(cli([PRESET, ...SCAN, '--json'], dir));
        // The same command line a user types (README), each job one CLI process with its shard index.
        execFileSync(
          'parallel',
          ['--will-cite', '--halt', 'now,fail=1', '-j', '2', process.execPath, TSX_CLI, CLI, PRESET, ...SCAN, '--shard', '{}/4', '--write', 'part{}.json', ':::', '1', '2', '3', '4'],
          { cwd: dir, encoding: 'utf8' },
        );
        const parts = readdirSync(dir).filter((f) => /^part\d\.json$/.test(f)).sort();
        expect(parts).toEqual(['part1.json', 'part2.json', 'part3.json', 'part4.json']);
        const merged = JSON.parse(cli(['merge', ...parts, '--json'], dir));
        expect(whole.totalPoints).toBe(6);
        expect(merged).toEqual(whole);
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
    180_000,
  );
});
