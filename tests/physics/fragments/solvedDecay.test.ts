import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { createFieldMap } from '../../../src/fields/interpolate';
import { meshFromSpecs } from '../../../src/fields/rasterize';
import { allocateTraceResult } from '../../../src/ions/ensemble';
import { samplePopulation } from '../../../src/ions/population';
import type { AnalyserModel } from '../../../src/physics/analyser';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C, chargeToMass_C_per_kg } from '../../../src/physics/constants';
import { Fate } from '../../../src/physics/fates';
import type { FragmentModel } from '../../../src/physics/fragments/decayModel';
import { releaseVelocity } from '../../../src/physics/fragments/decaySampling';
import { createDecayPoint, SolvedDecayWalker, SolvedProductFlight } from '../../../src/physics/fragments/solvedDecay';
import { traceFragments } from '../../../src/physics/fragments/traceFragments';
import { Section } from '../../../src/physics/regions/contract';
import { createFlight, traceEnsemble } from '../../../src/physics/regions/driver';
import { createSolvedIonState, makeSolvedRegion, traceSolvedRegion } from '../../../src/physics/regions/solvedTracer';
import { Exit } from '../../../src/physics/fates';
import { createFieldSample, sampleField } from '../../../src/fields/interpolate';
import { compilePreset } from '../../../src/presets/compile';
import { checkFragments, compileFragments } from '../../../src/presets/compileFragments';
import { parsePresetText } from '../../../src/presets/load';
import type { Preset } from '../../../src/presets/schema';

type Doc = Record<string, any>;

