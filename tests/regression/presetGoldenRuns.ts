/**
 * Seeded runs of every shipped preset (and of model variants that reach the engine paths no shipped
 * preset uses: rising pulses of each shape, a polynomial mirror, the forced integrator, the
 * integrated pulse, the solved-mirror and solved-source transfer maps), reduced to digests of the traced arrays.
 * tests/regression/presetGolden.test.ts compares them with the committed fixture bit for bit;
 * scripts/write-golden.ts rewrites the fixture, which is done only when a number is meant to change.
 */
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { allocateTraceResult, type Ensemble, type TraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import { needsIntegrator, type AnalyserModel } from '../../src/physics/analyser';
import { applyDetectorPlane, createExactPlan, prepareExactPlan, traceExact } from '../../src/physics/exactEngine';
import { countFates, type FateCounts } from '../../src/physics/fates';
import { traceMixed } from '../../src/physics/tracer';
import { createTrajectory, traceTrajectory } from '../../src/physics/trajectory';
import { compilePreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';
import { traceSingleIon } from '../../src/simulation/singleIon';
import { b2Preset } from '../../bench/problems/b2';

export interface SpeciesDigest {
  readonly mz: number;
  readonly ions: number;
  /** sha256 of the Float64Array bytes of the flight times. */
  readonly flightTime: string;
  /** sha256 of fate, final speed, weight and detector-plane x, y (in that order). */
  readonly rest: string;
  readonly fates: Partial<FateCounts>;
  /** Readable figures for a failure message: first ion's time and the mean over detected ions (s). */
  readonly firstFlightTime_s: number;
  readonly meanDetected_s: number | null;
}

export interface CaseDigest {
  readonly engine: 'exact' | 'mixed';
  readonly species: SpeciesDigest[];
  /** Axial paths of the first ions (exact presets only): segment arrays digested, fate and time kept. */
  readonly trajectories?: string;
  /** traceSingleIon at the first ion's start, per species: time, fate, speed. */
  readonly singleIon?: readonly (readonly [number, number, number])[];
}

export type GoldenFixture = Record<string, CaseDigest>;

function sha(...arrays: ArrayBufferView[]): string {
  const h = createHash('sha256');
  for (const a of arrays) h.update(new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
  return h.digest('hex');
}

function nonZero(counts: FateCounts): Partial<FateCounts> {
  const out: Partial<FateCounts> = {};
  for (const [k, v] of Object.entries(counts)) if (v > 0) out[k as keyof FateCounts] = v;
  return out;
}

function digestRun(model: AnalyserModel, ens: Ensemble, out: TraceResult, engine: 'exact' | 'mixed'): CaseDigest {
  const species: SpeciesDigest[] = [];
  for (let s = 0; s < ens.species.length; s++) {
    const a = ens.speciesStart[s];
    const b = ens.speciesStart[s + 1];
    let sum = 0;
    let n = 0;
    for (let i = a; i < b; i++)
      if (out.fate[i] === 1) {
        sum += out.flightTime_s[i];
        n++;
      }
    species.push({
      mz: ens.species[s].mz,
      ions: b - a,
      flightTime: sha(out.flightTime_s.subarray(a, b)),
      rest: sha(out.fate.subarray(a, b), out.finalSpeed_m_per_s.subarray(a, b), out.weight.subarray(a, b), out.detectorX_m.subarray(a, b), out.detectorY_m.subarray(a, b)),
      fates: nonZero(countFates(out.fate, a, b)),
      firstFlightTime_s: out.flightTime_s[a],
      meanDetected_s: n ? sum / n : null,
    });
  }
  const digest: CaseDigest = { engine, species };
  const singleIon = ens.species.map((sp, s) => {
    const i = ens.speciesStart[s];
    const r = traceSingleIon(model, sp.mz, ens.z0_m[i], ens.vz0_m_per_s[i]);
    return [r.t, r.fate, r.v] as const;
  });
  if (needsIntegrator(model)) return { ...digest, singleIon };
  // Paths of the first 8 ions of each species, as the scene draws them.
  const plan = createExactPlan();
  const tr = createTrajectory();
  const h = createHash('sha256');
  for (let s = 0; s < ens.species.length; s++) {
    prepareExactPlan(plan, model, ens.species[s].mz);
    for (let i = ens.speciesStart[s]; i < Math.min(ens.speciesStart[s + 1], ens.speciesStart[s] + 8); i++) {
      traceTrajectory(tr, plan, ens.z0_m[i], ens.vz0_m_per_s[i]);
      const k = tr.count;
      for (const arr of [tr.region, tr.stage, tr.t0_s, tr.dt_s, tr.x0_m, tr.v0_m_per_s, tr.a_m_per_s2]) {
        const view = arr.subarray(0, k);
        h.update(new Uint8Array(view.buffer, view.byteOffset, view.byteLength));
      }
      h.update(new Float64Array([k, tr.fate, tr.flightTime_s, tr.sourceExit_s, tr.driftSpeed_m_per_s]) as unknown as Uint8Array);
    }
  }
  return { ...digest, singleIon, trajectories: h.digest('hex') };
}

/** Trace `model` over a fresh seeded sample with the engine simulate() would choose (or the mixed tracer when asked). */
function runModel(model: AnalyserModel, population: ReturnType<typeof compilePreset>['population'], ions: number, seed: number, forceMixed = false): CaseDigest {
  const ens = samplePopulation({ ...population, totalIons: ions, seed });
  const out = allocateTraceResult(ens.count);
  const mixed = forceMixed || needsIntegrator(model);
  if (mixed) traceMixed(model, ens, out);
  else traceExact(model, ens, out);
  applyDetectorPlane(model, ens, out);
  return digestRun(model, ens, out, mixed ? 'mixed' : 'exact');
}

function compileInput(doc: unknown, name: string) {
  const loaded = validatePreset(doc);
  if (!loaded.ok) throw new Error(`${name}: ${JSON.stringify(loaded.issues)}`);
  return compilePreset(loaded.value);
}

const PRESET_DIR = new URL('../../presets/', import.meta.url);

export function shippedPresetNames(): string[] {
  return readdirSync(PRESET_DIR)
    .filter((f) => f.endsWith('.json') && f !== 'preset.schema.json')
    .sort();
}

/** Ions per case: enough to reach every fate a preset produces, few enough for seconds. */
const IDEAL_IONS = 3000;
const INTEGRATED_IONS = 300;
const SOLVED_IONS = 200;

/** Every golden case by name; each runs only when asked for, so a test can report per case. */
export function goldenCases(): Record<string, () => CaseDigest> {
  const cases: Record<string, () => CaseDigest> = {};
  for (const file of shippedPresetNames()) {
    const doc = JSON.parse(readFileSync(new URL(file, PRESET_DIR), 'utf8')) as unknown;
    const compiled = () => compileInput(doc, file);
    const solved = () => compiled().model.mirror?.solved != null || compiled().model.source.solved != null;
    cases[`${file} default`] = () => {
      const c = compiled();
      return runModel(c.model, c.population, solved() ? SOLVED_IONS : IDEAL_IONS, 11);
    };
    cases[`${file} forced integrator`] = () => {
      const c = compiled();
      return runModel({ ...c.model, forceIntegrator: true }, c.population, solved() ? SOLVED_IONS / 2 : INTEGRATED_IONS, 12);
    };
  }
  const single = JSON.parse(readFileSync(new URL('demo-reflectron-single.json', PRESET_DIR), 'utf8')) as unknown;
  const rise = (r: AnalyserModel['source']['rise']) => () => {
    const c = compileInput(single, 'single');
    return runModel({ ...c.model, source: { ...c.model.source, rise: r } }, c.population, INTEGRATED_IONS, 13);
  };
  cases['single, linear rise 20 ns'] = rise({ kind: 'linear', riseTime_s: 20e-9 });
  cases['single, exponential rise 15 ns'] = rise({ kind: 'exponential', timeConstant_s: 15e-9 });
  cases['single, table drive of the repeller'] = () => {
    const c = compileInput(single, 'single');
    const p = c.model.source.planes[0];
    const d = c.model.source.delay_s;
    const table = { time_s: Float64Array.of(0, d, d + 10e-9, d + 40e-9), potential_V: Float64Array.of(p.hold_V, p.hold_V, p.hold_V + 0.8 * (p.final_V - p.hold_V), p.final_V) };
    const tables = c.model.source.planes.map((_, k) => (k === 0 ? table : null));
    return runModel({ ...c.model, source: { ...c.model.source, rise: { kind: 'table', tables } } }, c.population, INTEGRATED_IONS, 14);
  };
  cases['single, exponential rise, integrated pulse'] = () => {
    const c = compileInput(single, 'single');
    return runModel({ ...c.model, integratePulse: true, source: { ...c.model.source, rise: { kind: 'exponential', timeConstant_s: 15e-9 } } }, c.population, INTEGRATED_IONS, 15);
  };
  cases['single, polynomial mirror'] = () => {
    const c = compileInput(single, 'single');
    const m = c.model.mirror!;
    // The stage mirror's depth and back-plate potential, with a quadratic term (an invented profile).
    let depth = 0;
    for (const st of m.stages) depth += st.length_m;
    const rise = m.stages[m.stages.length - 1].exitPotential_V - c.model.drift.potential_V;
    const profile = { depth_m: depth, coefficients_V: Float64Array.of(0.7 * rise, 0.3 * rise) };
    return runModel({ ...c.model, mirror: { ...m, stages: [], profile } }, c.population, INTEGRATED_IONS, 16);
  };
  cases['single, mixed tracer on an exact setup'] = () => {
    const c = compileInput(single, 'single');
    return runModel(c.model, c.population, IDEAL_IONS, 17, true);
  };
  // Every loss the ideal regions produce: thermal starts (some towards the repeller), ions spread over
  // the first stage, a long delay (some leave during it), a mirror back plate below the top energies
  // (some pass through it), a retarding post-acceleration gap (some turn back) and a detector area.
  const lossy = (engine: 'default' | 'forced' | 'rise', ions: number, seed: number) => () => {
    const c = compileInput(single, 'single');
    const m = c.model;
    const mirror = m.mirror!;
    const [repeller, grid] = m.source.planes;
    // Ions start over 0.8 of the first stage: energies per charge from about repeller − 0.8·(repeller − grid) up.
    const backPlate_V = repeller.final_V - 0.4 * (repeller.final_V - grid.final_V);
    const stages = mirror.stages.map((st, k) => (k === mirror.stages.length - 1 ? { ...st, exitPotential_V: backPlate_V } : st));
    const model: AnalyserModel = {
      ...m,
      forceIntegrator: engine === 'forced',
      source: { ...m.source, delay_s: 6 * m.source.delay_s, rise: engine === 'rise' ? { kind: 'linear', riseTime_s: 30e-9 } : m.source.rise },
      mirror: { ...mirror, stages },
      postAcceleration: { gap_m: 0.004, potential_V: repeller.final_V - 0.7 * (repeller.final_V - grid.final_V), gridTransmission: 0.9 },
      detectorAperture: { radius_m: 0.02, centreX_m: 0.0005, centreY_m: 0 },
    };
    const population = {
      ...c.population,
      startPosition: { kind: 'uniform' as const, from_m: 0, to_m: 0.8 * c.population.firstStage_m },
      startVelocity: { kind: 'thermal' as const, temperature_K: 3000 },
      transverse: { spotRadius_m: 0.001, velocity: { kind: 'thermal' as const, temperature_K: 3000 }, beamEnergy_J: 0, beamEnergySd_J: 0 },
    };
    return runModel(model, population, ions, seed);
  };
  cases['single, lossy variant'] = lossy('default', IDEAL_IONS, 21);
  cases['single, lossy variant, forced integrator'] = lossy('forced', INTEGRATED_IONS, 22);
  cases['single, lossy variant, linear rise'] = lossy('rise', INTEGRATED_IONS, 23);
  // A time limit inside the first species' peak: the late ions are timed out (exact and mixed).
  const limited = (forced: boolean, ions: number, seed: number) => () => {
    const c = compileInput(single, 'single');
    const probe = samplePopulation({ ...c.population, totalIons: 64, seed });
    const out = allocateTraceResult(probe.count);
    traceExact(c.model, probe, out);
    const times = Array.from(out.flightTime_s.subarray(0, probe.speciesStart[1])).sort((a, b) => a - b);
    return runModel({ ...c.model, forceIntegrator: forced, maxFlightTime_s: times[times.length >> 1] }, c.population, ions, seed);
  };
  cases['single, time limit inside a peak'] = limited(false, IDEAL_IONS, 24);
  cases['single, time limit inside a peak, forced integrator'] = limited(true, INTEGRATED_IONS, 25);
  cases['B2 benchmark problem (exponential rise), closed form'] = () => {
    const c = compileInput(b2Preset, 'B2');
    return runModel(c.model, c.population, IDEAL_IONS, 18);
  };
  cases['B2 benchmark problem, integrated pulse'] = () => {
    const c = compileInput(b2Preset, 'B2');
    return runModel({ ...c.model, integratePulse: true }, c.population, INTEGRATED_IONS, 19);
  };
  cases['gridless mirror, transfer map'] = () => {
    const c = compileInput(JSON.parse(readFileSync(new URL('demo-gridless-mirror.json', PRESET_DIR), 'utf8')), 'gridless');
    return runModel({ ...c.model, mapSolvedMirror: true }, c.population, 1600, 20);
  };
  cases['aperture source, transfer map'] = () => {
    const c = compileInput(JSON.parse(readFileSync(new URL('demo-aperture-source.json', PRESET_DIR), 'utf8')), 'aperture source');
    return runModel(c.model, c.population, 2400, 21); // 600 ions per species: the source map's smallest run
  };
  return cases;
}

export const GOLDEN_FIXTURE_URL = new URL('./presetGolden.fixture.json', import.meta.url);
