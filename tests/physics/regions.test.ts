/**
 * The region model's contract (src/physics/regions/contract.ts): an ion can be started in any
 * section with any state and any charge-to-mass ratio, flights are independent of each other
 * (no shared per-ion state), a run split into ranges gives the same numbers, and the segment
 * observer sees the path the kernels flew.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import type { AnalyserModel } from '../../src/physics/analyser';
import { chargeToMass_C_per_kg } from '../../src/physics/constants';
import { Fate } from '../../src/physics/fates';
import { Section, createIonState, startIonState, type IonState, type SectionCode, type SegmentObserver } from '../../src/physics/regions/contract';
import { createFlight, traceEnsemble } from '../../src/physics/regions/driver';
import { createExactPlan, prepareExactPlan } from '../../src/physics/exactEngine';
import { createTrajectory, traceTrajectory, TrajectoryRecorder } from '../../src/physics/trajectory';
import { compilePreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';
import { buildModel, relErr } from '../helpers';

function preset(name: string) {
  const loaded = validatePreset(JSON.parse(readFileSync(new URL(`../../presets/${name}`, import.meta.url), 'utf8')));
  if (!loaded.ok) throw new Error(name);
  return compilePreset(loaded.value);
}

/** Copies of the state at the entry of every section, as an observer sees them. */
class EntryStates implements SegmentObserver {
  readonly at = new Map<SectionCode, IonState>();
  enter(section: SectionCode, st: Readonly<IonState>): void {
    this.at.set(section, { ...st });
  }
  segment(): void {}
}

describe('starting an ion in any section', () => {
  const reflectron = preset('demo-reflectron-dual.json');

  it('from the state a full flight had at a section entry, the rest of the flight is the same to the bit (closed form)', () => {
    const ens = samplePopulation({ ...reflectron.population, totalIons: 200, seed: 3 });
    const flight = createFlight(reflectron.model);
    const full = createIonState();
    let checked = 0;
    for (let s = 0; s < ens.species.length; s++) {
      flight.setMz(ens.species[s].mz);
      for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
        const entries = new EntryStates();
        startIonState(full, ens.z0_m[i], ens.vz0_m_per_s[i]);
        flight.fly(full, Section.SOURCE, entries);
        for (const [section, at] of entries.at) {
          if (section === Section.SOURCE) continue;
          const restarted = { ...at };
          flight.fly(restarted, section);
          expect([restarted.fate, restarted.t, restarted.v, restarted.w]).toEqual([full.fate, full.t, full.v, full.w]);
          checked++;
        }
      }
    }
    expect(checked).toBe(600); // drift, mirror and return leg of each of the 200 ions
  });

  it('inside the stage mirror (a state on the way in), the flight time matches the full flight to rounding', () => {
    const flight = createFlight(reflectron.model);
    flight.setMz(1336.7);
    // The path of one ion, with the mirror segments in the mirror's own frame (depth behind the entrance grid).
    const mirrorSegments: number[][] = [];
    const observer: SegmentObserver = {
      segment(section, stage, t0, dt, z0, v0, a) {
        if (section === Section.MIRROR) mirrorSegments.push([stage, t0, dt, z0, v0, a]);
      },
    };
    const full = startIonState(createIonState(), 1.5e-3, 200);
    flight.fly(full, Section.SOURCE, observer);
    expect(full.fate).toBe(Fate.DETECTED);
    // Two thirds into each segment on the way in (v0 > 0): position and velocity by uniform-field kinematics.
    let checked = 0;
    for (const [, t0, dt, z0, v0, a] of mirrorSegments) {
      if (!(v0 > 0)) continue;
      const tau = (2 / 3) * dt;
      const st = createIonState();
      st.t = t0 + tau;
      st.z = z0 + v0 * tau + 0.5 * a * tau * tau;
      st.v = v0 + a * tau;
      st.w = full.w; // grids: the mirror's are all fully open here
      flight.fly(st, Section.MIRROR);
      expect(st.fate).toBe(Fate.DETECTED);
      expect(relErr(st.t, full.t)).toBeLessThan(1e-13);
      checked++;
    }
    expect(checked).toBeGreaterThanOrEqual(2); // both stages of the dual-stage mirror
  });

  it('a fragment starting in the drift with the parent’s speed and twice its q/m spends half the time in a uniform mirror stage (t = 2v/|a|)', () => {
    // Uniform-field kinematics, common practice, no source: in a retarding field of acceleration a
    // an ion entering at speed v turns after v/|a| and leaves after 2v/|a|, a = (q/m)·ΔV/L.
    const model = buildModel({ repeller_V: 20_000, gap1_m: 0.005, drift_m: 1.0, mirror: { stages: [{ length_m: 0.3, exitPotential_V: 24_000 }], returnLength_m: 0.8 } });
    const parentMz = 1000;
    const flight = createFlight(model);
    flight.setMz(parentMz);
    const entries = new EntryStates();
    const parent = startIonState(createIonState(), 0, 0);
    flight.fly(parent, Section.SOURCE, entries);
    expect(parent.fate).toBe(Fate.DETECTED);
    const atDrift = entries.at.get(Section.DRIFT)!;
    const v = atDrift.v;
    const fragmentQOverM = 2 * chargeToMass_C_per_kg(parentMz);
    flight.setChargeToMass(fragmentQOverM);
    const fragment = { ...atDrift };
    flight.fly(fragment, Section.DRIFT);
    expect(fragment.fate).toBe(Fate.DETECTED);
    const aFragment = (fragmentQOverM * 24_000) / 0.3;
    expect((v * v) / (2 * aFragment)).toBeLessThan(0.3); // it turns inside the stage
    const expected = atDrift.t + 1.0 / v + (2 * v) / aFragment + 0.8 / v;
    expect(relErr(fragment.t, expected)).toBeLessThan(1e-14);
    // The parent (half the q/m) spends twice as long in the mirror.
    const aParent = aFragment / 2;
    expect(relErr(parent.t - fragment.t, (2 * v) / aParent - (2 * v) / aFragment)).toBeLessThan(1e-9);
  });
});

