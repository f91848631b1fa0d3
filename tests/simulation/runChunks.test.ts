/**
 * A run split over workers (src/simulation/runChunks.ts, src/ui/engine/splitRun.ts): the chunks tile
 * the ions, join in ion order, and the split run gives bit for bit the per-ion results and the
 * report of the unsplit run, also across MessageChannel ports with the buffers transferred.
 */
import { readdirSync, readFileSync } from 'node:fs';
import * as Comlink from 'comlink';
import type { Endpoint } from 'comlink';
import { afterAll, describe, expect, it } from 'vitest';
import { hasSolvedRegion } from '../../src/physics/analyser';
import { compilePreset } from '../../src/presets/compile';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import { traceEnsemble } from '../../src/physics/regions/driver';
import { SNAPSHOT_STRIDE, SolvedMirrorMapper } from '../../src/physics/solvedMirrorMap';
import { balancedBounds, MAPPED_ION_COST, type RunMapFit } from '../../src/simulation/runChunkPlan';
import { chunkBounds, chunkCount, concatChunks, fitRunMap, hasSolvedMirror, mapFitTransferables, mergeMapFits, MIN_CHUNK_IONS, splitsOverWorkers, traceRunChunk, traceTransferables, type SplitRunTasks, type TraceChunk } from '../../src/simulation/runChunks';
import type { RunOutput, RunRequest } from '../../src/simulation/runContract';
import { runOutputTransferables, runRequest } from '../../src/simulation/runOutput';
import { shouldSplit, splitRun, type SplitRunLane } from '../../src/ui/engine/splitRun';

const PRESETS = new URL('../../presets/', import.meta.url);
function demo(file: string, edit?: (doc: Record<string, any>) => void): Preset {
  const doc = JSON.parse(readFileSync(new URL(file, PRESETS), 'utf8')) as Record<string, any>;
  edit?.(doc);
  const loaded = parsePresetText(JSON.stringify(doc));
  if (!loaded.ok) throw new Error(`${file} invalid`);
  return loaded.value;
}

const exact = demo('demo-linear-delayed.json');
const gridless = demo('demo-gridless-mirror.json');
// Back plate low enough that the whole-domain map is refused and the map is split by energy (src/physics/solvedMirrorMap.ts).
const gridlessLow = demo('demo-gridless-mirror.json', (d) => {
  d.mirror.backPlate.potential_V = 5800;
});
// Lower still: the upper energies pass every turning point and strike the back plate (its pre-test in the snapshot).
const gridlessBack = demo('demo-gridless-mirror.json', (d) => {
  d.mirror.backPlate.potential_V = 5620;
});
const pulse = demo('demo-linear-delayed.json', (d) => {
  d.source.extraction.rise = { shape: 'exponential', timeConstant_ns: 12 };
});

const bits = (a: Float64Array | Uint8Array): string => Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('hex');
const withoutClock = (o: RunOutput) => ({ ...o, elapsed_ms: 0 });

