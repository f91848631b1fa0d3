import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import type { AnalyserModel } from '../../src/physics/analyser';
import { createExactPlan, prepareExactPlan, traceExact } from '../../src/physics/exactEngine';
import { Fate } from '../../src/physics/fates';
import {
  axialPositionAt,
  axialVelocityAt,
  createTrajectory,
  pathEnd_s,
  Region,
  segmentAt,
  traceTrajectory,
} from '../../src/physics/trajectory';
import { compilePreset } from '../../src/presets/compile';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { buildModel, relErr } from '../helpers';

/** The parts of odex's Solver used here (loaded through require: its package ships TypeScript sources that do not pass our strict checks). */
interface OdexSolver {
  absoluteTolerance: number;
  relativeTolerance: number;
  maxSteps: number;
  denseOutput: boolean;
  solve(
    f: (x: number, y: number[]) => number[],
    x0: number,
    y0: number[],
    xEnd: number,
    out?: unknown,
  ): { y: number[]; outcome: number };
  grid(dt: number, out: (x: number, y: number[]) => void): unknown;
}
const { Solver } = createRequire(import.meta.url)('odex') as { Solver: new (n: number) => OdexSolver };

function loadPreset(name: string): Preset {
  const parsed = parsePresetText(readFileSync(new URL(`../../presets/${name}.json`, import.meta.url), 'utf8'));
  if (!parsed.ok) throw new Error(`preset ${name} does not load`);
  return parsed.value;
}

/** Detector plane in the folded frame: after the drift (linear) or back down the return leg (reflectron). */
function detectorPosition_m(model: AnalyserModel): number {
  const source = model.source.stageLengths_m.reduce((a, b) => a + b, 0);
  const post = model.postAcceleration ? model.postAcceleration.gap_m : 0;
  if (!model.mirror) return source + model.drift.length_m + post;
  return source + model.drift.length_m - model.mirror.returnLength_m - post;
}

describe('trajectory segments agree with the exact engine', () => {
  for (const name of ['demo-linear-delayed', 'demo-reflectron-single', 'demo-reflectron-dual']) {
    it(`${name}: same fate and flight time for every ion, path ends on the detector plane`, () => {
      const { model, population } = compilePreset(loadPreset(name));
      const ens = samplePopulation({ ...population, totalIons: 4000 });
      const trace = allocateTraceResult(ens.count);
      traceExact(model, ens, trace);
      const plan = createExactPlan();
      const tr = createTrajectory();
      const xDet = detectorPosition_m(model);
      let detected = 0;
      let fateMismatches = 0;
      const worst = { time: 0, end: 0, position: 0, speed: 0, joinTime: 0, joinPosition: 0, joinSpeed: 0 };
      const note = (key: keyof typeof worst, value: number): void => void (worst[key] = Math.max(worst[key], value));
      for (let s = 0; s < ens.species.length; s++) {
        prepareExactPlan(plan, model, ens.species[s].mz);
        for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
          traceTrajectory(tr, plan, ens.z0_m[i], ens.vz0_m_per_s[i]);
          if (tr.fate !== trace.fate[i]) fateMismatches++;
          note('time', relErr(tr.flightTime_s, trace.flightTime_s[i]));
          if (tr.fate !== Fate.DETECTED) continue;
          detected++;
          // The drawn path ends when the engine says the ion arrives, on the detector plane, at the engine's speed.
          note('end', relErr(pathEnd_s(tr), trace.flightTime_s[i]));
          note('position', Math.abs(axialPositionAt(tr, tr.flightTime_s) - xDet));
          note('speed', relErr(Math.abs(axialVelocityAt(tr, tr.flightTime_s)), trace.finalSpeed_m_per_s[i]));
          // Segments join up in time, position and velocity.
          for (let k = 1; k < tr.count; k++) {
            const dt = tr.dt_s[k - 1];
            const xEnd = tr.x0_m[k - 1] + tr.v0_m_per_s[k - 1] * dt + 0.5 * tr.a_m_per_s2[k - 1] * dt * dt;
            const vEnd = tr.v0_m_per_s[k - 1] + tr.a_m_per_s2[k - 1] * dt;
            note('joinTime', relErr(tr.t0_s[k - 1] + dt, tr.t0_s[k]));
            note('joinPosition', Math.abs(xEnd - tr.x0_m[k]));
            note('joinSpeed', Math.abs(vEnd - tr.v0_m_per_s[k]) / Math.max(1, Math.abs(vEnd)));
          }
        }
      }
      expect(fateMismatches).toBe(0);
      expect(worst.time).toBeLessThan(1e-14);
      expect(worst.end).toBeLessThan(1e-13);
      expect(worst.position).toBeLessThan(1e-9);
      expect(worst.speed).toBeLessThan(1e-9);
      expect(worst.joinTime).toBeLessThan(1e-13);
      expect(worst.joinPosition).toBeLessThan(1e-9);
      expect(worst.joinSpeed).toBeLessThan(1e-6);
      expect(detected).toBeGreaterThan(ens.count * 0.9);
    });
  }

  it('reflectron paths turn inside the mirror and come back down the return leg', () => {
    const { model } = compilePreset(loadPreset('demo-reflectron-dual'));
    const plan = prepareExactPlan(createExactPlan(), model, 1336.7008);
    const tr = traceTrajectory(createTrajectory(), plan, 0, 400);
    const regions = Array.from(tr.region.subarray(0, tr.count));
    expect(regions).toEqual([
      Region.HOLD,
      Region.SOURCE,
      Region.SOURCE,
      Region.DRIFT,
      Region.MIRROR_IN,
      Region.MIRROR_IN,
      Region.MIRROR_OUT,
      Region.MIRROR_OUT,
      Region.RETURN,
    ]);
    const entrance = 0.013 + 1.0;
    const turn = tr.x0_m[6]; // the outbound half starts at the turning point, at rest
    expect(tr.v0_m_per_s[6]).toBe(0);
    expect(turn).toBeGreaterThan(entrance + 0.03); // past the decelerating stage
    expect(turn).toBeLessThan(entrance + 0.13); // before the back plate
    expect(axialVelocityAt(tr, tr.t0_s[8] + 1e-9)).toBeLessThan(0);
    expect(segmentAt(tr, -1)).toBe(-1);
    expect(segmentAt(tr, 1)).toBe(tr.count - 1);
  });

  it('ions lost in the source end where they are lost', () => {
    // Single-stage source, repeller below the ground potential for positive ions: pushed back onto the repeller.
    const model = buildModel({ repeller_V: -100, gap1_m: 0.01, drift_m: 1 });
    const plan = prepareExactPlan(createExactPlan(), model, 100);
    const tr = traceTrajectory(createTrajectory(), plan, 0.005, 0);
    expect(tr.fate).toBe(Fate.STRUCK_REPELLER);
    expect(axialPositionAt(tr, pathEnd_s(tr))).toBeCloseTo(0, 12);
  });
});

