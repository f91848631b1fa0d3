/**
 * A split run (src/ui/engine/splitRun.ts over src/simulation/runChunks.ts) in the setups the first
 * bit-identity tests (runChunks.test.ts) leave out: a rising extraction pulse through a solved
 * mirror, the integrator everywhere through a solved mirror, two species of one charge-to-mass
 * ratio sharing a transfer map, more workers than species, a species too small to decide its map,
 * ion counts not divisible by the worker count, decay in flight and ion load. Each case compares
 * every per-ion array of the finished trace with simulate() on the same preset, ions and seed, and
 * the whole run output (report included) with runRequest. The reference is the unsplit run: a
 * split is an engineering device and must not change a number (common practice, no source).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { TraceResult } from '../../src/ions/ensemble';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { formatMirrorMap } from '../../src/physics/solvedMirrorMap';
import { chunkCount, fitRunMap, mergeMapFits, traceRunChunk } from '../../src/simulation/runChunks';
import type { RunOutput, RunRequest } from '../../src/simulation/runContract';
import { runRequest } from '../../src/simulation/runOutput';
import { simulate } from '../../src/simulation/run';
import { chargeToMassIn } from '../../src/physics/regions/plan';
import { traceEnsemble } from '../../src/physics/regions/driver';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import { compilePreset } from '../../src/presets/compile';
import { shouldSplit, splitRun, type SplitRunLane } from '../../src/ui/engine/splitRun';

const PRESETS = new URL('../../presets/', import.meta.url);
function demo(file: string, edit?: (doc: Record<string, any>) => void): Preset {
  const doc = JSON.parse(readFileSync(new URL(file, PRESETS), 'utf8')) as Record<string, any>;
  edit?.(doc);
  const loaded = parsePresetText(JSON.stringify(doc));
  if (!loaded.ok) throw new Error(`${file} invalid: ${JSON.stringify(loaded)}`);
  return loaded.value;
}

const bits = (a: Float64Array | Uint8Array): string => Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('hex');
/** The first ion whose value differs in its bits (-1: none), so a failure names an ion, not two hex dumps. */
function firstDifference(a: Float64Array | Uint8Array, b: Float64Array | Uint8Array): number {
  if (a.length !== b.length) return -2;
  const x = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  const y = new Uint8Array(b.buffer, b.byteOffset, b.byteLength);
  for (let k = 0; k < x.length; k++) if (x[k] !== y[k]) return Math.floor(k / a.BYTES_PER_ELEMENT);
  return -1;
}
const withoutClock = (o: RunOutput) => ({ ...o, elapsed_ms: 0 });
const ARRAYS = ['flightTime_s', 'fate', 'finalSpeed_m_per_s', 'weight', 'detectorX_m', 'detectorY_m'] as const;

/** In-process lanes; the finishing lane keeps the trace it finished (after the detector plane, ion load and decays). */
function lanes(n: number, finished: { trace?: TraceResult }): SplitRunLane[] {
  return Array.from({ length: n }, () => ({
    traceRunChunk: async (r, a, b, m) => traceRunChunk(r, a, b, m),
    fitRunMap: async (r, p, k) => fitRunMap(r, p, k),
    finishRun: async (r, t, m) => {
      finished.trace = t;
      return runRequest(r, undefined, t, m);
    },
  }));
}

/** Split over `workers` lanes and check the result against the unsplit run, array by array and the whole output. */
async function expectSplitEqualsWhole(request: RunRequest, workers: number): Promise<RunOutput> {
  expect(shouldSplit(request, workers), 'the case is split at all').toBe(true);
  const finished: { trace?: TraceResult } = {};
  const split = await splitRun(lanes(workers, finished), request);
  const whole = simulate(request.preset, { ions: request.ions, seed: request.seed });
  expect(finished.trace).toBeDefined();
  for (const key of ARRAYS) expect(firstDifference(finished.trace![key], whole.trace[key]), key).toBe(-1);
  const wholeOut = runRequest(request);
  expect(withoutClock(split)).toEqual(withoutClock(wholeOut));
  return split;
}

