/** The scan, tune and merge subcommands through the CLI entry point (src/cli.ts main). */
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { main, type CliIo } from '../../src/cli';
import { parsePresetText } from '../../src/presets/load';
import { inProcessEngine } from './fixtures';

const DEMO = 'presets/demo-linear-delayed.json';

function harness(files: Record<string, string> = {}) {
  let out = '';
  let err = '';
  const written = new Map<string, string>(Object.entries(files));
  const io: CliIo = {
    out: (t) => void (out += t),
    err: (t) => void (err += t),
    readFile: (p) => written.get(p) ?? readFileSync(p, 'utf8'),
    fileExists: (p) => written.has(p) || p === DEMO,
    writeFile: (p, text, overwrite) => {
      if (!overwrite && (written.has(p) || p === DEMO)) throw Object.assign(new Error('exists'), { code: 'EEXIST' });
      written.set(p, text);
    },
  };
  const engine = { createEngine: () => ({ api: inProcessEngine(2), close: () => undefined }) };
  return {
    written,
    run: async (argv: string[]) => {
      out = '';
      err = '';
      const code = await main(argv, io, engine);
      return { code, out, err };
    },
  };
}

const SCAN = ['--scan', 'source.extraction.delay_ns=180:240:4', '--target-mz', '1336.7008', '--ions', '400'];

describe('scan subcommand', () => {
  it('prints a table, JSON or CSV with per-species figures and the objective', async () => {
    const h = harness();
    const table = await h.run([DEMO, ...SCAN]);
    expect(table.code).toBe(0);
    expect(table.out).toContain('scan of source.extraction.delay_ns: 4 points');
    expect(table.out).toMatch(/best point: \d, source\.extraction\.delay_ns = /);
    const json = await h.run([DEMO, ...SCAN, '--json']);
    const doc = JSON.parse(json.out);
    expect(doc).toMatchObject({ format: 'tof-scan', totalPoints: 4, ions: 400, seed: 1, shard: null });
    expect(doc.points.map((p: { values: number[] }) => p.values[0])).toEqual([180, 200, 220, 240]);
    for (const p of doc.points) {
      expect(p.species).toHaveLength(4);
      // The target is the second species; the demo has acquisition settings, so by default the
      // objective is the R of its simulated spectrum peak.
      expect(p.objective).toBe(p.species[1].spectrumResolvingPower);
      for (const key of ['flightTime_ns', 'fwhm_ns', 'resolvingPower', 'transmission']) expect(p.species[0]).toHaveProperty(key);
    }
    expect(doc.criterion).toBe('spectrum');
    const ideal = JSON.parse((await h.run([DEMO, ...SCAN, '--json', '--ideal-r'])).out);
    expect(ideal.criterion).toBe('ideal');
    for (const p of ideal.points) expect(p.objective).toBe(p.species[1].resolvingPower);
    const csv = (await h.run([DEMO, ...SCAN, '--csv'])).out.trim().split('\n');
    expect(csv[0]).toBe(
      'point,source.extraction.delay_ns,label,mz,flightTime_ns,fwhm_ns,resolvingPower,transmission,sdFlightTime_ns,fwhmShortest_ns,resolvingPowerShortest,spectrumFwhm_ns,spectrumResolvingPower,objective',
    );
    expect(csv).toHaveLength(1 + 4 * 4);
  });

  it('shards run deterministic shares of the points, and merge joins them into the full scan', async () => {
    const h = harness();
    const full = JSON.parse((await h.run([DEMO, ...SCAN, '--json'])).out);
    for (const i of [1, 2, 3]) expect((await h.run([DEMO, ...SCAN, '--shard', `${i}/3`, '--write', `s${i}.json`])).code).toBe(0);
    const shard2 = JSON.parse(h.written.get('s2.json')!);
    expect(shard2.points.map((p: { index: number }) => p.index)).toEqual([1]);
    expect(shard2.shard).toEqual({ index: 1, count: 3 });
    const merged = await h.run(['merge', 's3.json', 's1.json', 's2.json', '--json']);
    expect(merged.code).toBe(0);
    expect(JSON.parse(merged.out)).toEqual(full);
    // A missing shard and a foreign scan are refused, naming the file or the shard.
    const missing = await h.run(['merge', 's1.json', 's3.json']);
    expect(missing.code).toBe(2);
    expect(missing.err).toMatch(/1 of 4 points are missing \(first indices 1; shard 2\/3 not given\?\)/);
    await h.run([DEMO, ...SCAN, '--seed', '9', '--shard', '2/3', '--write', 'other.json']);
    const foreign = await h.run(['merge', 's1.json', 'other.json', 's3.json']);
    expect(foreign.err).toContain('other.json: belongs to another scan than s1.json: a different seed (9 vs 1)');
    const twice = await h.run(['merge', 's1.json', 's1.json']);
    expect(twice.err).toMatch(/s1\.json: repeats point 0/);
  });

  it('a shard that holds no points runs, warns on stderr, and still merges', async () => {
    const h = harness();
    const empty = await h.run([DEMO, ...SCAN, '--shard', '5/5', '--write', 'e5.json']);
    expect(empty.code).toBe(0);
    expect(empty.err).toBe("warning: --shard 5/5: this share holds none of the scan's 4 points (at most 4 shards hold points); its output lists no points\n");
    expect(JSON.parse(h.written.get('e5.json')!).points).toEqual([]);
  });
});