/**
 * Field along the axis from the model's plane potentials alone (not from the engine's plan): uniform
 * between grids, zero in the drift tube, the mirror stages beyond the entrance grid. Returns the
 * acceleration (m/s²) of an ion with signed charge-to-mass ratio qOverM at folded position x.
 */
function accelerationFromPotentials(model: AnalyserModel, qOverM: number, x: number, v: number, held: boolean): number {
  const src = model.source;
  let start = 0;
  for (let j = 0; j < src.stageLengths_m.length; j++) {
    const end = start + src.stageLengths_m[j];
    if (x < end && v >= 0) {
      const a = src.planes[j];
      const b = src.planes[j + 1];
      const dV = held ? a.hold_V - b.hold_V : a.final_V - b.final_V;
      return (qOverM * dV) / src.stageLengths_m[j];
    }
    start = end;
  }
  const entrance = start + model.drift.length_m;
  if (!model.mirror || x < entrance || (x === entrance && v < 0)) return 0;
  let depth = entrance;
  let entryV = model.drift.potential_V;
  for (const stage of model.mirror.stages) {
    if (x < depth + stage.length_m || stage === model.mirror.stages.at(-1)) return (qOverM * (entryV - stage.exitPotential_V)) / stage.length_m;
    depth += stage.length_m;
    entryV = stage.exitPotential_V;
  }
  return 0;
}

/**
 * Independent check: integrate x'' = (q/m)·E(x, t) with the Gragg–Bulirsch–Stoer integrator of the
 * `odex` package (a port of Hairer & Wanner's ODEX), the field built from the plane potentials, over
 * the whole flight (restarted only at the extraction switch), and compare with the closed form.
 * The integrator steps across the grid planes' field jumps with its own error control, so the
 * tolerance is looser than the closed-form comparisons above.
 */
describe('trajectory positions match a numerical integration of the equation of motion (odex)', () => {
  // CODATA 2018: e = 1.602176634e-19 C (exact), u = 1.66053906660e-27 kg.
  const qOverMFor = (mz: number): number => 1.602176634e-19 / (mz * 1.6605390666e-27);
  for (const name of ['demo-linear-delayed', 'demo-reflectron-single', 'demo-reflectron-dual']) {
    it(name, () => {
      const { model } = compilePreset(loadPreset(name));
      const mz = 1930.948;
      const plan = prepareExactPlan(createExactPlan(), model, mz);
      const v0 = 550;
      const tr = traceTrajectory(createTrajectory(), plan, 0, v0);
      expect(tr.fate).toBe(Fate.DETECTED);
      const k = qOverMFor(mz);
      const solver = new Solver(2);
      solver.absoluteTolerance = 1e-12;
      solver.relativeTolerance = 1e-12;
      solver.maxSteps = 200_000;
      const delay = model.source.delay_s;
      let maxError = 0;
      const check = (t: number, y: number[]): void => {
        maxError = Math.max(maxError, Math.abs(y[0] - axialPositionAt(tr, t)));
      };
      // Hold phase, then the switched field until the arrival time; compare on a grid of 400 times.
      const held = solver.solve((_t: number, y: number[]) => [y[1], accelerationFromPotentials(model, k, y[0], y[1], true)], 0, [0, v0], delay);
      check(delay, held.y);
      solver.denseOutput = true;
      const step = (tr.flightTime_s - delay) / 400;
      const flight = solver.solve(
        (_t: number, y: number[]) => [y[1], accelerationFromPotentials(model, k, y[0], y[1], false)],
        delay,
        held.y,
        tr.flightTime_s,
        solver.grid(step, (t: number, y: number[]) => check(t, y)),
      );
      expect(flight.outcome).toBe(0); // converged
      check(tr.flightTime_s, flight.y);
      // 10 nm along a path of 1.2–1.8 m (the integrator reaches about 1e-10 m here).
      expect(maxError).toBeLessThan(1e-8);
      expect(Math.abs(flight.y[0] - detectorPosition_m(model))).toBeLessThan(1e-8);
    });
  }
});
