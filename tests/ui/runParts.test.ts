/**
 * The page asks for a run in two parts (src/ui/engine/engineClient.ts, runParts): the run without
 * its focus section, scene and focus scan, then those from `runExtras`. Together they must be the
 * one-call run, number for number (a consistency check of two code paths: common practice, no
 * source). And the run queue draws the charts' part first, the second part after it, and drops a
 * second part whose change has been overtaken.
 */
import { readFileSync } from 'node:fs';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { runExtras, runRequest, speciesPeaksPart } from '../../src/simulation/runOutput';
import { peakBlocksByCost } from '../../src/simulation/peaksShare';
import { sharePeaksFromQuery, sharesPeaks } from '../../src/ui/engine/engineClient';
import { simulate } from '../../src/simulation/run';
import type { RunExtras, RunOutput, RunRequest } from '../../src/simulation/runContract';
import { RunQueue, type RunJob } from '../../src/ui/app/runQueue';
import type { EngineClient, RunParts } from '../../src/ui/engine/engineClient';
import { demoPreset } from './helpers';

function shipped(name: string): Preset {
  const parsed = parsePresetText(readFileSync(new URL(`../../presets/${name}.json`, import.meta.url), 'utf8'));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.value;
}

describe('a run in two parts', () => {
  const cases: [string, Preset][] = [
    ['linear delayed extraction', demoPreset('demo-linear-delayed')],
    ['isotope peaks', demoPreset('demo-peptide-isotopes')],
    ['decay in flight (fragment paths in the scene)', shipped('demo-fragments-linear')],
  ];
  for (const [name, preset] of cases) {
    it(`equals the one-call run: ${name}`, () => {
      const request: RunRequest = { preset, ions: 1500, seed: 7, scene: {}, focusScan: true };
      const whole = runRequest(request);
      const headline = runRequest({ preset, ions: 1500, seed: 7, focus: false });
      const extras = runExtras({ preset, ions: 1500, seed: 7, focus: true, focusScan: true, scene: {} });
      expect(headline.report.focus).toBeNull();
      expect(extras.focus).not.toBeNull();
      expect({ ...headline.report, focus: extras.focus }).toEqual(whole.report);
      expect(headline.flightTime_s).toEqual(whole.flightTime_s);
      expect(headline.fate).toEqual(whole.fate);
      expect(headline.products).toEqual(whole.products);
      expect(extras.scene).toEqual(whole.scene);
      expect(extras.focusScan).toEqual(whole.focusScan);
      expect(extras.fragmentScene).toEqual(whole.fragmentScene);
      if (name.startsWith('decay')) expect(extras.fragmentScene?.vertices ?? 0).toBeGreaterThan(0);
    });
  }
});

describe('an exact run with its species peaks shared over two workers', () => {
  const linear = demoPreset('demo-linear-delayed');
  const rising: Preset = { ...linear, source: { ...linear.source, extraction: { mode: 'delayed', delay_ns: 228, rise: { shape: 'exponential', timeConstant_ns: 12 } } } };
  const shared: [string, Preset][] = [
    ['linear delayed extraction', linear],
    ['isotope peaks', demoPreset('demo-peptide-isotopes')],
    ['two-stage reflectron', demoPreset('demo-reflectron-dual')],
    ['rising pulse (integrated source)', rising],
  ];
  for (const [name, preset] of shared) {
    it(`equals the one-worker run: ${name}`, () => {
      const request: RunRequest = { preset, ions: 3000, seed: 3, focus: false };
      expect(sharesPeaks(request)).toBe(true);
      const whole = runRequest(request);
      const first = speciesPeaksPart(request, 0, 2);
      const second = speciesPeaksPart(request, 1, 2);
      // Every block measured by exactly one part: both parts share one sharing, decided on the same trace.
      const blocks = simulate(preset, { ions: 3000, seed: 3, analysis: false }).ensemble.speciesStart;
      const mine = peakBlocksByCost(preset, first.trace, blocks, 0, 2);
      expect(peakBlocksByCost(preset, second.trace, blocks, 1, 2)).toEqual(mine.map((m) => !m));
      expect(mine).toHaveLength(blocks.length - 1);
      // A part measures only its own blocks (a block without a detected ion has no peak either way).
      mine.forEach((m, s) => expect((m ? second : first).peaks[s]).toBeNull());
      const givenPeaks = first.peaks.map((p, s) => p ?? second.peaks[s] ?? null);
      const finished = runRequest({ ...request, givenPeaks }, undefined, first.trace);
      expect(finished.report).toEqual(whole.report);
      expect(finished.flightTime_s).toEqual(whole.flightTime_s);
      expect(finished.fate).toEqual(whole.fate);
    });
  }

  it('is not used where the trace depends on more than the preset, ions and seed', () => {
    expect(sharesPeaks({ preset: shipped('demo-fragments-linear') })).toBe(false);
    expect(sharesPeaks({ preset: demoPreset('demo-gridless-mirror') })).toBe(false);
    expect(sharesPeaks({ preset: demoPreset('demo-aperture-source') })).toBe(false);
    expect(sharesPeaks({ preset: demoPreset('demo-linear-delayed'), analysis: false })).toBe(false);
    expect(sharePeaksFromQuery('?sharePeaks=0')).toBe(false);
    expect(sharePeaksFromQuery('?runWorkers=2')).toBe(true);
  });
});

