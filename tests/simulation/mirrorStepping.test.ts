import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { planMirrorSteps, scaledMirror } from '../../src/simulation/mirrorStepping';

function demo(edit: (d: Record<string, any>) => void = () => {}): Preset {
  const d = JSON.parse(readFileSync('presets/demo-fragments-reflectron.json', 'utf8')) as Record<string, any>;
  edit(d);
  const r = parsePresetText(JSON.stringify(d));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

describe('mirror-voltage stepping', () => {
  it('a single-stage uniform mirror needs several segments; they tile the range and each keeps the target R on the grid', () => {
    const r = planMirrorSteps({ preset: demo(), fromMz: 200, toMz: 1000, minResolvingPower: 300, ions: 4000 });
    expect(r.singleSetting).toBe(false);
    expect(r.segments.length).toBeGreaterThan(1);
    expect(r.segments[0].toMz).toBeCloseTo(1000, 6);
    expect(r.segments[r.segments.length - 1].fromMz).toBeCloseTo(200, 6);
    for (let k = 1; k < r.segments.length; k++) {
      expect(r.segments[k].toMz).toBeCloseTo(r.segments[k - 1].fromMz, 6); // no gap, no overlap
      expect(r.segments[k].scale).toBeLessThan(r.segments[k - 1].scale);
    }
    for (const s of r.segments) expect(s.minResolvingPower).toBeGreaterThanOrEqual(300);
    // The stitched spectrum lies in the range, each sample inside its own segment's window.
    expect(r.spectrum.mz.length).toBeGreaterThan(0);
    for (let k = 0; k < r.spectrum.mz.length; k++) {
      const s = r.segments[r.spectrum.segment[k]];
      expect(r.spectrum.mz[k]).toBeGreaterThanOrEqual(s.fromMz);
      expect(r.spectrum.mz[k]).toBeLessThanOrEqual(s.toMz);
    }
  });

  it('scaling keeps the drift potential and scales every mirror potential relative to it', () => {
    const m = scaledMirror({ type: 'dual', deceleratingLength_mm: 100, intermediateGrid_V: 15000, reflectingLength_mm: 200, backPlate_V: 25000, returnLength_mm: 500 }, 1000, 0.5);
    expect(m).toMatchObject({ intermediateGrid_V: 8000, backPlate_V: 13000 });
  });

  it('a harmonic mirror focuses fragments of every mass at once: one setting, flagged in the output (time independent of energy, π·sqrt(m/(qk)))', () => {
    const preset = demo((d) => {
      d.mirror = { type: 'profile', depth_mm: 400, profile: { kind: 'harmonic', backPlate_V: 40000 }, returnLength_mm: 500 };
      d.detector.behindMirror.distance_mm = 450;
    });
    const uniform = planMirrorSteps({ preset: demo(), fromMz: 300, toMz: 1000, minResolvingPower: 120, ions: 3000, gridPoints: 16 });
    const harmonic = planMirrorSteps({ preset, fromMz: 300, toMz: 1000, minResolvingPower: 120, ions: 3000, gridPoints: 16 });
    expect(harmonic.singleSetting).toBe(true);
    expect(harmonic.segments).toHaveLength(1);
    // Flat in fragment mass (the time in the mirror does not depend on the energy) against the uniform mirror's steep focus.
    const spread = (r: typeof harmonic) => {
      const values = r.grid.map((g) => g.resolvingPower ?? 0);
      return Math.max(...values) / Math.min(...values);
    };
    expect(spread(harmonic)).toBeLessThan(2.5);
    expect(spread(uniform)).toBeGreaterThan(10);
  });

  it('plans the same segments whatever the run seed, and nearly the same from another planning ensemble', () => {
    const seeded = (seed: number) => demo((d) => (d.run.seed = seed));
    const a = planMirrorSteps({ preset: seeded(1), fromMz: 200, toMz: 1000, minResolvingPower: 300, ions: 1000 });
    const b = planMirrorSteps({ preset: seeded(987), fromMz: 200, toMz: 1000, minResolvingPower: 300, ions: 1000 });
    expect(b.segments.map((s) => [s.scale, s.fromMz, s.toMz])).toEqual(a.segments.map((s) => [s.scale, s.fromMz, s.toMz]));
    expect(b.window).toEqual(a.window);
    // A different (larger) planning ensemble: the window edges move by at most one grid step.
    const c = planMirrorSteps({ preset: seeded(1), fromMz: 200, toMz: 1000, minResolvingPower: 300, ions: 1000, gridIonsPerPoint: 3000 });
    const step = a.grid[1].fraction - a.grid[0].fraction;
    expect(Math.abs(c.window.lowFraction - a.window.lowFraction)).toBeLessThanOrEqual(step * (1 + 1e-9));
    expect(Math.abs(c.window.highFraction - a.window.highFraction)).toBeLessThanOrEqual(step * (1 + 1e-9));
  });
});
