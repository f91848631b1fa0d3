/**
 * The ion-load section of a run, on presets built here: the reduction to today's results at one
 * ion per shot, the cross-field checks, and the CLI options and JSON sections.
 */
import { describe, expect, it } from 'vitest';
import { main, type CliIo } from '../../src/cli';
import { validatePreset } from '../../src/presets/load';
import type { Preset, PresetInput } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';

const base: PresetInput = {
  formatVersion: 1,
  name: 'ion-load test (invented)',
  polarity: 'positive',
  source: {
    repeller: { potential_V: 20_000, hold_V: 18_800 },
    extractionGrid: { gap_mm: 3, potential_V: 18_800 },
    groundGrid: { gap_mm: 10 },
    extraction: { mode: 'delayed', delay_ns: 230 },
  },
  drift: { length_mm: 1200 },
  mirror: { type: 'none' },
  ions: {
    species: [
      { label: 'A', mz: 1046.5, charge: 1 },
      { label: 'B', mz: 2465.2, charge: 1 },
    ],
    startPosition: { kind: 'uniform', from_mm: 0.01, to_mm: 0.05 },
    startVelocity: { kind: 'normal', mean_m_per_s: 400, sd_m_per_s: 150, minimum_m_per_s: 0 },
  },
  acquisition: { pulseWidth_ns: 1, sampleInterval_ns: 0.25 },
  run: { ions: 3000, seed: 4 },
};

const load = (doc: unknown): Preset => {
  const r = validatePreset(doc);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
};

describe('ion load in a run', () => {
  it('space charge at exactly one ion per shot reproduces the run without it bit for bit', () => {
    const plain = simulate(load(base));
    const loaded = simulate(load({ ...base, ionLoad: { ionsPerShot: 1, countLaw: 'fixed', spaceCharge: { beamRadius_mm: 0.5 } } }));
    expect(Array.from(loaded.trace.flightTime_s)).toEqual(Array.from(plain.trace.flightTime_s));
    expect(Array.from(loaded.trace.fate)).toEqual(Array.from(plain.trace.fate));
    expect(loaded.report.species).toEqual(plain.report.species);
    const sc = loaded.ionLoad!.spaceCharge!;
    if ('error' in sc) throw new Error(sc.error);
    expect(sc.species[0].shift_ns).toBe(0);
  });

  it('more ions per shot in a narrow beam shift and broaden the peaks; the sweep reports R against load', () => {
    const r = simulate(load({ ...base, ionLoad: { ionsPerShot: 300, spaceCharge: { beamRadius_mm: 0.2 }, sweepIonsPerShot: [1, 30] } }));
    const sc = r.ionLoad!.spaceCharge!;
    if ('error' in sc) throw new Error(sc.error);
    expect(sc.sweep.map((p) => p.ionsPerShot)).toEqual([1, 30, 300]);
    const light = sc.species[0];
    expect(Math.abs(light.shift_ns!)).toBeGreaterThan(0.05);
    expect(light.fwhm_ns!).toBeGreaterThan(light.alone.fwhm_ns!);
    expect(sc.sweep[0].species[0].resolvingPower).toBeGreaterThan(sc.sweep[2].species[0].resolvingPower!);
  });

  it('counting detection reports counts lost, the peak shift in ns and ppm, and the corrected peak', () => {
    const r = simulate(load({ ...base, ionLoad: { ionsPerShot: 20, detection: { mode: 'counting', deadTime_ns: 3 } } }));
    const d = r.ionLoad!.detection!;
    if ('error' in d) throw new Error(d.error);
    for (const s of d.species) {
      expect(s.countsLost).toBeGreaterThan(0);
      expect(s.peakShift_ns!).toBeLessThan(0);
      expect(s.peakShift_ppm!).toBeCloseTo(((2 * s.peakShift_ns!) / s.ideal!.mean_ns) * 1e6, 9);
      expect(Math.abs(s.correctedShift_ns!)).toBeLessThan(Math.abs(s.peakShift_ns!));
    }
  });

  it('cross-field checks name the field', () => {
    const noAcq = validatePreset({ ...base, acquisition: undefined, ionLoad: { ionsPerShot: 2, detection: { mode: 'analog' } } });
    expect(noAcq.ok).toBe(false);
    if (!noAcq.ok) expect(noAcq.issues.map((i) => i.path)).toContain('ionLoad.detection');
    const ramp = validatePreset({
      ...base,
      source: { ...base.source, extraction: { mode: 'delayed', delay_ns: 200, rise: { shape: 'linear', riseTime_ns: 10 } } },
      ionLoad: { ionsPerShot: 2, spaceCharge: { beamRadius_mm: 1 } },
    });
    expect(ramp.ok).toBe(false);
    if (!ramp.ok) expect(ramp.issues[0]).toMatchObject({ path: 'ionLoad.spaceCharge' });
    const bad = validatePreset({ ...base, ionLoad: { ionsPerShot: 0 } });
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.issues[0].path).toBe('ionLoad.ionsPerShot');
  });
});

describe('CLI --ions-per-shot', () => {
  const files = { 'load.json': JSON.stringify({ ...base, ionLoad: { ionsPerShot: 5, detection: { mode: 'counting', deadTime_ns: 2 }, spaceCharge: { beamRadius_mm: 0.5 } } }) };
  const run = (argv: string[]) => {
    let out = '';
    let err = '';
    const io: CliIo = { out: (t) => void (out += t), err: (t) => void (err += t), readFile: (p) => (files as Record<string, string>)[p] ?? '' };
    return { code: main(argv, io), out: () => out, err: () => err };
  };
  it('overrides the mean and prints the detection and spaceCharge sections in --json', () => {
    const r = run(['load.json', '--json', '--ions-per-shot', '50', '--ions-per-shot-sweep', '1,10']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out());
    expect(doc.ionLoad.ionsPerShot).toBe(50);
    expect(doc.detection.mode).toBe('counting');
    expect(doc.detection.species[0]).toHaveProperty('peakShift_ppm');
    expect(doc.spaceCharge.sweep.map((p: { ionsPerShot: number }) => p.ionsPerShot)).toEqual([1, 10, 50]);
  });
  it('refuses a bad value, naming the option', () => {
    const r = run(['load.json', '--ions-per-shot', '-3']);
    expect(r.code).toBe(2);
    expect(r.err()).toContain('--ions-per-shot: must be a number');
  });
});
