/**
 * An invented linear delayed-extraction instrument for the measured-spectrum tests (our own
 * scenario, not a real instrument), and a "measured" spectrum made from it: the expected spectrum
 * of a preset with hidden offsets (many simulated ions), scaled to a modest number of counts and
 * given Poisson counting noise.
 */
import { SeededRandom } from '../../src/ions/random';
import type { MeasuredSpectrum } from '../../src/measured/measuredSpectrum';
import { validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';

export function testPreset(overrides: { timeOffset_ns?: number; driftLength_mm?: number; pulseWidth_ns?: number; ions?: number; seed?: number } = {}): Preset {
  const doc = {
    formatVersion: 1,
    name: 'Invented test instrument (linear, delayed extraction)',
    polarity: 'positive',
    source: {
      repeller: { potential_V: 20000, hold_V: 18800 },
      extractionGrid: { gap_mm: 3, potential_V: 18800 },
      groundGrid: { gap_mm: 10 },
      extraction: { mode: 'delayed', delay_ns: 228 },
    },
    drift: { length_mm: overrides.driftLength_mm ?? 1200, potential_V: 0 },
    mirror: { type: 'none' },
    ions: {
      species: [
        { label: 'test ion A', mz: 1000, charge: 1, abundance: 1 },
        { label: 'test ion B', mz: 1600, charge: 1, abundance: 1 },
        { label: 'test ion C', mz: 2400, charge: 1, abundance: 1 },
      ],
      startPosition: { kind: 'surface', position_mm: 0 },
      startVelocity: { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 150, minimum_m_per_s: 0 },
    },
    acquisition: {
      pulseWidth_ns: overrides.pulseWidth_ns ?? 1.0,
      detectorJitter_ns: 0.1,
      triggerJitter_ns: 0,
      shots: 1,
      sampleInterval_ns: 0.5,
      ...(overrides.timeOffset_ns === undefined ? {} : { timeOffset_ns: overrides.timeOffset_ns }),
    },
    run: { ions: overrides.ions ?? 6000, seed: overrides.seed ?? 1 },
  };
  const r = validatePreset(doc);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

export interface ExpectedSpectrum {
  readonly time_s: Float64Array;
  readonly expected: Float64Array;
}

/** The expected counts per sample: the spectrum of many ions, scaled to `countsPerPeak` per species. */
export function expectedSpectrum(truth: Preset, countsPerPeak: number, ions = 300_000, seed = 977): ExpectedSpectrum {
  const run = simulate(truth, { ions, seed, withSpectrum: true });
  const s = run.analysis.spectrum!;
  let total = 0;
  for (const v of s.intensity) total += v;
  const scale = (countsPerPeak * truth.ions.species.length) / total;
  return { time_s: s.time_ns.map((t) => t * 1e-9), expected: s.intensity.map((v) => v * scale) };
}

/** Poisson draw by counting unit-rate exponential gaps (exact, O(λ): fine for a few thousand counts). */
export function poisson(rng: SeededRandom, lambda: number): number {
  let k = 0;
  let sum = -Math.log(1 - rng.uniform());
  while (sum <= lambda) {
    k++;
    sum += -Math.log(1 - rng.uniform());
  }
  return k;
}

export function noisySpectrum(e: ExpectedSpectrum, seed: number): MeasuredSpectrum {
  const rng = new SeededRandom(seed, 0x5eed);
  const counts = e.expected.map((lambda) => poisson(rng, lambda));
  return { format: 'text', axis: 'time', x: e.time_s, intensity: counts, title: null, timeUnitFrom: 'user', notes: [] };
}
