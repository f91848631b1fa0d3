/**
 * The mixed tracer: closed form where the field allows it, integration where it does not, the
 * integrator everywhere on request. Checked against closed forms, an independent reference for the
 * rising pulse, textbook mechanics for the harmonic mirror, and the `odex` ODE solver from npm.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { b2Preset, b2ReferenceFlightTime } from '../../bench/problems/b2';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import type { AnalyserModel } from '../../src/physics/analyser';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../src/physics/constants';
import { traceExact } from '../../src/physics/exactEngine';
import { Fate } from '../../src/physics/fates';
import { traceMixed } from '../../src/physics/tracer';
import { compilePreset } from '../../src/presets/compile';
import { parsePresetText, validatePreset } from '../../src/presets/load';
import type { Preset, PresetInput } from '../../src/presets/schema';
import { traceSingleIon } from '../../src/simulation/singleIon';
import { buildModel } from '../helpers';
import { OdexSolverClass } from '../support/odex';

const load = (doc: unknown): Preset => {
  const r = validatePreset(doc);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
};

describe('engine choice: exact engine and forced integrator agree', () => {
  const dir = new URL('../../presets/', import.meta.url);
  const shipped = readdirSync(dir).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));
  it.each(shipped)('%s: flight times within 1e-10 relative, identical fates', (file) => {
    const r = parsePresetText(readFileSync(new URL(file, dir), 'utf8'));
    if (!r.ok) throw new Error(file);
    const { model, population } = compilePreset(r.value);
    const ens = samplePopulation({ ...population, totalIons: 400 });
    const exact = allocateTraceResult(ens.count);
    const numeric = allocateTraceResult(ens.count);
    traceExact(model, ens, exact);
    traceMixed({ ...model, forceIntegrator: true }, ens, numeric);
    // A solved (gridless) mirror has no closed form and is integrated on both paths; its adaptive 3-D
    // integration turns the ~1e-11 entry differences into flight-time differences at its error level
    // (relative ~1e-6, src/fields/solvedTracer.ts). Every other region must agree to rounding.
    const tolerance = r.value.mirror.type === 'solved' ? 1e-5 : 1e-10;
    for (let i = 0; i < ens.count; i++) {
      expect(numeric.fate[i]).toBe(exact.fate[i]);
      expect(Math.abs(numeric.flightTime_s[i] - exact.flightTime_s[i]) / exact.flightTime_s[i]).toBeLessThan(tolerance);
      expect(Math.abs(numeric.weight[i] - exact.weight[i])).toBeLessThan(1e-12);
    }
  });

  it('an ion that turns just behind a mirror grid (crossing it twice within one step) is not missed', () => {
    // Energy a hair above the intermediate-grid potential: it turns a few µm into the reflecting stage.
    const model = buildModel({
      repeller_V: 14_000.5,
      gap1_m: 2e-3,
      drift_m: 0.5,
      mirror: { stages: [{ length_m: 0.03, exitPotential_V: 14_000 }, { length_m: 0.1, exitPotential_V: 21_000 }], returnLength_m: 0.5 },
    });
    for (const z0 of [0, 1e-9, 1e-7, 1e-6]) {
      const exact = traceSingleIon(model, 1000, z0, 0);
      const numeric = traceSingleIon({ ...model, forceIntegrator: true }, 1000, z0, 0);
      expect(numeric.fate).toBe(exact.fate);
      expect(Math.abs(numeric.t - exact.t) / exact.t).toBeLessThan(1e-10);
    }
  });

  it('energy is conserved through static fields under the integrator', () => {
    const model: AnalyserModel = {
      ...buildModel({ repeller_V: 12_000, grid_V: 9_000, gap1_m: 4e-3, gap2_m: 8e-3, drift_m: 0.7, post: { gap_m: 5e-3, potential_V: -6_000 } }),
      forceIntegrator: true,
    };
    const r = traceSingleIon(model, 800, 1e-3, 0);
    const m = 800 * U_KG;
    const expected = E_C * (12_000 - 750 - -6_000);
    expect(Math.abs((0.5 * m * r.v * r.v) / expected - 1)).toBeLessThan(1e-11);
  });
});

describe('rising extraction pulse (benchmark B2)', () => {
  it('matches the independent reference (Newton on the exact position in the rising field) to 1e-10', () => {
    const preset = load(b2Preset);
    const { model, population } = compilePreset(preset);
    const ens = samplePopulation({ ...population, totalIons: 500 });
    const out = allocateTraceResult(ens.count);
    traceMixed(model, ens, out);
    for (let i = 0; i < ens.count; i++) {
      expect(out.fate[i]).toBe(Fate.DETECTED);
      const ref = b2ReferenceFlightTime(ens.vz0_m_per_s[i]);
      expect(Math.abs(out.flightTime_s[i] - ref) / ref).toBeLessThan(1e-10);
    }
  });

  it('a linear ramp approaches the ideal step as its rise time shrinks; a tabulated copy of a ramp gives the same times', () => {
    const base = load(b2Preset);
    const withRise = (rise: object) =>
      load({ ...b2Preset, source: { ...b2Preset.source, extraction: { mode: 'delayed', delay_ns: 300, rise } } } as PresetInput);
    const t = (p: Preset) => traceSingleIon(compilePreset(p).model, 5000, 0, 500).t;
    const step = t(withRise({ shape: 'step' }));
    const ramp = (ns: number) => t(withRise({ shape: 'linear', riseTime_ns: ns }));
    expect(Math.abs(ramp(1) - step)).toBeLessThan(Math.abs(ramp(10) - step));
    // A short ramp of duration τr changes the flight time in proportion to τr (an impulse deficit a·τr/2).
    const lag = (ns: number) => ramp(ns) - step;
    expect(lag(0.1)).toBeGreaterThan(0);
    expect(Math.abs(lag(0.2) / lag(0.1) - 2)).toBeLessThan(0.01);
    const table = withRise({ shape: 'table', repeller: [[0, 17_000], [300, 17_000], [320, 20_000]] });
    expect(Math.abs(t(table) - ramp(20)) / ramp(20)).toBeLessThan(1e-11);
    expect(base.run.engine).toBe('auto');
  });
});

describe('non-uniform mirrors', () => {
  const mirrorPreset = (profile: object, depth = 200): PresetInput => ({
    formatVersion: 1,
    name: 'profile mirror',
    polarity: 'positive',
    source: { repeller: { potential_V: 10_000 }, groundGrid: { gap_mm: 5 }, extraction: { mode: 'static' } },
    drift: { length_mm: 500 },
    mirror: { type: 'profile', depth_mm: depth, profile: profile as never, returnLength_mm: 400 },
    ions: { species: [{ mz: 1000, charge: 1 }], startPosition: { kind: 'surface', position_mm: 0 }, startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 } },
    run: { ions: 1, seed: 1 },
  });

  it('harmonic mirror: time inside is π·sqrt(m/(qk)) for every energy below its maximum (Landau & Lifshitz, Mechanics §21)', () => {
    // V = (V_back)·(x/d)² = ½·k·x² with k = 2·V_back/d² (V/m²); the half period π·sqrt(m/(qk)).
    const d = 0.2;
    const Vb = 12_000;
    const k = (2 * Vb) / (d * d);
    const model = compilePreset(load(mirrorPreset({ kind: 'harmonic', backPlate_V: Vb }))).model;
    const m = 1000 * U_KG;
    const expectedInside = Math.PI * Math.sqrt(m / (E_C * k));
    for (const U of [2_000, 6_000, 10_000]) {
      // Start at the source exit plane with energy U so that only drifts and the mirror remain.
      const v = Math.sqrt((2 * E_C * U) / m);
      const r = traceSingleIon(model, 1000, 5e-3, v);
      expect(r.fate).toBe(Fate.DETECTED);
      const inside = r.t - 0.9 / v;
      expect(Math.abs(inside / expectedInside - 1)).toBeLessThan(1e-9); // integrator rtol 1e-10
      expect(Math.abs(r.v / v - 1)).toBeLessThan(1e-10); // leaves with its entry speed
    }
    const above = traceSingleIon(model, 1000, 5e-3, Math.sqrt((2 * E_C * 13_000) / m));
    expect(above.fate).toBe(Fate.PASSED_THROUGH_MIRROR);
  });

  it('polynomial mirror: time inside agrees with the odex solver (Hairer–Wanner GBS extrapolation, npm `odex`)', () => {
    const d = 0.15;
    const coeffs = [4_000, 6_000, 2_500]; // V = Σ c_k (x/d)^k
    const model = compilePreset(load(mirrorPreset({ kind: 'polynomial', coefficients_V: coeffs }, 150))).model;
    const m = 1000 * U_KG;
    const qm = E_C / m;
    const accel = (x: number) => {
      const u = x / d;
      return (-qm * (coeffs[0] + 2 * coeffs[1] * u + 3 * coeffs[2] * u * u)) / d;
    };
    for (const U of [3_000, 8_000, 11_000]) {
      const v = Math.sqrt(2 * qm * U);
      const solver = new OdexSolverClass(2);
      solver.relativeTolerance = 1e-12;
      solver.absoluteTolerance = [1e-16, 1e-9];
      solver.denseOutput = true;
      // odex starts with steps of at least 1e-4 in its time unit (here seconds): cap them.
      solver.maxStepSize = 2e-7;
      let back = NaN;
      solver.solve((_t, y) => [y[1], accel(y[0])], 0, [0, v], 1e-3, (n, a, b, y, dense) => {
        if (n <= 1 || y[0] > 0 || !dense) return true;
        let lo = a;
        let hi = b;
        for (let i = 0; i < 200 && hi - lo > 0; i++) {
          const mid = 0.5 * (lo + hi);
          if (dense(0, mid) > 0) lo = mid;
          else hi = mid;
        }
        back = hi;
        return false;
      });
      const r = traceSingleIon(model, 1000, 5e-3, v);
      expect(r.fate).toBe(Fate.DETECTED);
      expect(Math.abs((r.t - 0.9 / v) / back - 1)).toBeLessThan(1e-9);
    }
  });

  it('a tabulated (piecewise-linear) profile is a stack of uniform stages, traced in closed form', () => {
    const table = compilePreset(load(mirrorPreset({ kind: 'table', points: [[0, 0], [50, 6_000], [200, 14_000]] }))).model;
    expect(table.mirror?.stages.length).toBe(2);
    expect(table.mirror?.profile).toBeNull();
  });
});