const gridless = (edit?: (d: Record<string, any>) => void) => demo('demo-gridless-mirror.json', edit);
const delay = (d: Record<string, any>) => d.source.extraction.delay_ns as number;

describe('a rising extraction pulse through a solved mirror', () => {
  const rises: Array<[string, (d: Record<string, any>) => unknown]> = [
    ['exponential, 12 ns', () => ({ shape: 'exponential', timeConstant_ns: 12 })],
    ['linear ramp, 20 ns', () => ({ shape: 'linear', riseTime_ns: 20 })],
    [
      'pasted table',
      (d) => ({
        shape: 'table',
        repeller: [
          [delay(d), 4700],
          [delay(d) + 8, 5400],
          [delay(d) + 25, 5800],
        ],
      }),
    ],
  ];
  for (const [name, rise] of rises) {
    it(`${name}: split over 3 workers equals the unsplit run`, async () => {
      const preset = gridless((d) => {
        d.source.extraction.rise = rise(d);
      });
      const out = await expectSplitEqualsWhole({ preset, ions: 6_001, seed: 21 }, 3);
      // The case is what it says: the map carried ions (else it tests the traced path only).
      expect(out.report.solvedMirrorMap!.mapped).toBeGreaterThan(0);
    });
  }
});

describe("runs whose ions share the integrator's first-step memory", () => {
  // The adaptive integrator starts each solve from the previous ion's first step, so ion i's
  // numbers depend on the ions before it in the same pass: a chunk starting afresh would differ.
  const profile = demo('demo-reflectron-single.json', (d) => {
    d.source.extraction = { mode: 'delayed', delay_ns: 406.2, rise: { shape: 'exponential', timeConstant_ns: 20 } };
    d.mirror = { type: 'profile', depth_mm: 350, profile: { kind: 'polynomial', coefficients_V: [26000, 3000] }, returnLength_mm: 500 };
  });
  const integrated = demo('demo-linear-delayed.json', (d) => {
    d.run.engine = 'integrator';
  });
  const integratedMirror = gridless((d) => {
    d.run.engine = 'integrator';
  });
  it('are not split, and a chunk of one is refused with the reason', () => {
    for (const preset of [profile, integrated, integratedMirror]) {
      expect(shouldSplit({ preset, ions: 20_000 }, 2)).toBe(false);
      expect(() => traceRunChunk({ preset, ions: 4_000 }, 2_000, 4_000)).toThrow(/first step/);
    }
    // A pasted-table profile is a stack of uniform stages (closed form): split as usual with a rising pulse.
    const table = demo('demo-reflectron-single.json', (d) => {
      d.source.extraction = { mode: 'delayed', delay_ns: 406.2, rise: { shape: 'exponential', timeConstant_ns: 20 } };
      d.mirror = { type: 'profile', depth_mm: 350, profile: { kind: 'table', points: [[100, 24000], [350, 29222]] }, returnLength_mm: 500 };
    });
    expect(shouldSplit({ preset: table, ions: 20_000 }, 2)).toBe(true);
  });
  it('control: split anyway (chunks traced directly), they would differ from the unsplit run', () => {
    for (const preset of [profile, integrated]) {
      const ions = 4_000;
      const compiled = compilePreset(preset);
      const ens = samplePopulation({ ...compiled.population, totalIons: ions, seed: 5 });
      const whole = allocateTraceResult(ions);
      traceEnsemble(compiled.model, ens, whole);
      const parts = allocateTraceResult(ions);
      traceEnsemble(compiled.model, ens, parts, { from: 0, to: 2_000, ions });
      traceEnsemble(compiled.model, ens, parts, { from: 2_000, to: ions, ions });
      expect(firstDifference(parts.flightTime_s, whole.flightTime_s)).toBeGreaterThanOrEqual(2_000);
    }
  });
});