describe('chunk bounds', () => {
  it('tile [0, count) contiguously with sizes differing by at most one', () => {
    for (const [count, parts] of [
      [20_000, 2],
      [20_001, 3],
      [7, 4],
      [5, 9],
    ]) {
      const b = chunkBounds(count, parts);
      expect(b[0]).toBe(0);
      expect(b[b.length - 1]).toBe(count);
      expect(b.length - 1).toBe(Math.min(parts, count));
      const sizes = b.slice(1).map((x, k) => x - b[k]);
      expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
      expect(Math.min(...sizes)).toBeGreaterThan(0);
    }
  });

  it('balanced by expected tracing work: fitted ions free, mapped ones cheap, each chunk within one ion of an equal share', () => {
    // Two species from ions 0 and 10 000; the first 500 and 600 of each fitted; 10 % and 30 % of the rest traced.
    const chunk = (from: number, to: number) => ({ from, to }) as unknown as RunMapFit['fitted'][number];
    const fit = { fitted: [chunk(0, 500), chunk(10_000, 10_600)], firstIon: [0, 10_000], tracedShare: [0.1, 0.3] } as unknown as RunMapFit;
    const cost = (i: number) => (i < 500 || (i >= 10_000 && i < 10_600) ? 0 : (i < 10_000 ? 0.1 : 0.3) * (1 - MAPPED_ION_COST) + MAPPED_ION_COST);
    for (const parts of [2, 3, 5]) {
      const b = balancedBounds(20_000, parts, fit);
      expect(b[0]).toBe(0);
      expect(b[b.length - 1]).toBe(20_000);
      expect(b.length - 1).toBe(parts);
      const work = b.slice(1).map((to, k) => {
        let w = 0;
        for (let i = b[k]; i < to; i++) w += cost(i); // summed ion by ion, independently of the bounds' own arithmetic
        return w;
      });
      const total = work.reduce((x, y) => x + y, 0);
      for (const w of work) expect(Math.abs(w - total / parts)).toBeLessThanOrEqual(1);
    }
    // The heavier-traced second species gets the smaller chunk: bounds differ from equal sizes.
    expect(balancedBounds(20_000, 2, fit)[1]).toBeGreaterThan(10_000);
  });

  it('small runs stay in one chunk', () => {
    expect(chunkCount(MIN_CHUNK_IONS * 2 - 1, 4)).toBe(1);
    expect(chunkCount(20_000, 2)).toBe(2);
    expect(chunkCount(20_000, 1)).toBe(1);
  });
});

describe('joining chunks', () => {
  const chunk = (from: number, to: number): TraceChunk => {
    const n = to - from;
    const f = new Float64Array(n).map((_, i) => from + i);
    return { from, to, flightTime_s: f, fate: new Uint8Array(n).fill(from % 7), finalSpeed_m_per_s: f.slice(), weight: f.slice(), detectorX_m: f.slice(), detectorY_m: f.slice(), elapsed_ms: 0 };
  };

  it('puts chunks given in any order back in ion order', () => {
    const joined = concatChunks(10, [chunk(6, 10), chunk(0, 3), chunk(3, 6)]);
    expect(Array.from(joined.flightTime_s)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    expect(Array.from(joined.fate)).toEqual([0, 0, 0, 3, 3, 3, 6, 6, 6, 6]);
    expect(Array.from(joined.detectorY_m)).toEqual(Array.from(joined.flightTime_s));
  });

  it('refuses a gap, an overlap or a short cover', () => {
    expect(() => concatChunks(10, [chunk(0, 3), chunk(4, 10)])).toThrow(/expected one from 3/);
    expect(() => concatChunks(10, [chunk(0, 5), chunk(4, 10)])).toThrow(/expected one from 5/);
    expect(() => concatChunks(10, [chunk(0, 8)])).toThrow(/cover 8 of 10/);
  });
});

describe('which runs are split', () => {
  it('the preset tests agree with the compiled model for every shipped demo and edited ones (solved sources and integrator-carried runs are not split, solved mirrors are)', () => {
    const files = readdirSync(PRESETS).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));
    expect(files.length).toBeGreaterThan(4);
    // Besides the demos: the integrator everywhere, and mirror profiles of each kind (only a table is closed form).
    const edited: Array<[string, Preset]> = [
      ['linear demo, run.engine integrator', demo('demo-linear-delayed.json', (d) => (d.run.engine = 'integrator'))],
      ['gridless demo, run.engine integrator', demo('demo-gridless-mirror.json', (d) => (d.run.engine = 'integrator'))],
      ...(['polynomial', 'harmonic', 'table'] as const).map((kind): [string, Preset] => [
        `single reflectron demo, ${kind} mirror profile`,
        demo('demo-reflectron-single.json', (d) => {
          const profile = kind === 'polynomial' ? { kind, coefficients_V: [26000, 3000] } : kind === 'harmonic' ? { kind, backPlate_V: 29222 } : { kind, points: [[100, 24000], [350, 29222]] };
          d.mirror = { type: 'profile', depth_mm: 350, profile, returnLength_mm: 500 };
        }),
      ]),
    ];
    let solvedSources = 0;
    let solvedMirrors = 0;
    let integrated = 0;
    for (const [file, p] of [...files.map((f): [string, Preset] => [f, demo(f)]), ...edited]) {
      const model = compilePreset(p).model;
      const source = model.source.solved !== undefined && model.source.solved !== null;
      const mirror = model.mirror?.solved !== undefined;
      // The integrator carries its first step from ion to ion where it integrates every region or a mirror profile.
      const carried = model.forceIntegrator || (model.mirror?.profile ?? null) !== null;
      if (source) solvedSources++;
      if (mirror) solvedMirrors++;
      if (carried) integrated++;
      expect(splitsOverWorkers(p), file).toBe(!source && !carried);
      expect(hasSolvedMirror(p), file).toBe(mirror);
      expect(hasSolvedRegion(model), file).toBe(source || mirror);
    }
    expect(solvedSources).toBeGreaterThan(0);
    expect(solvedMirrors).toBeGreaterThan(0);
    expect(integrated).toBe(4);
  });

  it('a chunk of a solved-source run is refused; a chunk through a mapped solved mirror needs the shared map', () => {
    const aperture = demo('demo-aperture-source.json');
    expect(() => traceRunChunk({ preset: aperture, ions: 3000 }, 0, 1500)).toThrow(/solved source/);
    expect(shouldSplit({ preset: aperture, ions: 20_000 }, 2)).toBe(false);
    const gridless = demo('demo-gridless-mirror.json');
    expect(() => traceRunChunk({ preset: gridless, ions: 3000 }, 0, 1500)).toThrow(/transfer map/);
    expect(shouldSplit({ preset: gridless, ions: 20_000 }, 2)).toBe(true);
    // Closed-form runs spend little of the run tracing: not split; integrator-traced runs are.
    expect(shouldSplit({ preset: exact, ions: 20_000 }, 2)).toBe(false);
    expect(shouldSplit({ preset: pulse, ions: 20_000 }, 2)).toBe(true);
    expect(shouldSplit({ preset: pulse, ions: 20_000 }, 1)).toBe(false);
  });
});

