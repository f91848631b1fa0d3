/** The CLI's --measured run: peaks, matches, fit, the JSON section and the fitted preset written as a new file. */
import { describe, expect, it } from 'vitest';
import { main, type CliIo } from '../../src/cli';
import { expectedSpectrum, noisySpectrum, testPreset } from '../measured/recoveryFixture';

const truth = testPreset({ timeOffset_ns: 42, driftLength_mm: 1201.5, pulseWidth_ns: 1.6 });
const measured = noisySpectrum(expectedSpectrum(truth, 2000, 100_000), 3);
const csv = 'time_us;counts\n' + Array.from(measured.x).map((t, i) => `${(t * 1e6).toFixed(7).replace('.', ',')};${measured.intensity[i]}`).join('\n') + '\n';
const nominal = JSON.stringify(testPreset(), null, 2);

async function run(argv: string[], files: Record<string, string> = {}) {
  let out = '';
  let err = '';
  const written: Record<string, string> = {};
  const io: CliIo = {
    out: (t) => void (out += t),
    err: (t) => void (err += t),
    readFile: (p) => {
      if (p in files) return files[p];
      throw Object.assign(new Error('missing'), { code: 'ENOENT' });
    },
    writeFile: (p, text, overwrite) => {
      if (!overwrite && (p in files || p in written)) throw Object.assign(new Error('exists'), { code: 'EEXIST' });
      written[p] = text;
    },
    fileExists: (p) => p in files || p in written,
  };
  const code = await main(argv, io);
  return { code, out, err, written };
}

const files = { 'nominal.json': nominal, 'run.csv': csv };
const FIT = 'acquisition.timeOffset_ns,drift.length_mm=1190:1210,acquisition.pulseWidth_ns=0:5';

describe('npm run sim -- <preset> --measured', () => {
  it('--json adds measured { peaks, matches, fit { parameters, residuals_ppm, covariance } } and --write saves a new preset', async () => {
    const r = await run(['nominal.json', '--measured', 'run.csv', '--fit', FIT, '--write', 'fitted.json', '--json', '--ions', '6000'], files);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.species).toHaveLength(3); // the plain run's keys are all there
    const m = doc.measured;
    expect(m.format).toBe('text');
    expect(m.peaks).toHaveLength(3);
    expect(m.matches.map((x: { label: string }) => x.label)).toEqual(['test ion A', 'test ion B', 'test ion C']);
    const [offset, length, pulse] = m.fit.parameters;
    expect(Math.abs(offset.value - 42)).toBeLessThan(2 * offset.standardError);
    expect(Math.abs(length.value - 1201.5)).toBeLessThan(2 * length.standardError);
    expect(Math.abs(pulse.value - 1.6)).toBeLessThan(2 * pulse.standardError);
    expect(m.fit.residuals_ppm).toHaveLength(3);
    expect(m.fit.covariance).toHaveLength(3);
    expect(m.fit.covariance[0][0]).toBeCloseTo(offset.standardError ** 2, 12);
    expect(m.fit.written).toBe('fitted.json');
    const fitted = JSON.parse(r.written['fitted.json']);
    expect(fitted.acquisition.timeOffset_ns).toBe(offset.value);
    expect(fitted.drift.length_mm).toBe(length.value);
    // The fitted file is itself a valid preset that runs.
    const again = await run(['fitted.json', '--json', '--ions', '600'], { 'fitted.json': r.written['fitted.json'] });
    expect(again.code).toBe(0);
  });

  it('prints a table without --json and refuses to write over a file or the input', async () => {
    const table = await run(['nominal.json', '--measured', 'run.csv', '--ions', '3000'], files);
    expect(table.code).toBe(0);
    expect(table.out).toContain('3 peaks picked, 3 matched to species');
    const over = await run(['nominal.json', '--measured', 'run.csv', '--fit', FIT, '--write', 'nominal.json'], files);
    expect(over.code).toBe(2);
    expect(over.err).toMatch(/input preset/);
    const exists = await run(['nominal.json', '--measured', 'run.csv', '--fit', FIT, '--write', 'run.csv'], files);
    expect(exists.code).toBe(2);
    expect(exists.err).toMatch(/exists; it is not overwritten/);
    expect(exists.written).toEqual({});
  });

  it('names the problem: a file without time unit, a bad unit, an unknown path, bounds the preset refuses', async () => {
    const noUnit = await run(['nominal.json', '--measured', 'bare.txt'], { ...files, 'bare.txt': '20000 1\n20001 2\n20002 1\n' });
    expect(noUnit.code).toBe(2);
    expect(noUnit.err).toMatch(/bare.txt: the file does not state the unit .* --time-unit/);
    const badUnit = await run(['nominal.json', '--measured', 'run.csv', '--time-unit', 'ps'], files);
    expect(badUnit.err).toMatch(/--time-unit: must be one of ns, us, s/);
    const badPath = await run(['nominal.json', '--measured', 'run.csv', '--fit', 'drift.lenght_mm'], files);
    expect(badPath.code).toBe(2);
    expect(badPath.err).toMatch(/--fit: drift.lenght_mm: does not exist in the preset/);
    const badBound = await run(['nominal.json', '--measured', 'run.csv', '--fit', 'acquisition.pulseWidth_ns=-5:5'], files);
    expect(badBound.err).toMatch(/--fit: acquisition.pulseWidth_ns: lower bound -5: must be a number ≥ 0/);
    const combined = await run(['nominal.json', '--measured', 'run.csv', '--scan', 'drift.length_mm=1:2:3'], files);
    expect(combined.err).toMatch(/--scan: cannot be combined with --measured/);
  });
});