describe('species sharing one charge-to-mass ratio share one transfer map', () => {
  // The same formula twice under two labels and abundances: one q/m, one map, fitted from both species' ions in order.
  const twin = gridless((d) => {
    const [a, b] = d.ions.species;
    d.ions.species = [a, { ...a, label: 'kelvatide-10 again (invented)', abundance: 0.5 }, b];
  });
  // m/z 1000 at z = 1 and m/z 1000 at z = 2 (2000 u): one q/m; a third species of another q/m between them.
  const mz = gridless((d) => {
    d.ions.species = [
      { label: 'M, z = 1', mz: 1000, charge: 1, abundance: 1 },
      { label: 'other', mz: 1500, charge: 1, abundance: 1 },
      { label: '2M, z = 2', mz: 1000, charge: 2, abundance: 1 },
    ];
    d.analysis.calibrantMz = [1000, 1500];
  });

  // The first copy too small to decide the map alone: its q/m's map goes on learning from the second copy's ions.
  const twinSmallFirst = gridless((d) => {
    const [a, b] = d.ions.species;
    d.ions.species = [{ ...a, abundance: 0.03 }, { ...a, label: 'kelvatide-10 again (invented)', abundance: 1 }, b];
  });

  it('a first copy too small for the map alone: the fit runs on into the second copy, and the split still equals the unsplit run', async () => {
    const request: RunRequest = { preset: twinSmallFirst, ions: 8_000, seed: 32 };
    const fit = fitRunMap(request)!;
    const out = await expectSplitEqualsWhole(request, 3);
    const start = out.speciesStart;
    // The fit traced all of the first copy and the start of the second, one range each.
    const ranges = fit.fitted.map((c) => [c.from, c.to]);
    expect(ranges[0]).toEqual([start[0], start[1]]);
    expect(ranges[1][0]).toBe(start[1]);
    expect(ranges[1][1]).toBeLessThan(start[2]);
    expect(out.report.solvedMirrorMap!.species).toHaveLength(2);
    expect(out.report.solvedMirrorMap!.species[0].mapped + out.report.solvedMirrorMap!.species[0].traced).toBe(start[2] - start[0]);
  });

  for (const [name, preset, groups] of [
    ['same formula twice (different labels and abundances)', twin, 2],
    ['M at z = 1 and 2M at z = 2, another species between', mz, 2],
  ] as const) {
    it(`${name}: split equals unsplit; counts per q/m add up; each q/m fitted once`, async () => {
      const request: RunRequest = { preset, ions: 9_000, seed: 31 };
      const out = await expectSplitEqualsWhole(request, 3);
      const map = out.report.solvedMirrorMap!;
      // One report entry per q/m, in the order the run meets them.
      expect(map.species).toHaveLength(groups);
      const qm = map.species.map((s) => s.qOverM_C_per_kg);
      expect(new Set(qm).size).toBe(groups);
      // Its ions are those of every species of that q/m (counted from the ensemble's species bounds).
      const unsplit = simulate(preset, { ions: request.ions, seed: request.seed, analysis: false });
      const model = unsplit.compiled.model;
      const ens = unsplit.ensemble;
      const perGroup = new Map<number, number>();
      const start = out.speciesStart;
      const speciesQm = ens.species.map((sp) => chargeToMassIn(model, sp.mz));
      // The case is what it says: two species, one q/m (e·z/m = e/(m/z)).
      expect(new Set(speciesQm).size).toBe(ens.species.length - 1);
      for (let s = 0; s < ens.species.length; s++) perGroup.set(speciesQm[s], (perGroup.get(speciesQm[s]) ?? 0) + start[s + 1] - start[s]);
      for (const s of map.species) expect(s.mapped + s.traced, `q/m ${s.qOverM_C_per_kg}`).toBe(perGroup.get(s.qOverM_C_per_kg));
      expect(map.mapped + map.traced).toBe(request.ions);
      // Fitting split over parts covers each q/m once: every part's report names distinct q/m, together all of them.
      for (const parts of [2, 3, 4]) {
        const fits = Array.from({ length: parts }, (_, k) => fitRunMap(request, k, parts)!);
        const named = fits.flatMap((f) => f.report.species.map((s) => s.qOverM_C_per_kg));
        expect(named.slice().sort()).toEqual(qm.slice().sort());
        const whole = fitRunMap(request)!;
        const joined = mergeMapFits(fits);
        expect(joined.report).toEqual(whole.report);
        expect(bits(joined.snapshot.values)).toBe(bits(whole.snapshot.values));
        expect(joined.fitted.map((c) => [c.from, c.to, bits(c.flightTime_s)])).toEqual(whole.fitted.map((c) => [c.from, c.to, bits(c.flightTime_s)]));
      }
    });
  }
});

