import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compilePreset } from '../../../src/presets/compile';
import { parsePresetText } from '../../../src/presets/load';
import type { Preset } from '../../../src/presets/schema';
import type { AnalyserModel } from '../../../src/physics/analyser';
import { createExactPlan, prepareExactPlan } from '../../../src/physics/exactEngine';
import { Fate } from '../../../src/physics/fates';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../../src/physics/constants';
import { Leg } from '../../../src/physics/fragments/decayModel';
import { copyFlightState, createFlightState, fly, Flight, startFlight } from '../../../src/physics/fragments/flight';
import { AxialIntegrator } from '../../../src/physics/regions/axialIntegrator';
import { traceSingleIon } from '../../../src/simulation/singleIon';

function load(name: string, edit: (doc: Record<string, unknown>) => void = () => {}): Preset {
  const doc = JSON.parse(readFileSync(`presets/${name}`, 'utf8')) as Record<string, unknown>;
  edit(doc);
  const r = parsePresetText(JSON.stringify(doc));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

function flyWhole(model: AnalyserModel, mz: number, z0: number, v0: number) {
  const plan = prepareExactPlan(createExactPlan(), model, mz);
  const st = startFlight(createFlightState(), z0, v0);
  const r = fly(st, plan, model, null, Infinity, new AxialIntegrator());
  return { r, st };
}

/** Precursor to tStop, then the product (own m/z, optional axial kick) on to its fate. */
function decayAt(model: AnalyserModel, mzP: number, mzF: number, z0: number, v0: number, tStop: number, kick = 0) {
  const planP = prepareExactPlan(createExactPlan(), model, mzP);
  const planF = prepareExactPlan(createExactPlan(), model, mzF);
  const integrator = new AxialIntegrator();
  const st = startFlight(createFlightState(), z0, v0);
  expect(fly(st, planP, model, null, tStop, integrator)).toBe(Flight.STOPPED);
  const at = copyFlightState(createFlightState(), st);
  st.v += kick;
  fly(st, planF, model, null, Infinity, integrator);
  return { at, st };
}

describe('leg-by-leg flight from any state', () => {
  for (const name of ['demo-linear-delayed.json', 'demo-reflectron-single.json', 'demo-reflectron-dual.json']) {
    it(`a whole flight equals the engine's single-ion trace (${name}, 1e-12 relative)`, () => {
      const { model, population } = compilePreset(load(name));
      for (const v0 of [0, 300, 700]) {
        const mz = population.species[0].mz;
        const ref = traceSingleIon(model, mz, 0, v0);
        const { r, st } = flyWhole(model, mz, 0, v0);
        expect(r).toBe(Flight.ENDED);
        expect(st.fate).toBe(ref.fate);
        expect(rel(st.t, ref.t)).toBeLessThan(1e-12);
      }
    });
  }

  it('an ion stopped anywhere and continued with the same m/z arrives as if never stopped (continuity, 1e-12)', () => {
    const { model, population } = compilePreset(load('demo-reflectron-dual.json'));
    const mz = population.species[1].mz;
    const whole = flyWhole(model, mz, 0, 400).st.t;
    for (const f of [0.01, 0.02, 0.03, 0.1, 0.3, 0.5, 0.62, 0.7, 0.9, 0.99]) {
      const { st } = decayAt(model, mz, mz, 0, 400, f * whole);
      expect(st.fate).toBe(Fate.DETECTED);
      expect(rel(st.t, whole)).toBeLessThan(1e-12);
    }
  });

  it('a rising-pulse source and a polynomial mirror: stopped and continued equals the whole flight (1e-9)', () => {
    const preset = load('demo-reflectron-single.json', (d) => {
      (d.source as { extraction: unknown }).extraction = { mode: 'delayed', delay_ns: 406.2, rise: { shape: 'exponential', timeConstant_ns: 20 } };
      d.mirror = { type: 'profile', depth_mm: 350, profile: { kind: 'polynomial', coefficients_V: [26000, 3000] }, returnLength_mm: 500 };
    });
    const { model, population } = compilePreset(preset);
    const mz = population.species[0].mz;
    const ref = traceSingleIon(model, mz, 0, 400);
    const whole = flyWhole(model, mz, 0, 400).st;
    expect(whole.fate).toBe(ref.fate);
    expect(rel(whole.t, ref.t)).toBeLessThan(1e-9);
    for (const t of [300e-9, 420e-9, 450e-9, 0.5 * whole.t, 0.7 * whole.t]) {
      const { st } = decayAt(model, mz, mz, 0, 400, t);
      expect(rel(st.t, whole.t)).toBeLessThan(1e-9);
    }
  });

  it('linear instrument: a fragment formed in the field-free drift arrives with its precursor (common practice, textbook; 1e-12)', () => {
    const preset = load('demo-linear-delayed.json', (d) => {
      (d.detector as Record<string, unknown>).postAcceleration = undefined;
    });
    const { model, population } = compilePreset(preset);
    const mz = population.species[0].mz;
    const whole = flyWhole(model, mz, 0, 400).st;
    const { at, st } = decayAt(model, mz, 0.6 * mz, 0, 400, 0.5 * whole.t);
    expect(at.leg).toBe(Leg.DRIFT);
    expect(st.fate).toBe(Fate.DETECTED);
    expect(rel(st.t, whole.t)).toBeLessThan(1e-12);
  });

  it('single-stage uniform mirror: a fragment formed in the drift with velocity v spends 2·m_f·v/(q·E) in it (derived; 1e-9)', () => {
    // Uniform field E = (V_back − V_drift)/depth decelerates the fragment at q·E/m_f: in for v·m_f/(q·E), out the same.
    const preset = load('demo-reflectron-single.json');
    const { model, population } = compilePreset(preset);
    const mzP = population.species[3].mz;
    const whole = flyWhole(model, mzP, 0, 400).st;
    const tDrift = 0.5 * (whole.legEntry_s[Leg.DRIFT] + whole.legEntry_s[Leg.MIRROR]);
    for (const ratio of [0.3, 0.5, 0.8]) {
      const mzF = ratio * mzP;
      const { at, st } = decayAt(model, mzP, mzF, 0, 400, tDrift);
      expect(at.leg).toBe(Leg.DRIFT);
      const E = 29222 / 0.35;
      const mF = mzF * ATOMIC_MASS_CONSTANT_KG;
      const expected = (2 * mF * at.v) / (ELEMENTARY_CHARGE_C * E);
      const inMirror = st.legEntry_s[Leg.RETURN] - st.legEntry_s[Leg.MIRROR];
      expect(rel(inMirror, expected)).toBeLessThan(1e-9);
      // Post-source-decay arrival: the precursor's time to the decay, the rest of the drift, the mirror, the return drift.
      const L1 = 0.7;
      const L2 = 0.5;
      const arrival = at.t + (L1 - at.z) / at.v + expected + L2 / at.v;
      expect(rel(st.t, arrival)).toBeLessThan(1e-12);
    }
  });

  it('harmonic mirror: the time in the mirror is the half period π·sqrt(m_f/(q·k)) whatever the fragment energy (textbook; 1e-9)', () => {
    const preset = load('demo-reflectron-single.json', (d) => {
      d.mirror = { type: 'profile', depth_mm: 400, profile: { kind: 'harmonic', backPlate_V: 40000 }, returnLength_mm: 500 };
    });
    const { model, population } = compilePreset(preset);
    const mzP = population.species[3].mz;
    const whole = flyWhole(model, mzP, 0, 400).st;
    const tDrift = 0.5 * (whole.legEntry_s[Leg.DRIFT] + whole.legEntry_s[Leg.MIRROR]);
    // V = V_d + (V_b − V_d)(x/depth)² = ½·k·x², so k = 2·40000/0.4² V/m².
    const k = (2 * 40000) / 0.4 ** 2;
    for (const ratio of [0.25, 0.5, 0.75, 1]) {
      const mzF = ratio * mzP;
      const { st } = decayAt(model, mzP, mzF, 0, 400, tDrift);
      const half = Math.PI * Math.sqrt((mzF * ATOMIC_MASS_CONSTANT_KG) / (ELEMENTARY_CHARGE_C * k));
      expect(rel(st.legEntry_s[Leg.RETURN] - st.legEntry_s[Leg.MIRROR], half)).toBeLessThan(1e-9);
    }
  });

  it('a fragment formed in the accelerating field arrives between the precursor and a fragment formed at the start (linear)', () => {
    const preset = load('demo-linear-delayed.json');
    const { model, population } = compilePreset(preset);
    const mz = population.species[0].mz;
    const whole = flyWhole(model, mz, 0, 400).st;
    const tExit = whole.legEntry_s[Leg.DRIFT];
    const early = decayAt(model, mz, 0.6 * mz, 0, 400, 1e-12).st.t; // formed before extraction: full energy of its own
    let last = early;
    for (const f of [0.2, 0.5, 0.8, 0.95]) {
      // Decays after the pulse, inside the source: the later, the closer to the precursor.
      const t = model.source.delay_s + f * (tExit - model.source.delay_s);
      const { at, st } = decayAt(model, mz, 0.6 * mz, 0, 400, t);
      expect(at.leg).toBe(Leg.SOURCE);
      expect(st.fate).toBe(Fate.DETECTED);
      expect(st.t).toBeGreaterThan(last);
      last = st.t;
    }
    expect(last).toBeLessThan(whole.t);
  });

  it('a neutral keeps its velocity: straight through the mirror to the detector behind it', () => {
    const { model, population } = compilePreset(load('demo-reflectron-single.json'));
    const mz = population.species[0].mz;
    const planP = prepareExactPlan(createExactPlan(), model, mz);
    const planN = prepareExactPlan(createExactPlan(), model, Infinity);
    const integrator = new AxialIntegrator();
    const st = startFlight(createFlightState(), 0, 400);
    fly(st, planP, model, null, 5e-6, integrator);
    expect(st.leg).toBe(Leg.DRIFT);
    const { t, z, v } = st;
    const behind = { distance_m: 0.6, radius_m: Infinity };
    fly(st, planN, model, behind, Infinity, integrator);
    expect(st.fate).toBe(Fate.DETECTED_BEHIND_MIRROR);
    expect(st.v).toBe(v);
    expect(rel(st.t, t + (0.7 - z + 0.6) / v)).toBeLessThan(1e-12);
    const lost = startFlight(createFlightState(), 0, 400);
    fly(lost, planP, model, null, 5e-6, integrator);
    fly(lost, planN, model, null, Infinity, integrator);
    expect(lost.fate).toBe(Fate.NEUTRAL_LOST);
  });
});