describe('tune subcommand', () => {
  const TUNE = ['--tune', 'source.extraction.delay_ns=100:400', '--objective', 'max-r-at-mz', '--target-mz', '1336.7008', '--ions', '600'];

  it('prints the tuned values and writes a new preset, never over an existing file without --force', async () => {
    const h = harness();
    const r = await h.run([DEMO, ...TUNE, '--write', 'tuned.json']);
    expect(r.code).toBe(0);
    // parameter, preset, start, tuned, flatness interval
    expect(r.out).toMatch(/source\.extraction\.delay_ns\s+228\s+[\d.]+\s+[\d.]+\s+[\d.]+ … [\d.]+/);
    expect(r.out).toContain('time-lag focus');
    expect(r.out).toMatch(/objective: \d+ with the preset's settings, \d+ at the start, \d+ tuned/);
    expect(r.out).toContain('figure optimised and reported: R = t/(2·width) at m/z 1336.7008, width = 2.355 × standard deviation');
    const tuned = parsePresetText(h.written.get('tuned.json')!);
    expect(tuned.ok).toBe(true);
    const json = JSON.parse((await h.run([DEMO, ...TUNE, '--json'])).out);
    // The written value is the optimum itself, every digit (a saved method keeps what it was run with).
    if (tuned.ok && tuned.value.source.extraction.mode === 'delayed') expect(tuned.value.source.extraction.delay_ns).toBe(json.best[0]);
    // Everything else in the file is as it was.
    const before = JSON.parse(readFileSync(DEMO, 'utf8'));
    const after = JSON.parse(h.written.get('tuned.json')!);
    after.source.extraction.delay_ns = before.source.extraction.delay_ns;
    // ... except the method record saying how the value was found.
    expect(after.method.records).toHaveLength(1);
    expect(after.method.records[0]).toMatchObject({ kind: 'tune', criterion: 'spectrum', seed: 1, ions: 600, result: json.objective });
    expect(after.method.records[0].parameters[0]).toMatchObject({ path: 'source.extraction.delay_ns', min: 100, max: 400, applied: json.best[0] });
    delete after.method;
    expect(after).toEqual(before);

    const again = await h.run([DEMO, ...TUNE, '--write', 'tuned.json']);
    expect(again.code).toBe(2);
    expect(again.err).toBe('--write: tuned.json exists; it is not overwritten (add --force to replace it)\n');
    const input = await h.run([DEMO, ...TUNE, '--write', DEMO]);
    expect(input.err).toContain('is the input preset; it is not overwritten');
    expect((await h.run([DEMO, ...TUNE, '--write', 'tuned.json', '--force'])).code).toBe(0);
  });

  it("keeps the preset's own settings when the bounds hold nothing better, and says so; --allow-worse gives the search's best with a warning", async () => {
    const h = harness();
    const narrow = ['--tune', 'source.extraction.delay_ns=100:150', '--target-mz', '1336.7008', '--ions', '600'];
    const kept = await h.run([DEMO, ...narrow, '--write', 'kept.json']);
    expect(kept.code).toBe(0);
    expect(kept.out).toMatch(/recommendation: keep the preset's own settings: no setting found scores better \(preset (\d+), best found (\d+) at [\d.]+\)/);
    expect(kept.out).toContain("saved: kept.json (the preset's own values)");
    // The kept preset is the preset's own settings; the write adds only a method-record entry saying so.
    const { method, ...keptSettings } = JSON.parse(h.written.get('kept.json')!);
    expect(keptSettings).toEqual(JSON.parse(readFileSync(DEMO, 'utf8')));
    expect(method.records.at(-1).kind).toBe('tune');
    const worse = await h.run([DEMO, ...narrow, '--allow-worse', '--json']);
    const doc = JSON.parse(worse.out);
    expect(doc).toMatchObject({ recommendation: 'tuned', worseThanPreset: true, presetValues: [228] });
    expect(doc.objective).toBeLessThan(doc.presetObjective);
    const table = await h.run([DEMO, ...narrow, '--allow-worse']);
    expect(table.out).toMatch(/WARNING: as asked \(--allow-worse\), the tuned setting is shown although it scores worse than the preset's own settings/);
  });

  it('bad input names the flag', async () => {
    const h = harness();
    const cases: [string[], RegExp][] = [
      [[DEMO, '--scan', 'source.extraction.delay=0:1:2'], /^--scan source\.extraction\.delay=0:1:2: source\.extraction\.delay does not exist in the preset/],
      [[DEMO, '--scan', 'source.extraction.delay_ns=-5:10:3'], /^--scan source\.extraction\.delay_ns=-5:10:3: source\.extraction\.delay_ns = -5 is outside the allowed settings: .*≥ 0/],
      [[DEMO, '--scan', 'source.extraction.delay_ns=0:10:0'], /steps must be a whole number of points ≥ 1 \(got 0\)/],
      [[DEMO, '--scan', 'source.extraction.delay_ns=0:10'], /^--scan: expected <from>:<to>:<steps>/],
      [[DEMO, '--scan', 'source.extraction.delay_ns=0:10:3', '--objective', 'min-fwhm'], /^--target-mz: is required by --objective min-fwhm/],
      [[DEMO, '--tune', 'mirror.backPlate_V=1:2', '--target-mz', '1336.70'], /^--tune mirror\.backPlate_V: mirror\.backPlate_V does not exist/],
      [[DEMO, '--tune', 'source.extraction.delay_ns=0:100', '--objective', 'max-min-r-over-range'], /^--range: is required by --objective max-min-r-over-range/],
      [[DEMO, '--tune', 'source.extraction.delay_ns=0:100'], /^--objective: is required with --tune/],
      [[DEMO, '--tune', 'drift.potential_V', '--target-mz', '1336.70'], /no default range: give bounds as drift\.potential_V=<min>:<max>/],
      [[DEMO, '--scan', 'source.extraction.delay_ns=0:10:3', '--shard', '0/3'], /^--shard: expected i\/n with 1 ≤ i ≤ n/],
      [['merge'], /^merge: give the scan files to merge/],
      [['merge', DEMO], /is not a scan file/],
    ];
    for (const [argv, message] of cases) {
      const r = await h.run(argv);
      expect(r.code, argv.join(' ')).toBe(2);
      expect(r.err, argv.join(' ')).toMatch(message);
    }
  });
});

describe('the CLI process (worker-thread pool under tsx)', () => {
  it('gives the same scan as the in-process engine', async () => {
    const text = execFileSync('npx', ['tsx', 'src/cli.ts', DEMO, ...SCAN, '--json'], { encoding: 'utf8', timeout: 60_000 });
    const h = harness();
    const inProcess = (await h.run([DEMO, ...SCAN, '--json'])).out;
    expect(JSON.parse(text)).toEqual(JSON.parse(inProcess));
  });
});