/** An engine whose parts the test settles by hand. */
class ManualEngine implements Partial<EngineClient> {
  readonly calls: { request: RunRequest; headline: (o: RunOutput) => void; extras: (e: RunExtras) => void }[] = [];
  runParts(request: RunRequest): RunParts {
    let headline!: (o: RunOutput) => void;
    let extras!: (e: RunExtras) => void;
    const parts = { headline: new Promise<RunOutput>((r) => (headline = r)), extras: new Promise<RunExtras>((r) => (extras = r)) };
    this.calls.push({ request, headline, extras });
    return parts;
  }
}

const output = (tag: number): RunOutput => ({ elapsed_ms: tag }) as unknown as RunOutput;
const extrasOf = (tag: number): RunExtras => ({ elapsed_ms: tag });
const settle = (): Promise<void> => new Promise((r) => setTimeout(r, 0));

describe('the run queue with two parts', () => {
  const saved = globalThis.document;
  beforeEach(() => {
    (globalThis as { document?: unknown }).document = { body: { dataset: {} } };
  });
  afterEach(() => {
    (globalThis as { document?: unknown }).document = saved;
  });

  it('draws the charts first, then the second part, and is done only after both', async () => {
    const engine = new ManualEngine();
    const drawn: string[] = [];
    const queue = new RunQueue(engine as unknown as EngineClient, (_j: RunJob, o) => drawn.push(`charts ${o.elapsed_ms}`), (_j, e) => drawn.push(`extras ${e.elapsed_ms}`), () => undefined);
    const preset = demoPreset('demo-linear-delayed');
    queue.request(preset, 'final', 100);
    expect(engine.calls[0].request.scene).toEqual({});
    expect(engine.calls[0].request.focusScan).toBe(true);
    engine.calls[0].headline(output(1));
    await settle();
    expect(drawn).toEqual(['charts 1']);
    expect(document.body.dataset.status).toBe('running');
    engine.calls[0].extras(extrasOf(1));
    await settle();
    expect(drawn).toEqual(['charts 1', 'extras 1']);
    expect(document.body.dataset.status).toBe('done');
  });

  it('drops the second part of a run whose change was overtaken, and draws the newer run whole', async () => {
    const engine = new ManualEngine();
    const drawn: string[] = [];
    const queue = new RunQueue(engine as unknown as EngineClient, (_j, o) => drawn.push(`charts ${o.elapsed_ms}`), (_j, e) => drawn.push(`extras ${e.elapsed_ms}`), () => undefined);
    const preset = demoPreset('demo-linear-delayed');
    queue.request(preset, 'final', 100);
    engine.calls[0].headline(output(1));
    await settle();
    queue.request(preset, 'final', 100); // finished while the first run's second part is pending
    engine.calls[0].extras(extrasOf(1));
    await settle();
    expect(drawn).toEqual(['charts 1']);
    expect(document.body.dataset.extrasDropped).toBe('1');
    expect(engine.calls).toHaveLength(2);
    engine.calls[1].headline(output(2));
    await settle();
    engine.calls[1].extras(extrasOf(2));
    await settle();
    expect(drawn).toEqual(['charts 1', 'charts 2', 'extras 2']);
    expect(document.body.dataset.status).toBe('done');
  });
});
