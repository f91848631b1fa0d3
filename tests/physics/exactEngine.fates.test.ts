/** Fates and delayed extraction of the exact engine: every ion ends with a fate and a finite time. */
import { describe, expect, it } from 'vitest';
import { Fate } from '../../src/physics/fates';
import { buildModel, relErr, traceOne } from '../helpers';

const MZ = 2000;
const delayed = (delay_s: number) =>
  buildModel({ repeller_V: 20_000, grid_V: 18_500, gap1_m: 3e-3, gap2_m: 10e-3, drift_m: 1.2, delay_s, repellerHold_V: 18_500 });

describe('delayed extraction (field-free hold, then an ideal step)', () => {
  it('an ion drifting during the delay equals a static run started where it was at the pulse', () => {
    const delay = 400e-9;
    const v0 = 600;
    const a = traceOne(delayed(delay), MZ, 0, v0);
    const staticModel = buildModel({ repeller_V: 20_000, grid_V: 18_500, gap1_m: 3e-3, gap2_m: 10e-3, drift_m: 1.2 });
    const b = traceOne(staticModel, MZ, v0 * delay, v0);
    expect(a.fate).toBe(Fate.DETECTED);
    expect(relErr(a.t, delay + b.t)).toBeLessThan(1e-14);
  });

  it('an ion moving back during the delay strikes the repeller; a fast one flies on, and is lost only if it leaves the whole source before the pulse', () => {
    expect(traceOne(delayed(500e-9), MZ, 1e-4, -300).fate).toBe(Fate.STRUCK_REPELLER); // 1e-4 − 1.5e-4 < 0
    expect(traceOne(delayed(500e-9), MZ, 1e-4, -100).fate).toBe(Fate.DETECTED); // 1e-4 − 0.5e-4 > 0
    // 3 mm at 7000 m/s takes 429 ns: at the 500 ns pulse it is in the (static) second stage, which it leaves at ~830 ns.
    expect(traceOne(delayed(500e-9), MZ, 0, 7000).fate).toBe(Fate.DETECTED);
    expect(traceOne(delayed(1000e-9), MZ, 0, 7000).fate).toBe(Fate.LEFT_SOURCE_DURING_DELAY);
  });

  it('a hold field pushes ions during the delay with the closed-form constant acceleration', () => {
    // Repeller held 100 V below the grid: ions are pulled back towards the repeller during the delay.
    const model = buildModel({ repeller_V: 20_000, grid_V: 18_500, gap1_m: 3e-3, gap2_m: 10e-3, drift_m: 1.2, delay_s: 300e-9, repellerHold_V: 18_400 });
    const r = traceOne(model, MZ, 1e-3, 0);
    expect(r.fate).toBe(Fate.DETECTED);
    const slow = traceOne(model, MZ, 1e-5, 0);
    // a = q·100 V/3 mm / m; starting 10 µm from the repeller it reaches it within 300 ns.
    expect(slow.fate).toBe(Fate.STRUCK_REPELLER);
  });
});

describe('fates', () => {
  it('struck repeller when moving back faster than the extraction field can turn', () => {
    const model = buildModel({ repeller_V: 20_000, grid_V: 19_990, gap1_m: 3e-3, gap2_m: 10e-3, drift_m: 1 });
    expect(traceOne(model, MZ, 1e-5, -2000).fate).toBe(Fate.STRUCK_REPELLER);
  });
  it('passes through a mirror whose back plate is below the ion energy', () => {
    const model = buildModel({
      repeller_V: 20_000,
      gap1_m: 5e-3,
      drift_m: 1,
      mirror: { stages: [{ length_m: 0.1, exitPotential_V: 19_000 }], returnLength_m: 0.8 },
    });
    expect(traceOne(model, MZ, 0, 0).fate).toBe(Fate.PASSED_THROUGH_MIRROR);
    expect(traceOne(model, MZ, 2e-3, 0).fate).toBe(Fate.DETECTED); // starts at 12 kV: turned
  });
  it('is turned back by a retarding post-acceleration gap', () => {
    const model = buildModel({ repeller_V: 5_000, gap1_m: 5e-3, drift_m: 1, post: { gap_m: 5e-3, potential_V: 6_000 } });
    expect(traceOne(model, MZ, 0, 0).fate).toBe(Fate.TURNED_BACK);
  });
  it('times out instead of returning infinity when nothing accelerates a resting ion', () => {
    const model = buildModel({ repeller_V: 0, gap1_m: 5e-3, drift_m: 1 });
    const r = traceOne(model, MZ, 1e-3, 0);
    expect(r.fate).toBe(Fate.TIMED_OUT);
    expect(Number.isFinite(r.t)).toBe(true);
  });
  it('negative ions in mirrored potentials fly exactly like positive ions', () => {
    const opts = { repeller_V: 20_000, grid_V: 17_000, gap1_m: 3e-3, gap2_m: 1e-2, drift_m: 1,
      mirror: { stages: [{ length_m: 0.02, exitPotential_V: 14_000 }, { length_m: 0.1, exitPotential_V: 21_000 }], returnLength_m: 0.8 } };
    const pos = traceOne(buildModel(opts), MZ, 1e-3, 250);
    const neg = traceOne(
      buildModel({ ...opts, polarity: -1, repeller_V: -20_000, grid_V: -17_000,
        mirror: { stages: [{ length_m: 0.02, exitPotential_V: -14_000 }, { length_m: 0.1, exitPotential_V: -21_000 }], returnLength_m: 0.8 } }),
      MZ, 1e-3, 250);
    expect(neg.fate).toBe(Fate.DETECTED);
    expect(neg.t).toBe(pos.t);
  });
});
