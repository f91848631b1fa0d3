/**
 * `merge` validates every shard before joining: real shards of a scan merge into the full scan, and
 * corrupted ones (property-based, fast-check) are refused with one line per problem naming the file
 * and the JSON path, nothing on stdout and nothing written.
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { main, type CliIo } from '../../src/cli';
import { validateScanDocument, validateScanText } from '../../src/tuning/mergeValidation';
import { inProcessEngine } from './fixtures';

const DEMO = 'presets/demo-linear-delayed.json';
const SCAN = ['--scan', 'source.extraction.delay_ns=180:240:5', '--target-mz', '1336.7008', '--ions', '200'];

function harness() {
  let out = '';
  let err = '';
  const files = new Map<string, string>();
  const io: CliIo = {
    out: (t) => void (out += t),
    err: (t) => void (err += t),
    readFile: (p) => {
      const text = files.get(p);
      if (text !== undefined) return text;
      return readFileSync(p, 'utf8');
    },
    fileExists: (p) => files.has(p),
    writeFile: (p, text) => void files.set(p, text),
  };
  const engine = { createEngine: () => ({ api: inProcessEngine(1), close: () => undefined }) };
  return {
    files,
    run: async (argv: string[]) => {
      out = '';
      err = '';
      const code = await main(argv, io, engine);
      return { code, out, err };
    },
  };
}

const h = harness();
let shards: any[] = [];
let full = '';

beforeAll(async () => {
  for (const i of [1, 2]) expect((await h.run([DEMO, ...SCAN, '--shard', `${i}/2`, '--write', `s${i}.json`])).code).toBe(0);
  shards = [1, 2].map((i) => JSON.parse(h.files.get(`s${i}.json`)!));
  full = (await h.run([DEMO, ...SCAN, '--json'])).out;
});

const clone = <T>(x: T): T => JSON.parse(JSON.stringify(x)) as T;

describe('merge validation', () => {
  it('real shards pass and merge into the full scan; a byte-order mark is accepted', async () => {
    for (const s of shards) expect(validateScanDocument(s, 'x').ok).toBe(true);
    h.files.set('bom.json', '\uFEFF' + h.files.get('s1.json'));
    const merged = await h.run(['merge', 'bom.json', 's2.json', '--json']);
    expect(merged.err).toBe('');
    expect(JSON.parse(merged.out)).toEqual(JSON.parse(full));
  });

  it('the two cases of the report: a string flight time, and a value that is not on the axis', () => {
    const text = clone(shards[0]);
    text.points[0].species[1].flightTime_ns = '22967.5';
    expect(validateScanDocument(text, 's1.json')).toEqual({ ok: false, issues: [{ path: 's1.json: points[0].species[1].flightTime_ns', message: expect.stringMatching(/expected number/) }] });
    const off = clone(shards[0]);
    off.points[1].values[0] = 201;
    expect(validateScanDocument(off, 's1.json')).toEqual({
      ok: false,
      issues: [{ path: 's1.json: points[1].values[0]', message: 'is 201, but point 2 of the scan has source.extraction.delay_ns = 210' }],
    });
    expect(validateScanText('{', 'b.json')).toMatchObject({ ok: false, issues: [{ path: 'b.json: (file)', message: expect.stringMatching(/^is not valid JSON/) }] });
  });

  type Doc = any;
  const corruptions: fc.Arbitrary<{ name: string; apply: (docs: Doc[]) => void }> = fc.oneof(
    fc.record({ f: fc.nat(1), p: fc.nat(2), s: fc.nat(3), key: fc.constantFrom('flightTime_ns', 'fwhm_ns', 'resolvingPower', 'transmission', 'mz', 'sdFlightTime_ns'), v: fc.constantFrom('12.5', true, [], {}, 'NaN') }).map(
      ({ f, p, s, key, v }) => ({ name: `species ${key} = ${JSON.stringify(v)}`, apply: (d: Doc[]) => void (d[f].points[p % d[f].points.length].species[s][key] = v) }),
    ),
    fc.record({ f: fc.nat(1), p: fc.nat(2), delta: fc.double({ min: 1e-6, max: 50, noNaN: true }), sign: fc.constantFrom(-1, 1) }).map(({ f, p, delta, sign }) => ({
      name: 'value off the axis',
      apply: (d: Doc[]) => void (d[f].points[p % d[f].points.length].values[0] += sign * delta),
    })),
    fc.record({ f: fc.nat(1), digest: fc.stringMatching(/^[0-9a-f]{8}$/) }).map(({ f, digest }) => ({
      name: 'other preset fingerprint',
      apply: (d: Doc[]) => void (d[f].presetDigest = digest === d[f].presetDigest ? (digest === '00000000' ? '00000001' : '00000000') : digest),
    })),
    fc.record({ f: fc.nat(1), digest: fc.constantFrom('', 'xyz', 12345678, null) }).map(({ f, digest }) => ({ name: 'bad fingerprint', apply: (d: Doc[]) => void (d[f].presetDigest = digest) })),
    fc.record({ f: fc.nat(1), seed: fc.integer({ min: 2, max: 1000 }) }).map(({ f, seed }) => ({ name: 'other seed', apply: (d: Doc[]) => void (d[f].seed = seed) })),
    fc.record({ f: fc.nat(1), seed: fc.constantFrom(-1, 1.5, '1', null) }).map(({ f, seed }) => ({ name: 'bad seed', apply: (d: Doc[]) => void (d[f].seed = seed) })),
    fc.nat(1).map((f) => ({ name: 'duplicate point', apply: (d: Doc[]) => void d[f].points.push(clone(d[f].points[0])) })),
    fc.record({ f: fc.nat(1), p: fc.nat(2) }).map(({ f, p }) => ({ name: 'missing point', apply: (d: Doc[]) => void d[f].points.splice(p % d[f].points.length, 1) })),
    fc.record({ f: fc.nat(1), p: fc.nat(2), index: fc.integer({ min: -2, max: 8 }) }).map(({ f, p, index }) => ({
      name: `index ${index}`,
      apply: (d: Doc[]) => {
        const point = d[f].points[p % d[f].points.length];
        point.index = point.index === index ? index + 1 : index;
      },
    })),
    fc.record({ f: fc.nat(1), key: fc.constantFrom('format', 'version', 'presetDigest', 'ions', 'seed', 'objective', 'axes', 'totalPoints', 'shard', 'points') }).map(({ f, key }) => ({
      name: `no ${key}`,
      apply: (d: Doc[]) => void delete d[f][key],
    })),
    fc.record({ f: fc.nat(1), p: fc.nat(2), key: fc.constantFrom('index', 'values', 'species', 'objective') }).map(({ f, p, key }) => ({
      name: `point without ${key}`,
      apply: (d: Doc[]) => void delete d[f].points[p % d[f].points.length][key],
    })),
    fc.record({ f: fc.nat(1), where: fc.constantFrom('doc', 'point', 'species'), key: fc.constantFrom('__proto__', 'extra', 'flightTime_s') }).map(({ f, where, key }) => ({
      name: `unknown key ${key} in ${where}`,
      apply: (d: Doc[]) => {
        const node = where === 'doc' ? d[f] : where === 'point' ? d[f].points[0] : d[f].points[0].species[0];
        Object.defineProperty(node, key, { value: 1, enumerable: true, configurable: true, writable: true });
      },
    })),
    fc.record({ f: fc.nat(1), total: fc.constantFrom(4, 6, 10, 0) }).map(({ f, total }) => ({ name: `totalPoints ${total}`, apply: (d: Doc[]) => void (d[f].totalPoints = total) })),
    fc.record({ f: fc.nat(1), t: fc.constantFrom(1.5, -0.1, null) }).map(({ f, t }) => ({ name: `transmission ${t}`, apply: (d: Doc[]) => void (d[f].points[0].species[0].transmission = t) })),
    fc.record({ f: fc.nat(1), steps: fc.constantFrom(4, 6) }).map(({ f, steps }) => ({ name: `axis steps ${steps}`, apply: (d: Doc[]) => void (d[f].axes[0].steps = steps) })),
  );

  it('corrupted shards are refused with one line per problem, naming the file, and nothing is printed or written', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(corruptions, { minLength: 1, maxLength: 3 }), async (list) => {
        const docs = clone(shards);
        for (const c of list) c.apply(docs);
        h.files.set('c1.json', JSON.stringify(docs[0]));
        h.files.set('c2.json', JSON.stringify(docs[1]));
        h.files.delete('out.json');
        const r = await h.run(['merge', 'c1.json', 'c2.json', '--csv', '--write', 'out.json']);
        const names = list.map((c) => c.name).join(' + ');
        expect(r.code, names).toBe(2);
        expect(r.out, names).toBe('');
        expect(h.files.has('out.json'), names).toBe(false);
        const lines = r.err.trimEnd().split('\n');
        for (const line of lines) expect(line, names).toMatch(/^(c[12]\.json|merge)(: \S[^\n]*)?: \S/);
        expect(new Set(lines).size, names).toBe(lines.length);
      }),
      { numRuns: 150, seed: 18 },
    );
  });
});
