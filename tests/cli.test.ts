import { describe, expect, it } from 'vitest';
import { main, type CliIo } from '../src/cli';
import { readFileSync } from 'node:fs';

function run(argv: string[], files: Record<string, string> = {}) {
  let out = '';
  let err = '';
  const io: CliIo = {
    out: (t) => void (out += t),
    err: (t) => void (err += t),
    readFile: (p) => {
      if (p in files) return files[p];
      return readFileSync(p, 'utf8');
    },
  };
  const code = main(argv, io);
  return { code, out, err };
}

describe('CLI', () => {
  it('--json prints one object with the per-species keys and fate counts', () => {
    const r = run(['presets/demo-linear-delayed.json', '--json', '--ions', '2000', '--seed', '3']);
    expect(r.code).toBe(0);
    const lines = r.out.trim().split('\n');
    expect(lines).toHaveLength(1);
    const doc = JSON.parse(lines[0]);
    expect(doc.species.length).toBe(4);
    for (const s of doc.species) {
      for (const key of ['mz', 'charge', 'flightTime_ns', 'fwhm_ns', 'resolvingPower', 'transmission', 'fates']) expect(s).toHaveProperty(key);
      expect(s.transmission).toBeGreaterThanOrEqual(0);
      expect(s.transmission).toBeLessThanOrEqual(1);
    }
    expect(doc.seed).toBe(3);
  });
  it('same seed, same output; the table and CSV forms work', () => {
    const a = run(['presets/demo-reflectron-dual.json', '--json', '--ions', '1000']);
    const b = run(['presets/demo-reflectron-dual.json', '--json', '--ions', '1000']);
    expect(a.out).toBe(b.out);
    const table = run(['presets/demo-reflectron-single.json', '--ions', '500']);
    expect(table.out).toContain('R (spectrum)');
    expect(table.out).toContain('ideal-detector R');
    expect(table.out).toContain('mass error/ppm');
    expect(table.out).toContain('Caution');
    const csv = run(['presets/demo-reflectron-single.json', '--csv', '--ions', '500']);
    expect(csv.out.split('\n')[0]).toContain('resolvingPower');
  });
  it('a bad preset exits non-zero with one line per problem and no stack trace', () => {
    const bad = JSON.stringify({ formatVersion: 1, name: 'x', polarity: 'up', extra: 1 });
    const r = run(['bad.json'], { 'bad.json': bad });
    expect(r.code).not.toBe(0);
    const lines = r.err.trim().split('\n');
    expect(lines.length).toBeGreaterThan(3);
    for (const line of lines) expect(line).toMatch(/^bad\.json: \S/);
    expect(r.err).not.toMatch(/\bat .*\.ts:\d+/);
  });
  it('unreadable file and bad options', () => {
    expect(run(['does-not-exist.json']).err).toContain('cannot read the preset file (ENOENT)');
    expect(run(['presets/demo-linear-delayed.json', '--ions', '0']).err).toContain('--ions: must be an integer from 1');
    expect(run(['presets/demo-linear-delayed.json', '--frobnicate']).code).toBe(2);
    expect(run(['--help']).out).toContain('Usage');
  });
});