/** The gridless demo (solved ring-stack mirror), every ion alike: at rest on the repeller, static extraction, on the axis. */
function gridless(decay: Doc | null, ions = 40, edit: (doc: Doc) => void = () => {}): Preset {
  const doc = JSON.parse(readFileSync('presets/demo-gridless-mirror.json', 'utf8')) as Doc;
  doc.source.extraction = { mode: 'static' };
  delete doc.source.repeller.hold_V;
  doc.ions.startVelocity = { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 };
  delete doc.ions.transverse;
  delete doc.acquisition;
  delete doc.analysis;
  doc.ions.species = [decay ? { ...doc.ions.species[0], decay } : doc.ions.species[0]];
  doc.run = { ions, seed: 5 };
  edit(doc);
  const r = parsePresetText(JSON.stringify(doc));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

/** Trace a preset's population with `model` (the preset's own unless given) and decay it. */
function decayRun(preset: Preset, model?: AnalyserModel) {
  const compiled = compilePreset(preset);
  const m = model ?? compiled.model;
  const ens = samplePopulation(compiled.population);
  const trace = allocateTraceResult(ens.count);
  traceEnsemble(m, ens, trace, { transferMap: false });
  const fragments = compileFragments(preset, compiled.population.species) as FragmentModel;
  const out = traceFragments(m, fragments, ens, trace, compiled.population.seed);
  return { model: m, ens, trace, fragments, out, mz: compiled.population.species[0].mz };
}

const driftDecay = (channels: Doc[], release = 0): Doc => ({ law: { kind: 'fraction', fraction: 1, region: 'drift' }, channels, kineticEnergyRelease_meV: release });

describe('decay in flight with solved-field regions', () => {
  it('the preset checks accept decay with a solved mirror and still refuse it with ionLoad.spaceCharge', () => {
    const preset = gridless(driftDecay([{ mz: 700, charge: 1, branching: 1 }]));
    expect(checkFragments(preset)).toEqual([]);
    const withSheets = { ...preset, ionLoad: { spaceCharge: { sheets: 20 } } } as unknown as Preset;
    const issues = checkFragments(withSheets);
    expect(issues.map((i) => i.message).join(' ')).toMatch(/ionLoad\.spaceCharge/);
  });

  it('a fragment formed in the first drift crosses the gridless mirror as an ion of its own q/m entering with the same state (direct trace, 1e-9)', () => {
    const mzF = 714.381;
    const { model, out, mz } = decayRun(gridless(driftDecay([{ mz: mzF, charge: 1, branching: 1 }]), 12));
    const fragment = out.products.find((p) => p.role === 'fragment')!;
    expect(fragment.trace.fate.length).toBe(12);
    const flight = createFlight(model);
    flight.setMz(mzF);
    const region = model.mirror!.solved!.region;
    for (let k = 0; k < fragment.trace.fate.length; k++) {
      expect(fragment.decayLeg[k]).toBe(Section.DRIFT);
      expect(fragment.trace.fate[k]).toBe(Fate.DETECTED);
      // Reference: straight to the mirror's entry plane, then the solved-field tracer alone with the fragment's q/m, then the return drift.
      const v = fragment.start_v_m_per_s[k];
      const tIn = fragment.decayTime_s[k] + (flight.plan.driftLength_m - fragment.start_z_m[k]) / v;
      const ion = createSolvedIonState();
      ion.t = tIn;
      ion.z = region.entryZ_m;
      ion.vz = v;
      expect(traceSolvedRegion(ion, region, chargeToMass_C_per_kg(mzF), model.maxFlightTime_s)).toBe(Exit.ENTRY);
      const tRef = ion.t + flight.plan.returnLength_m / -ion.vz;
      expect(rel(fragment.trace.flightTime_s[k], tRef)).toBeLessThan(1e-9);
      // The precursor's q/m (what its transfer map is fitted for) would give a clearly different time.
      const wrong = createSolvedIonState();
      wrong.t = tIn;
      wrong.z = region.entryZ_m;
      wrong.vz = v;
      traceSolvedRegion(wrong, region, chargeToMass_C_per_kg(mz), model.maxFlightTime_s);
      expect(rel(wrong.t, ion.t)).toBeGreaterThan(1e-3);
    }
  });

  it('a solved mirror of uniform field: a fragment formed in the drift with velocity v spends t = 2·m_f·v/(q·E) in it (derived; 1e-9)', () => {
    // Derivation: in a uniform retarding field E the fragment (mass m_f, charge q) decelerates at a = qE/m_f, stops
    // after v/a and comes back symmetrically: t = 2v/a = 2·m_f·v/(q·E) (uniform acceleration, textbook kinematics).
    // The solved mirror here has the exactly linear (harmonic) potential φ = E·z on a 1 mm mesh, which the bicubic
    // spline reproduces, so the solved field's own accuracy is that of the tracer. The far plane is open (no back plate).
    const E = 25_000; // V/m: the 5.8 kV precursors turn at 0.23 m, the far plane is at 7.5 kV
    const depth = 0.3; // m
    const raster = meshFromSpecs({ nr: 21, nz: 301, rMax_m: 0.02, zMin_m: 0, zMax_m: depth }, []);
    if (!raster.ok) throw new Error(JSON.stringify(raster.issues));
    const mesh = raster.mesh;
    const phi = new Float64Array(mesh.nr * mesh.nz);
    for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nr; i++) phi[j * mesh.nr + i] = E * j * mesh.hz_m;
    const base = compilePreset(gridless(null)).model;
    const solved = base.mirror!.solved!;
    const model: AnalyserModel = { ...base, mirror: { ...base.mirror!, solved: { ...solved, region: makeSolvedRegion(createFieldMap(mesh, phi), 0, depth) } } };
    const mzF = 700;
    const mzHeavy = 990; // 2+ precursor → 1+ fragment of 990 u: more energy per charge than the precursor, past the far plane
    const preset = gridless(driftDecay([{ mz: mzF, charge: 1, branching: 1 }]), 10);
    const { out } = decayRun(preset, model);
    const flight = createFlight(model);
    flight.setMz(mzF);
    const fragment = out.products.find((p) => p.role === 'fragment')!;
    const neutral = out.products.find((p) => p.role === 'complement')!;
    for (let k = 0; k < fragment.trace.fate.length; k++) {
      expect(fragment.trace.fate[k]).toBe(Fate.DETECTED);
      const v = fragment.start_v_m_per_s[k];
      const tMirror = fragment.trace.flightTime_s[k] - fragment.decayTime_s[k] - (flight.plan.driftLength_m - fragment.start_z_m[k]) / v - flight.plan.returnLength_m / v;
      expect(rel(tMirror, (2 * mzF * ATOMIC_MASS_CONSTANT_KG * v) / (ELEMENTARY_CHARGE_C * E))).toBeLessThan(1e-9);
      // The neutral partner flies straight through the open far plane: lost, with a fate of its own.
      expect(neutral.trace.fate[k]).toBe(Fate.NEUTRAL_LOST);
    }
    // Passing through: a singly charged fragment of a doubly charged precursor with more than half its mass.
    const heavy = gridless(null, 10, (doc) => {
      doc.ions.species = [{ label: 'invented 2+', mz: 550, charge: 2, abundance: 1, decay: driftDecay([{ mz: mzHeavy, charge: 1, branching: 1 }]) }];
    });
    const through = decayRun(heavy, model).out.products.find((p) => p.role === 'fragment')!;
    expect(Array.from(through.trace.fate)).toEqual(new Array(10).fill(Fate.PASSED_THROUGH_MIRROR));
  });

  it('the gridless demo: a neutral formed in the drift flies straight into the back plate; a heavy 1+ fragment of a 2+ precursor strikes it too', () => {
    const { out } = decayRun(gridless(driftDecay([{ neutralLoss: 'H2O', branching: 1 }]), 10));
    const neutral = out.products.find((p) => p.role === 'complement')!;
    expect(Array.from(neutral.trace.fate)).toEqual(new Array(10).fill(Fate.STRUCK_ELECTRODE));
    const heavy = gridless(null, 10, (doc) => {
      doc.ions.species = [{ label: 'invented 2+', mz: 550, charge: 2, abundance: 1, decay: driftDecay([{ mz: 990, charge: 1, branching: 1 }]) }];
    });
    const struck = decayRun(heavy).out.products.find((p) => p.role === 'fragment')!;
    expect(Array.from(struck.trace.fate)).toEqual(new Array(10).fill(Fate.STRUCK_ELECTRODE));
  });

  it('decay inside the solved mirror: the state is continuous at the stop, and the fragment takes m_f/m_p of the kinetic energy plus its release share', () => {
    const preset = gridless(null, 4);
    const compiled = compilePreset(preset);
    const model = compiled.model;
    const ens = samplePopulation(compiled.population);
    const mzP = compiled.population.species[0].mz;
    const walker = new SolvedDecayWalker(model, null);
    walker.setMz(mzP);
    const at = createDecayPoint();
    expect(walker.flyTo(ens, 0, Infinity, at)).toBe(false);
    expect(walker.endFate).toBe(Fate.DETECTED);
    const tWhole = walker.end_s;
    const tIn = walker.entry_s[Section.MIRROR];
    const tOut = walker.entry_s[Section.RETURN];
    const region = model.mirror!.solved!.region;
    const sample = createFieldSample();
    const mP = mzP * ATOMIC_MASS_CONSTANT_KG;
    const qP = ELEMENTARY_CHARGE_C;
    const same = new SolvedProductFlight(model, null, { label: 'same', mass_u: mzP, charge: 1, mz: mzP });
    for (const f of [0.1, 0.35, 0.5, 0.8]) { // 0.5: at the turning point
      const tStop = tIn + f * (tOut - tIn);
      expect(walker.flyTo(ens, 0, tStop, at)).toBe(true);
      expect(at.section).toBe(Section.MIRROR);
      expect(at.t).toBe(tStop);
      // Continued with the precursor's own q/m from the stopped state, it arrives as if never stopped, to the tracer's accuracy.
      expect(same.fly(at, 0, 0, 0)).toBe(Fate.DETECTED);
      expect(rel(same.t, tWhole)).toBeLessThan(1e-6); // the tracer: 2.2e-7 rms, largest 5e-7 (solvedTracer.ts)
      // Position and velocity continuous: stopped 1 ns later it is where the state extrapolates to (second order).
      const later = createDecayPoint();
      walker.flyTo(ens, 0, tStop + 1e-9, later);
      expect(Math.abs(later.z - (at.z + at.v * 1e-9))).toBeLessThan(1e-8);
      // Energy: precursor at the decay point = its drift energy − q·φ there (φ = 0 in the drift, energy conserved).
      sampleField(region.map, Math.hypot(at.x, at.y), at.z + region.entryZ_m, sample);
      const keP = 0.5 * mP * (at.v * at.v + at.vx * at.vx + at.vy * at.vy);
      const vDrift = same.speed;
      const eDrift = 0.5 * mP * vDrift * vDrift;
      // Near the turning point the kinetic energy is ~0: errors are measured against the drift energy.
      expect(Math.abs(keP - (eDrift - qP * sample.potential_V)) / eDrift).toBeLessThan(1e-6);
      // The fragment (same velocity, no release) has m_f/m_p of it, and leaves the mirror with that plus q·φ.
      const mzF = 714.381;
      const mF = mzF * ATOMIC_MASS_CONSTANT_KG;
      const frag = new SolvedProductFlight(model, null, { label: 'f', mass_u: mzF, charge: 1, mz: mzF });
      expect(frag.fly(at, 0, 0, 0)).toBe(Fate.DETECTED);
      const keOut = 0.5 * mF * frag.speed * frag.speed;
      expect(Math.abs(keOut - ((mzF / mzP) * keP + qP * sample.potential_V)) / eDrift).toBeLessThan(1e-6);
      // With a release T: the two products share KE_p + T (momentum conservation, Cooks et al. "Metastable Ions" 1973, from memory).
      const T = 0.05 * ELEMENTARY_CHARGE_C;
      const mN = mP - mF;
      const kick = releaseVelocity(new Float64Array(3), T, mF, mN, 0.3, 0.7);
      const ke = (m: number, s: number) => 0.5 * m * ((at.v + s * kick[0]) ** 2 + (at.vx + s * kick[1]) ** 2 + (at.vy + s * kick[2]) ** 2);
      expect(Math.abs(ke(mF, 1) + ke(mN, -mF / mN) - (keP + T)) / eDrift).toBeLessThan(1e-12);
    }
  });

  it('decay inside the solved (aperture) source: stopped and continued with the same q/m arrives as if never stopped (tracer accuracy)', () => {
    const doc = JSON.parse(readFileSync('presets/demo-aperture-source.json', 'utf8')) as Doc;
    doc.run = { ions: 6, seed: 2 };
    doc.ions.species = [doc.ions.species[0]];
    delete doc.analysis;
    const r = parsePresetText(JSON.stringify(doc));
    if (!r.ok) throw new Error(JSON.stringify(r.issues));
    const compiled = compilePreset(r.value);
    const model = compiled.model;
    expect(model.source.solved).toBeTruthy();
    const ens = samplePopulation(compiled.population);
    const mzP = compiled.population.species[0].mz;
    const walker = new SolvedDecayWalker(model, null);
    walker.setMz(mzP);
    const same = new SolvedProductFlight(model, null, { label: 'same', mass_u: mzP, charge: 1, mz: mzP });
    const at = createDecayPoint();
    let checked = 0;
    for (let i = 0; i < ens.count; i++) {
      walker.flyTo(ens, i, Infinity, at);
      if (walker.endFate !== Fate.DETECTED) continue;
      const tWhole = walker.end_s;
      const tOut = walker.entry_s[Section.DRIFT];
      for (const f of [0.3, 0.9]) {
        expect(walker.flyTo(ens, i, f * tOut, at)).toBe(true);
        expect(at.section).toBe(Section.SOURCE);
        expect(same.fly(at, 0, 0, 0)).toBe(Fate.DETECTED);
        expect(rel(same.t, tWhole)).toBeLessThan(1e-6);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(0);
  });

  it('a solved mirror preset with decay channels runs end to end: fragments detected, precursors DECAYED, every product with a fate', async () => {
    const { simulate } = await import('../../../src/simulation/run');
    const preset = gridless({ law: { kind: 'lifetime', lifetime_us: 40 }, channels: [{ neutralLoss: 'H2O', branching: 0.5 }, { mz: 714.381, charge: 1, branching: 0.5 }] }, 300);
    const run = simulate(preset);
    const species = run.report.species[0];
    expect(species.fates.decayed).toBeGreaterThan(100);
    for (const p of run.fragments!.trace.products) for (const fate of p.trace.fate) expect(fate).not.toBe(Fate.UNSET);
    const fragment = run.fragments!.trace.products.find((p) => p.role === 'fragment' && p.channel === 1)!;
    const detected = Array.from(fragment.trace.fate).filter((f) => f === Fate.DETECTED).length;
    expect(detected).toBeGreaterThan(0.9 * fragment.trace.fate.length);
  });
});
