/**
 * Orthogonal acceleration from a gas-phase slab: the turn-around time of an ion with initial axial
 * energy U0 is t = 2·sqrt(2·m·U0)/(qE) (Dawson & Guilhaus, Rapid Commun. Mass Spectrom. 3, 155 (1989);
 * Guilhaus, J. Mass Spectrom. 30, 1519 (1995)).
 */
import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../src/physics/constants';
import { validatePreset } from '../../src/presets/load';
import { simulate } from '../../src/simulation/run';
import { buildModel, relErr, traceOne } from '../helpers';

describe('orthogonal-acceleration turn-around time (Dawson & Guilhaus 1989)', () => {
  it('an ion launched away from the detector arrives 2·sqrt(2mU0)/(qE) after its twin', () => {
    const mz = 600;
    const m = mz * U_KG;
    const gap = 5e-3;
    const pusher = 1_200; // V over the first gap
    const E = pusher / gap;
    const model = buildModel({ repeller_V: 5_000, grid_V: 5_000 - pusher, gap1_m: gap, gap2_m: 8e-3, drift_m: 1.1 });
    for (const U0_eV of [0.025, 0.1, 1]) {
      const v0 = Math.sqrt((2 * U0_eV * E_C) / m);
      const ahead = traceOne(model, mz, 2.5e-3, v0);
      const back = traceOne(model, mz, 2.5e-3, -v0);
      const expected = (2 * Math.sqrt(2 * m * U0_eV * E_C)) / (E_C * E);
      expect(relErr(back.t - ahead.t, expected)).toBeLessThan(1e-7);
    }
  });

  it('a thermal gas-phase slab with an orthogonal beam runs, and its peak is at least as wide as the thermal turn-around spread', () => {
    const loaded = validatePreset({
      formatVersion: 1,
      name: 'oa test',
      polarity: 'positive',
      source: {
        repeller: { potential_V: 5000 },
        extractionGrid: { gap_mm: 5, potential_V: 3800 },
        groundGrid: { gap_mm: 8 },
        extraction: { mode: 'static' },
      },
      drift: { length_mm: 1100 },
      mirror: { type: 'none' },
      detector: { activeDiameter_mm: 40, offsetX_mm: 0 },
      ions: {
        species: [{ mz: 600, charge: 1 }],
        startPosition: { kind: 'uniform', from_mm: 2.4, to_mm: 2.6 },
        startVelocity: { kind: 'thermal', temperature_K: 300 },
        transverse: { spotRadius_mm: 1, velocity: { kind: 'thermal', temperature_K: 300 }, beamEnergy_eV: 15 },
      },
      run: { ions: 20000, seed: 3 },
    });
    expect(loaded.ok).toBe(true);
    if (!loaded.ok) return;
    const r = simulate(loaded.value);
    // The 15 eV beam drifts ~ (v_beam/v_axial)·L ≈ 60 mm sideways: a centred 40 mm detector misses it.
    expect(r.report.fates.missedDetector).toBe(r.report.ions);
    const shifted = simulate({ ...loaded.value, detector: { ...loaded.value.detector, offsetX_mm: 60 } });
    const s = shifted.report.species[0];
    expect(s.transmission).toBeGreaterThan(0.5);
    // Thermal axial sd sqrt(kT/m) → turn-around FWHM contribution 2.355·(m·sd_v)/(qE), a lower bound.
    const m = 600 * U_KG;
    const sdV = Math.sqrt((1.380649e-23 * 300) / m);
    const turnaroundFwhm_ns = ((2.3548 * m * sdV) / (E_C * (1200 / 5e-3))) * 1e9;
    expect(s.fwhm_ns!).toBeGreaterThan(0.8 * turnaroundFwhm_ns);
  });
});