const inProcess: SplitRunTasks = {
  traceRunChunk: (request, from, to, map) => traceRunChunk(request, from, to, map),
  fitRunMap: (request, part, parts) => fitRunMap(request, part, parts),
  finishRun: (request, traced, mirrorMap) => runRequest(request, undefined, traced, mirrorMap),
};
const lanes = (n: number): SplitRunLane[] =>
  Array.from({ length: n }, () => ({
    traceRunChunk: async (r, a, b, m) => inProcess.traceRunChunk(r, a, b, m),
    fitRunMap: async (r, p, n) => inProcess.fitRunMap(r, p, n),
    finishRun: async (r, t, m) => inProcess.finishRun(r, t, m),
  }));

describe('a split run equals the unsplit run bit for bit', () => {
  const cases: Array<[string, RunRequest]> = [
    ['exact (linear delayed extraction demo)', { preset: exact, ions: 9_001, seed: 11, scene: {} }],
    ['rising pulse (same demo, exponential repeller rise)', { preset: pulse, ions: 6_000, seed: 12 }],
    // One worker fits the solved mirror's transfer map, the others restore it from its snapshot.
    ['solved mirror (gridless demo, transfer map fitted once and shared)', { preset: gridless, ions: 6_000, seed: 13 }],
    ['solved mirror, back plate 5800 V (map split by energy, fitted once and shared)', { preset: gridlessLow, ions: 8_000, seed: 13 }],
    ['solved mirror, back plate 5620 V (back-plate strike pre-test fitted once and shared)', { preset: gridlessBack, ions: 8_000, seed: 13 }],
  ];
  for (const [name, request] of cases) {
    it(name, async () => {
      const whole = runRequest(request);
      const split = await splitRun(lanes(3), request);
      expect(bits(split.flightTime_s)).toBe(bits(whole.flightTime_s));
      expect(bits(split.fate)).toBe(bits(whole.fate));
      expect(withoutClock(split)).toEqual(withoutClock(whole));
      if (request.preset === gridlessLow) {
        // The case is what it says: some species carried by energy pieces (else it tests nothing new).
        const map = whole.report.solvedMirrorMap!;
        expect(map.species.some((s) => s.pieces.length > 0 && s.note === '' && s.mapped > 0)).toBe(true);
      }
      if (request.preset === gridlessBack) {
        // Some ions taken as struck on the back plate by the restored pre-test, counted once over the chunks.
        const map = split.report.solvedMirrorMap!;
        expect(map.struckBackByMap).toBeGreaterThan(0);
        expect(map.struckBackByMap).toBe(map.species.reduce((n, s) => n + s.struckBackByMap, 0));
      }
    });
  }

  it('solved mirror, one fit slower than the other: the lane done first traces its species\' later ions meanwhile, and the run is unchanged', async () => {
    const request: RunRequest = { preset: gridlessBack, ions: 8_000, seed: 13 };
    const whole = runRequest(request);
    let slowFitDone = false;
    const calls: Array<{ lane: number; from: number; to: number; beforeSlowFit: boolean }> = [];
    const slow: SplitRunLane[] = [0, 1].map((lane) => ({
      traceRunChunk: async (r, a, b, m) => {
        calls.push({ lane, from: a, to: b, beforeSlowFit: !slowFitDone });
        return inProcess.traceRunChunk(r, a, b, m);
      },
      fitRunMap: async (r, p, n) => {
        const fit = inProcess.fitRunMap(r, p, n);
        if (lane === 1) {
          await new Promise((resolve) => setTimeout(resolve, 20)); // the heavier species' fit takes longer
          slowFitDone = true;
        }
        return fit;
      },
      finishRun: async (r, t, m) => inProcess.finishRun(r, t, m),
    }));
    const split = await splitRun(slow, request);
    expect(bits(split.flightTime_s)).toBe(bits(whole.flightTime_s));
    expect(bits(split.fate)).toBe(bits(whole.fate));
    expect(withoutClock(split)).toEqual(withoutClock(whole));
    // Lane 0 traced its species' later ions while lane 1 still fitted: the first species only.
    const early = calls.filter((c) => c.beforeSlowFit);
    expect(early.length).toBeGreaterThan(1);
    expect(early.every((c) => c.lane === 0 && c.to <= 4_000)).toBe(true);
  });

  it('solved mirror: the shared map is what makes the chunks agree (chunks fitting maps of their own differ)', async () => {
    const request: RunRequest = { preset: gridless, ions: 6_000, seed: 13 };
    const whole = runRequest(request);
    const fit = fitRunMap(request)!;
    expect(fit).not.toBeNull();
    // The fitting worker traced each species' first ions only (training and validation), not the run.
    const fittedIons = fit.fitted.reduce((n, c) => n + c.to - c.from, 0);
    expect(fit.fitted).toHaveLength(2);
    expect(fittedIons).toBeLessThan(0.5 * 6_000);
    expect(fit.snapshot.values.length).toBe(2 * SNAPSHOT_STRIDE);
    // Two workers fitting one species each give the same fit, joined (and a third, with no species, adds nothing).
    const parts = [0, 1, 2].map((k) => fitRunMap(request, k, 3)!);
    expect(parts[2].fitted).toHaveLength(0);
    expect(parts[0].fitted).toHaveLength(1);
    const joinedFit = mergeMapFits(parts);
    expect(bits(joinedFit.snapshot.values)).toBe(bits(fit.snapshot.values));
    expect(joinedFit.report).toEqual(fit.report);
    expect(joinedFit.fitted.map((c) => [c.from, c.to, bits(c.flightTime_s)])).toEqual(fit.fitted.map((c) => [c.from, c.to, bits(c.flightTime_s)]));
    // The split run's report counts every ion once, mapped or traced, as the unsplit run's does.
    const split = await splitRun(lanes(3), request);
    const map = split.report.solvedMirrorMap!;
    expect(map).toEqual(whole.report.solvedMirrorMap);
    expect(map.mapped + map.traced).toBe(6_000);
    // Control: the same chunks, each fitting its own map from its own first ions, do not give the unsplit numbers.
    const bounds = chunkBounds(6_000, 3);
    const own = bounds.slice(1).map((to, k) => {
      const compiled = compilePreset(gridless);
      const ens = samplePopulation({ ...compiled.population, totalIons: 6_000, seed: 13 });
      const t = allocateTraceResult(ens.count);
      traceEnsemble(compiled.model, ens, t, { from: bounds[k], to });
      return t.flightTime_s.slice(bounds[k], to);
    });
    const joined = new Float64Array(6_000);
    own.forEach((f, k) => joined.set(f, bounds[k]));
    let moved = 0;
    for (let i = 0; i < 6_000; i++) if (joined[i] !== whole.flightTime_s[i]) moved++;
    expect(moved).toBeGreaterThan(100);
    expect(bits(split.flightTime_s)).toBe(bits(whole.flightTime_s));
  });

  it('a restored map refuses a species it was not given', () => {
    const compiled = compilePreset(gridless);
    const fit = fitRunMap({ preset: gridless, ions: 6_000, seed: 13 })!;
    const oneSpecies = { values: fit.snapshot.values.slice(0, SNAPSHOT_STRIDE), species: fit.snapshot.species.slice(0, 1) };
    const mapper = SolvedMirrorMapper.restore(compiled.model.mirror!.solved!, oneSpecies);
    const ens = samplePopulation({ ...compiled.population, totalIons: 6_000, seed: 13 });
    const t = allocateTraceResult(ens.count);
    expect(() => traceEnsemble(compiled.model, ens, t, { from: ens.speciesStart[1], to: ens.speciesStart[1] + 10, mirrorMap: mapper })).toThrow(/no species of q\/m/);
    expect(() => SolvedMirrorMapper.restore(compiled.model.mirror!.solved!, { values: fit.snapshot.values.slice(1), species: fit.snapshot.species })).toThrow(/needs/);
  });

  const ports: MessagePort[] = [];
  afterAll(() => ports.forEach((p) => p.close()));

  it('over MessageChannel ports, the trace buffers transferred both ways', async () => {
    const transferred: SplitRunTasks = {
      traceRunChunk: (r, a, b, m) => {
        const c = traceRunChunk(r, a, b, m);
        return Comlink.transfer(c, traceTransferables(c));
      },
      fitRunMap: (r, p, n) => {
        const fit = fitRunMap(r, p, n);
        return fit && Comlink.transfer(fit, mapFitTransferables(fit));
      },
      finishRun: (r, t, m) => {
        const out = runRequest(r, undefined, t, m);
        return Comlink.transfer(out, runOutputTransferables(out));
      },
    };
    const remote = Array.from({ length: 2 }, () => {
      const { port1, port2 } = new MessageChannel();
      ports.push(port1, port2);
      Comlink.expose(transferred, port1 as unknown as Endpoint);
      return Comlink.wrap<SplitRunTasks>(port2 as unknown as Endpoint) as unknown as SplitRunLane;
    });
    // The exact demo, and the gridless demo with its fitted map's snapshot transferred to the other lane.
    for (const request of [{ preset: exact, ions: 5_000, seed: 3 }, { preset: gridless, ions: 4_000, seed: 4 }] as RunRequest[]) {
      const whole = runRequest(request);
      const split = await splitRun(remote, request);
      expect(bits(split.flightTime_s)).toBe(bits(whole.flightTime_s));
      expect(withoutClock(split)).toEqual(withoutClock(whole));
    }
  });
});