describe('flights are independent and runs can be split', () => {
  const gridless = preset('demo-gridless-mirror.json');
  const reflectron = preset('demo-reflectron-single.json');
  const profileModel = (): AnalyserModel => {
    const m = reflectron.model;
    const mirror = m.mirror!;
    let depth = 0;
    for (const stage of mirror.stages) depth += stage.length_m;
    const top = mirror.stages[mirror.stages.length - 1].exitPotential_V - m.drift.potential_V;
    return { ...m, mirror: { ...mirror, stages: [], profile: { depth_m: depth, coefficients_V: Float64Array.of(0.7 * top, 0.3 * top) } } };
  };

  it('two flights interleaved ion by ion give what each gives alone (solved field and integrated profile)', () => {
    const a = { model: gridless.model, ens: samplePopulation({ ...gridless.population, totalIons: 40, seed: 5 }) };
    const b = { model: profileModel(), ens: samplePopulation({ ...reflectron.population, totalIons: 40, seed: 6 }) };
    const alone = [a, b].map(({ model, ens }) => {
      const out = allocateTraceResult(ens.count);
      traceEnsemble(model, ens, out);
      return out;
    });
    const flights = [a, b].map(({ model }) => createFlight(model));
    const st = createIonState();
    for (let i = 0; i < 40; i++)
      [a, b].forEach(({ ens }, k) => {
        const s = ens.speciesStart.findIndex((start, j) => i >= start && i < ens.speciesStart[j + 1]);
        flights[k].setMz(ens.species[s].mz);
        startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i], ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
        flights[k].fly(st);
        expect([st.fate, st.t, st.w]).toEqual([alone[k].fate[i], alone[k].flightTime_s[i], alone[k].weight[i]]);
      });
  });

  it('a run traced in two ranges equals the run traced at once (closed form over blocks; solved field ion by ion)', () => {
    // Integrated regions carry the first step of the previous ion, so there a split agrees to the integration tolerance only.
    for (const c of [reflectron, gridless]) {
      const ens = samplePopulation({ ...c.population, totalIons: c === gridless ? 60 : 5000, seed: 9 });
      const once = allocateTraceResult(ens.count);
      traceEnsemble(c.model, ens, once);
      const split = allocateTraceResult(ens.count);
      const cut = Math.floor(ens.count * 0.37);
      traceEnsemble(c.model, ens, split, { from: 0, to: cut });
      traceEnsemble(c.model, ens, split, { from: cut, to: ens.count });
      expect(split).toEqual(once);
    }
  });
});

describe('the segment observer', () => {
  const reflectron = preset('demo-reflectron-dual.json');

  it('records through the driver the same paths as traceTrajectory', () => {
    const ens = samplePopulation({ ...reflectron.population, totalIons: 24, seed: 4 });
    const out = allocateTraceResult(ens.count);
    const plan = createExactPlan();
    const recorded = createTrajectory();
    const recorder = new TrajectoryRecorder(recorded);
    const reference = createTrajectory();
    let compared = 0;
    const observer: SegmentObserver = {
      begin(i) {
        const s = ens.speciesStart.findIndex((start, j) => i >= start && i < ens.speciesStart[j + 1]);
        prepareExactPlan(plan, reflectron.model, ens.species[s].mz);
        recorder.reset(plan);
      },
      enter: (section, st) => recorder.enter(section, st),
      segment: (...args) => recorder.segment(...args),
      end(i, st) {
        recorder.end(i, st);
        traceTrajectory(reference, plan, ens.z0_m[i], ens.vz0_m_per_s[i]);
        expect(recorded.count).toBe(reference.count);
        expect(Array.from(recorded.t0_s.subarray(0, recorded.count))).toEqual(Array.from(reference.t0_s.subarray(0, reference.count)));
        expect(Array.from(recorded.x0_m.subarray(0, recorded.count))).toEqual(Array.from(reference.x0_m.subarray(0, reference.count)));
        expect([recorded.fate, recorded.flightTime_s]).toEqual([reference.fate, reference.flightTime_s]);
        compared++;
      },
    };
    traceEnsemble(reflectron.model, ens, out, { observer });
    expect(compared).toBe(ens.count);
  });

  it('integrated crossings are reported as joined chords: each segment starts where and when the last one ended', () => {
    const model = { ...reflectron.model, forceIntegrator: true };
    const ens = samplePopulation({ ...reflectron.population, totalIons: 8, seed: 2 });
    const out = allocateTraceResult(ens.count);
    let last: { t: number; section: number; z: number } | null = null;
    let segments = 0;
    const observer: SegmentObserver = {
      begin: () => (last = null),
      segment(section, _stage, t0, dt, z0, v0, a) {
        if (last !== null) {
          expect(relErr(t0, last.t)).toBeLessThan(1e-15);
          if (section === last.section && section !== Section.SOURCE) expect(Math.abs(z0 - last.z)).toBeLessThan(1e-12);
        }
        last = { t: t0 + dt, section, z: z0 + v0 * dt + 0.5 * a * dt * dt };
        segments++;
      },
      end(_i, st) {
        expect(st.fate).toBe(Fate.DETECTED);
        expect(relErr(last!.t, st.t)).toBeLessThan(1e-15);
      },
    };
    traceEnsemble(model, ens, out, { observer });
    expect(segments).toBeGreaterThan(ens.count * 4);
  });
});
