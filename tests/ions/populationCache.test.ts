/**
 * The engine worker keeps the last few sampled populations (keepSampledPopulations) and hands the
 * same ensemble to the next run with the same ions. That is only right if no run changes the
 * ensemble it was given: every shipped demo (exact, pulsed, solved, fragments, isotopes) is run
 * with the cache on, and afterwards its ensemble must still equal a fresh draw bit for bit, and a
 * second run (served from the cache) must give the first run's numbers.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { afterEach, describe, expect, it } from 'vitest';
import { keepSampledPopulations, samplePopulation } from '../../src/ions/population';
import type { Ensemble } from '../../src/ions/ensemble';
import { validatePreset } from '../../src/presets/load';
import { simulate } from '../../src/simulation/run';

const IONS = 400;
const demos = readdirSync(new URL('../../presets/', import.meta.url)).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));

function load(file: string) {
  const checked = validatePreset(JSON.parse(readFileSync(new URL(`../../presets/${file}`, import.meta.url), 'utf8')));
  if (!checked.ok) throw new Error(`${file}: ${JSON.stringify(checked.issues)}`);
  return checked.value;
}

const arrays = (e: Ensemble) => [e.speciesStart, e.z0_m, e.vz0_m_per_s, e.x0_m, e.y0_m, e.vx0_m_per_s, e.vy0_m_per_s];
const bytes = (a: ArrayBufferView): Buffer => Buffer.from(a.buffer, a.byteOffset, a.byteLength);

afterEach(() => keepSampledPopulations(0));

describe('kept sampled populations', () => {
  it('hands out the same ensemble for the same spec and a new draw for another', () => {
    const spec = simulate(load('demo-linear-delayed.json'), { ions: IONS, analysis: false }).compiled.population;
    keepSampledPopulations(2);
    const a = samplePopulation(spec);
    expect(samplePopulation({ ...spec })).toBe(a);
    const other = samplePopulation({ ...spec, seed: spec.seed + 1 });
    expect(other).not.toBe(a);
    expect(samplePopulation({ ...spec, totalIons: spec.totalIons + 1 })).not.toBe(a);
    keepSampledPopulations(0);
    const fresh = samplePopulation(spec);
    expect(fresh).not.toBe(a);
    arrays(a).forEach((x, k) => expect(bytes(x).equals(bytes(arrays(fresh)[k]))).toBe(true));
  });

  it.each(demos)('%s: a run leaves its ensemble as sampled, and a run from the kept one gives the same numbers', (file) => {
    const preset = load(file);
    keepSampledPopulations(4);
    const first = simulate(preset, { ions: IONS, withSpectrum: true });
    const second = simulate(preset, { ions: IONS, withSpectrum: true });
    expect(second.ensemble).toBe(first.ensemble); // served from the cache
    keepSampledPopulations(0);
    const fresh = samplePopulation(first.compiled.population);
    arrays(first.ensemble).forEach((x, k) => expect(bytes(x).equals(bytes(arrays(fresh)[k])), `${file} ensemble array ${k}`).toBe(true));
    expect(bytes(second.trace.flightTime_s).equals(bytes(first.trace.flightTime_s))).toBe(true);
    expect(bytes(second.trace.fate).equals(bytes(first.trace.fate))).toBe(true);
    expect(JSON.stringify(second.report)).toBe(JSON.stringify(first.report));
  }, 120_000);
});
