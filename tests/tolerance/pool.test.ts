/**
 * The tolerance analysis on the task pool: the same numbers for any pool size, shards that join to
 * the unsharded run, and every engine (closed form, integrator) giving the same sensitivities.
 */
import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli';
import { inProcessPool } from '../../src/tuning/pool';
import { engineTasks } from '../../src/tuning/tasks';
import { toleranceWith } from '../../src/tolerance/analysis';
import { driftDominated, runTolerance, valid } from './helpers';

const withTolerances = () =>
  valid({
    ...driftDominated(),
    ions: { ...driftDominated().ions, startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 200 } },
    acquisition: { pulseWidth_ns: 1, shots: 20, sampleInterval_ns: 0.5 },
    tolerances: { supplies: { repeller: { drift_ppm: 3, ripple_ppm: 5 } }, timing: { triggerJitter_ns: 0.3 }, temperature: { flightTube_K: 0.2 }, detectorTilt_mrad: 2 },
  });

describe('tolerance analysis on a pool', () => {
  it('gives identical results for one lane and for three', async () => {
    const preset = withTolerances();
    const a = await runTolerance({ preset, draws: 24 }, 1);
    const b = await runTolerance({ preset, draws: 24 }, 3);
    expect(b).toEqual(a);
  });

  it('reports progress up to the total', async () => {
    const seen: number[] = [];
    let total = 0;
    await toleranceWith(inProcessPool(engineTasks, 2), { preset: withTolerances(), draws: 10 }, (p) => {
      seen.push(p.done);
      total = p.total;
    });
    expect(seen[seen.length - 1]).toBe(total);
    expect(seen).toEqual([...seen].sort((x, y) => x - y));
  });

  it('the integrator engine gives the closed form sensitivities', async () => {
    const exact = await runTolerance({ preset: withTolerances() });
    const integrated = await runTolerance({ preset: valid({ ...withTolerances(), run: { ...withTolerances().run, engine: 'integrator' } }) });
    for (let k = 0; k < exact.sensitivities.length; k++) {
      for (let s = 0; s < exact.species.length; s++) {
        const a = exact.sensitivities[k].species[s].massShift_ppm_per_unit!;
        const b = integrated.sensitivities[k].species[s].massShift_ppm_per_unit!;
        expect(Math.abs(a - b)).toBeLessThan(1e-5 * Math.max(1, Math.abs(a)));
      }
    }
  });
});

describe('CLI --tolerance', () => {
  const files = new Map<string, string>();
  const io = () => {
    const out: string[] = [];
    const err: string[] = [];
    return {
      out,
      err,
      io: {
        out: (t: string) => void out.push(t),
        err: (t: string) => void err.push(t),
        readFile: (p: string) => {
          const t = files.get(p);
          if (t === undefined) throw Object.assign(new Error('missing'), { code: 'ENOENT' });
          return t;
        },
        writeFile: (p: string, t: string) => void files.set(p, t),
        fileExists: (p: string) => files.has(p),
      },
    };
  };
  const engine = { createToleranceEngine: () => ({ tolerance: (r: Parameters<typeof toleranceWith>[1]) => toleranceWith(inProcessPool(engineTasks, 2), r), close: () => {} }) };
  files.set('t.json', JSON.stringify(withTolerances()));

  it('prints the sensitivity table and the budget', async () => {
    const c = io();
    expect(await main(['t.json', '--tolerance', '--target-ppm', '2'], c.io, engine)).toBe(0);
    const text = c.out.join('');
    expect(text).toMatch(/Sensitivities/);
    expect(text).toMatch(/Budget: target 2 ppm/);
    expect(text).toMatch(/repeller supply drift/);
    expect(text).toMatch(/verify/);
  });

  it('--json adds tolerance { sensitivities, budget, monteCarlo }; --csv gives one row per parameter and species', async () => {
    const c = io();
    expect(await main(['t.json', '--tolerance', '--draws', '8', '--json'], c.io, engine)).toBe(0);
    const doc = JSON.parse(c.out.join(''));
    expect(Object.keys(doc.tolerance)).toEqual(expect.arrayContaining(['sensitivities', 'budget', 'monteCarlo']));
    expect(doc.species.length).toBe(2);
    expect(doc.tolerance.sensitivities[0].species[0]).toHaveProperty('massShift_ppm_per_unit');
    expect(doc.tolerance.monteCarlo.species[0].massError_ppm).toHaveProperty('p95');
    const d = io();
    expect(await main(['t.json', '--tolerance', '--csv'], d.io, engine)).toBe(0);
    const lines = d.out.join('').trim().split('\n');
    expect(lines[0].split(',')).toContain('massShift_ppm_per_unit');
    expect(lines.length - 1).toBe(doc.tolerance.sensitivities.length * 2);
  });

  it('shards joined give the unsharded Monte Carlo', async () => {
    const full = io();
    expect(await main(['t.json', '--tolerance', '--draws', '9', '--json'], full.io, engine)).toBe(0);
    for (const k of [1, 2, 3]) {
      const c = io();
      expect(await main(['t.json', '--tolerance', '--draws', '9', '--shard', `${k}/3`, '--write', `part${k}.json`], c.io, engine)).toBe(0);
    }
    const joined = io();
    expect(await main(['t.json', '--tolerance', '--draws', '9', '--json', '--join', 'part1.json', 'part2.json', 'part3.json'], joined.io, engine)).toBe(0);
    const a = JSON.parse(full.out.join('')).tolerance.monteCarlo;
    const b = JSON.parse(joined.out.join('')).tolerance.monteCarlo;
    expect(b.perDraw).toEqual(a.perDraw);
    expect(b.species).toEqual(a.species);
    const missing = io();
    expect(await main(['t.json', '--tolerance', '--draws', '9', '--join', 'part1.json', 'part2.json'], missing.io, engine)).toBe(2);
    expect(missing.err.join('')).toMatch(/--join: 3 of 9 draws are missing/);
  });

  it('bad arguments give one line each and exit 2', async () => {
    const c = io();
    expect(await main(['t.json', '--tolerance', '--draws', '-3', '--target-ppm', '0', '--shard', '2/1'], c.io, engine)).toBe(2);
    const lines = c.err.join('').trim().split('\n');
    expect(lines.slice(0, 3).map((l) => l.split(':')[0])).toEqual(['--draws', '--target-ppm', '--shard']);
  });
});