describe('splits of other shapes', () => {
  it('more workers than species (5 lanes, 2 species, 11 111 ions)', async () => {
    const request: RunRequest = { preset: gridless(), ions: 11_111, seed: 41 };
    expect(chunkCount(11_111, 5)).toBe(5);
    await expectSplitEqualsWhole(request, 5);
  });

  it('a species with fewer ions than its map needs: its ions all traced, the report says they ran out', async () => {
    const preset = gridless((d) => {
      d.ions.species[1].abundance = 0.02; // about 100 of 6000 ions: too few to train and validate a map
    });
    const request: RunRequest = { preset, ions: 6_007, seed: 42 };
    const out = await expectSplitEqualsWhole(request, 3);
    const map = out.report.solvedMirrorMap!;
    const small = map.species[1];
    expect(out.speciesStart[2] - out.speciesStart[1]).toBeLessThan(300);
    expect(small.mapped).toBe(0);
    expect(small.traced).toBe(out.speciesStart[2] - out.speciesStart[1]);
    expect(formatMirrorMap(map)).toMatch(/too few ions to decide the transfer map/);
    expect(map.species[0].mapped).toBeGreaterThan(0);
  });

  it('ion counts not divisible by the worker count (7 919 ions over 3, and over 2 with a rising pulse)', async () => {
    await expectSplitEqualsWhole({ preset: gridless(), ions: 7_919, seed: 43 }, 3);
    const pulse = demo('demo-linear-delayed.json', (d) => {
      d.source.extraction.rise = { shape: 'linear', riseTime_ns: 15 };
    });
    await expectSplitEqualsWhole({ preset: pulse, ions: 7_919, seed: 44 }, 2);
  });

  it('decay in flight (fragments reflectron demo with a rising pulse): products and report as unsplit', async () => {
    const preset = demo('demo-fragments-reflectron.json', (d) => {
      d.source.extraction.rise = { shape: 'exponential', timeConstant_ns: 10 };
    });
    const out = await expectSplitEqualsWhole({ preset, ions: 6_000, seed: 45 }, 3);
    expect(out.products).toBeDefined();
  });

  it('decay in flight through the solved mirror', async () => {
    const preset = gridless((d) => {
      const frag = JSON.parse(readFileSync(new URL('demo-fragments-reflectron.json', PRESETS), 'utf8')) as Record<string, any>;
      d.ions.species[0].decay = frag.ions.species[0].decay;
    });
    const out = await expectSplitEqualsWhole({ preset, ions: 6_000, seed: 46 }, 2);
    expect(out.products).toBeDefined();
  });

  // Space charge needs a step extraction and a gridded or no mirror (the preset checks refuse it
  // otherwise), i.e. a closed-form run, which is not split: only detector modes reach a split run.
  it('ion load (analog detector) through the solved mirror', async () => {
    const preset = gridless((d) => {
      d.ionLoad = { ionsPerShot: 20, detection: { mode: 'analog' } };
    });
    const out = await expectSplitEqualsWhole({ preset, ions: 4_000, seed: 48 }, 2);
    expect(out.report.ionLoad).toBeDefined();
  });

  it('ion load (counting detector) with a rising pulse', async () => {
    const preset = demo('demo-linear-delayed.json', (d) => {
      d.source.extraction.rise = { shape: 'exponential', timeConstant_ns: 12 };
      d.ionLoad = { ionsPerShot: 20, detection: { mode: 'counting', deadTime_ns: 3 } };
    });
    const out = await expectSplitEqualsWhole({ preset, ions: 6_000, seed: 47 }, 2);
    expect(out.report.ionLoad).toBeDefined();
  });
});
