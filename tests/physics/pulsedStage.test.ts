/**
 * Closed-form motion in source stages whose potentials rise in time (src/physics/pulsedStage.ts),
 * the default engine for rising pulses, checked on each pulse shape (linear ramp, exponential rise,
 * pasted table) against: the `odex` ODE solver from npm (Hairer and Wanner's ODEX, Gragg–Bulirsch–
 * Stoer extrapolation) driven with this file's own waveform formulas, our integrator (the forced
 * cross-check), and for the exponential rise the independent B2 reference (Newton's method on the
 * exact position, bench/problems/b2.ts). Plus grazing crossings that a search without a bracket
 * could miss, with the expected times solved here from the cubic by bisection.
 */
import { describe, expect, it } from 'vitest';
import { b2Preset, b2ReferenceFlightTime } from '../../bench/problems/b2';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import type { SourceModel } from '../../src/physics/analyser';
import { ATOMIC_MASS_CONSTANT_KG as U_KG, ELEMENTARY_CHARGE_C as E_C } from '../../src/physics/constants';
import { Fate } from '../../src/physics/fates';
import { Exit, counters } from '../../src/physics/numericRegions';
import { crossSourceStageClosed } from '../../src/physics/pulsedStage';
import { traceMixed } from '../../src/physics/tracer';
import { compilePreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';
import type { Preset, PresetInput } from '../../src/presets/schema';
import { traceSingleIon } from '../../src/simulation/singleIon';
import { OdexSolverClass } from '../support/odex';

const load = (doc: unknown): Preset => {
  const r = validatePreset(doc);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
};

// A B2-like two-stage source (3 mm + 10 mm, 1.5 m drift, m/z 5000) whose hold field pushes gently
// forward (100 V), so that ions started backwards turn round while the pulse rises.
const DELAY_NS = 300;
const REPELLER_HOLD_V = 17_100;
const REPELLER_V = 20_000;
const GRID_V = 17_000;
const GAP1_M = 3e-3;
const GAP2_M = 10e-3;
const DRIFT_M = 1.5;
const QM = E_C / (5000 * U_KG);

interface Shape {
  name: string;
  rise: object;
  /** This file's own formulas for the repeller and extraction-grid potentials (V) at t (s). */
  repeller(t: number): number;
  grid(t: number): number;
  /** Times where a potential kinks (the reference solver restarts there). */
  kinks_s: number[];
}

/** Linear interpolation in [time_ns, V] points, held outside them. */
function piecewise(points: [number, number][], t: number): number {
  const tn = t * 1e9;
  if (tn <= points[0][0]) return points[0][1];
  for (let i = 1; i < points.length; i++) {
    if (tn <= points[i][0]) {
      const [t0, v0] = points[i - 1];
      const [t1, v1] = points[i];
      return v0 + ((v1 - v0) * (tn - t0)) / (t1 - t0);
    }
  }
  return points[points.length - 1][1];
}

const repellerTable: [number, number][] = [[0, REPELLER_HOLD_V], [300, REPELLER_HOLD_V], [315, 19_000], [330, 19_800], [360, REPELLER_V]];
const gridTable: [number, number][] = [[0, GRID_V], [310, GRID_V], [330, 16_800], [380, GRID_V]];

const shapes: Shape[] = [
  {
    name: 'linear ramp',
    rise: { shape: 'linear', riseTime_ns: 25 },
    repeller: (t) => (t < 300e-9 ? REPELLER_HOLD_V : t >= 325e-9 ? REPELLER_V : REPELLER_HOLD_V + ((REPELLER_V - REPELLER_HOLD_V) * (t - 300e-9)) / 25e-9),
    grid: () => GRID_V,
    kinks_s: [300e-9, 325e-9],
  },
  {
    name: 'exponential rise',
    rise: { shape: 'exponential', timeConstant_ns: 12 },
    repeller: (t) => (t < 300e-9 ? REPELLER_HOLD_V : REPELLER_V - (REPELLER_V - REPELLER_HOLD_V) * Math.exp(-(t - 300e-9) / 12e-9)),
    grid: () => GRID_V,
    kinks_s: [300e-9],
  },
  {
    name: 'pasted table (repeller and extraction grid)',
    rise: { shape: 'table', repeller: repellerTable, extractionGrid: gridTable },
    repeller: (t) => piecewise(repellerTable, t),
    grid: (t) => piecewise(gridTable, t),
    kinks_s: [300e-9, 310e-9, 315e-9, 330e-9, 360e-9, 380e-9],
  },
];

function presetFor(shape: Shape): Preset {
  return load({
    ...b2Preset,
    source: {
      repeller: { potential_V: REPELLER_V, hold_V: REPELLER_HOLD_V },
      extractionGrid: { gap_mm: 3, potential_V: GRID_V },
      groundGrid: { gap_mm: 10 },
      extraction: { mode: 'delayed', delay_ns: DELAY_NS, rise: shape.rise },
    },
  } as PresetInput);
}

/**
 * Flight time from (z0, v0) at t = 0 to the detector by odex: the source integrated stage by stage
 * (stage picked by position, crossings located by bisection on odex's dense output), restarted at
 * every kink of the waveform, then the drift 1.5/v.
 */
function odexFlightTime(shape: Shape, z0: number, v0: number): number {
  const planes = [0, GAP1_M, GAP1_M + GAP2_M];
  const accel = (stage: number, t: number): number =>
    stage === 0 ? (QM * (shape.repeller(t) - shape.grid(t))) / GAP1_M : (QM * shape.grid(t)) / GAP2_M;
  const solver = new OdexSolverClass(2);
  solver.relativeTolerance = 1e-13;
  solver.absoluteTolerance = [1e-18, 1e-12];
  solver.denseOutput = true;
  solver.maxSteps = 1_000_000;
  let t = 0;
  let z = z0;
  let v = v0;
  let stage = 0;
  for (let guard = 0; guard < 100; guard++) {
    const limit = shape.kinks_s.find((k) => k > t) ?? t + 10e-6;
    const lo = planes[stage];
    const hi = planes[stage + 1];
    solver.maxStepSize = (limit - t) / 4;
    let left = 0;
    const out = solver.solve((time, y) => [y[1], accel(stage, time)], t, [z, v], limit, (_n, a, b, y, dense) => {
      if (!dense || (y[0] < hi && y[0] > lo)) return true;
      const plane = y[0] >= hi ? hi : lo;
      const sign = plane === hi ? 1 : -1;
      let tLo = a;
      let tHi = b;
      for (let i = 0; i < 200; i++) {
        const mid = 0.5 * (tLo + tHi);
        if (mid <= tLo || mid >= tHi) break;
        if (sign * (dense(0, mid) - plane) < 0) tLo = mid;
        else tHi = mid;
      }
      t = tHi;
      z = plane;
      v = dense(1, tHi);
      left = sign;
      return false;
    });
    if (left === 0) {
      t = limit;
      z = out.y[0];
      v = out.y[1];
      continue;
    }
    if (left < 0 && stage === 0) throw new Error('reference ion struck the repeller');
    stage += left;
    if (stage === 2) return t + DRIFT_M / v;
  }
  throw new Error('reference ion did not leave the source');
}

// Start states: from the surface, from inside moving forward, and moving back (turning during the rise).
const starts: [number, number][] = [
  [0, 200],
  [0, 800],
  [1e-3, 400],
  [1e-3, -300],
  [0.5e-3, -150],
];

describe('closed-form rising pulse, each shape', () => {
  it.each(shapes)('$name: agrees with odex (rtol 1e-13, own waveform formulas) to 1e-12 relative', (shape) => {
    const model = compilePreset(presetFor(shape)).model;
    for (const [z0, v0] of starts) {
      const r = traceSingleIon(model, 5000, z0, v0);
      expect(r.fate).toBe(Fate.DETECTED);
      const ref = odexFlightTime(shape, z0, v0);
      expect(Math.abs(r.t - ref) / ref).toBeLessThan(1e-12);
    }
  });

  it.each(shapes)('$name: agrees with the forced integrator to 1e-12 relative, same fates, no integrator steps', (shape) => {
    const { model, population } = compilePreset(presetFor(shape));
    const ens = samplePopulation({ ...population, totalIons: 300 });
    for (let i = 0; i < starts.length; i++) {
      ens.z0_m[i] = starts[i][0];
      ens.vz0_m_per_s[i] = starts[i][1];
    }
    const closed = allocateTraceResult(ens.count);
    const integrated = allocateTraceResult(ens.count);
    counters.steps = 0;
    traceMixed(model, ens, closed);
    expect(counters.steps).toBe(0);
    traceMixed({ ...model, forceIntegrator: true }, ens, integrated);
    expect(counters.steps).toBeGreaterThan(0);
    for (let i = 0; i < ens.count; i++) {
      expect(closed.fate[i]).toBe(integrated.fate[i]);
      expect(Math.abs(closed.flightTime_s[i] - integrated.flightTime_s[i]) / integrated.flightTime_s[i]).toBeLessThan(1e-12);
      expect(Math.abs(closed.finalSpeed_m_per_s[i] - integrated.finalSpeed_m_per_s[i]) / integrated.finalSpeed_m_per_s[i]).toBeLessThan(1e-12);
    }
  });

  it('exponential rise of B2: within 1e-13 of the independent reference (Newton on the exact position)', () => {
    const { model, population } = compilePreset(load(b2Preset));
    const ens = samplePopulation({ ...population, totalIons: 2000 });
    const out = allocateTraceResult(ens.count);
    traceMixed(model, ens, out);
    let worst = 0;
    for (let i = 0; i < ens.count; i++) {
      expect(out.fate[i]).toBe(Fate.DETECTED);
      const ref = b2ReferenceFlightTime(ens.vz0_m_per_s[i]);
      worst = Math.max(worst, Math.abs(out.flightTime_s[i] - ref) / ref);
    }
    expect(worst).toBeLessThan(1e-13);
  });
});

describe('crossings found by bracketing first', () => {
  // One stage of 10 mm; the repeller ramps from 0 to −10 kV over 10 µs from t = 0, so a positive
  // ion is decelerated with a = −β·t, β = (q/m)·10⁴ V/(10 µs · 10 mm): z(t) = z0 + v0·t − β·t³/6,
  // highest at t* = sqrt(2·v0/β), z* = z0 + (2/3)·v0·t*.
  const qOverM = 1e4;
  const gap = 0.01;
  const beta = (qOverM * 1e4) / (10e-6 * gap);
  const v0 = 1000;
  const tStar = Math.sqrt((2 * v0) / beta);
  const rise = v0 * tStar * (2 / 3);
  const source: SourceModel = {
    stageLengths_m: [gap],
    planes: [
      { hold_V: 0, final_V: -1e4 },
      { hold_V: 0, final_V: 0 },
    ],
    delay_s: 0,
    planeTransmission: [1, 1],
    rise: { kind: 'linear', riseTime_s: 10e-6 },
  };
  /** First root of z(t) = plane on [0, t*] by bisection on the cubic (increasing there). */
  const firstRoot = (z0: number, plane: number): number => {
    let lo = 0;
    let hi = tStar;
    for (let i = 0; i < 200; i++) {
      const mid = 0.5 * (lo + hi);
      if (z0 + v0 * mid - (beta * mid ** 3) / 6 < plane) lo = mid;
      else hi = mid;
    }
    return hi;
  };

  it.each([1e-6, 1e-9, 1e-12])('an excursion %s m past the grid is seen, at its first crossing', (beyond) => {
    const z0 = gap - rise + beyond;
    const st = { t: 0, z: z0, v: v0 };
    expect(crossSourceStageClosed(st, source, qOverM, 0, 0, gap, 10e-6)).toBe(Exit.HIGH);
    expect(st.z).toBe(gap);
    const expected = firstRoot(z0, gap);
    expect(Math.abs(st.t - expected) / tStar).toBeLessThan(1e-7); // the root is ill-conditioned near the top: Δt ~ sqrt(Δz)
    expect(st.t).toBeLessThanOrEqual(tStar * (1 + 1e-12));
    expect(st.v).toBeGreaterThanOrEqual(0);
  });

  it('an ion turning 1e-9 m short of the grid turns back and leaves through the repeller', () => {
    const z0 = gap - rise - 1e-9;
    const st = { t: 0, z: z0, v: v0 };
    expect(crossSourceStageClosed(st, source, qOverM, 0, 0, gap, 10e-6)).toBe(Exit.LOW);
    expect(st.z).toBe(0);
    expect(st.v).toBeLessThan(0);
    // Back at the repeller: z0 + v0·t − β·t³/6 = 0, beyond the turning point.
    const residual = z0 + v0 * st.t - (beta * st.t ** 3) / 6;
    expect(Math.abs(residual)).toBeLessThan(1e-15);
    expect(st.t).toBeGreaterThan(tStar);
  });

  it('stops at tEnd with the exact state when no plane is reached', () => {
    const st = { t: 0, z: 1e-3, v: v0 };
    const tEnd = 0.5e-6;
    expect(crossSourceStageClosed(st, source, qOverM, 0, 0, gap, tEnd)).toBe(Exit.TIME_LIMIT);
    expect(st.t).toBe(tEnd);
    expect(Math.abs(st.z - (1e-3 + v0 * tEnd - (beta * tEnd ** 3) / 6))).toBeLessThan(1e-18);
    expect(Math.abs(st.v - (v0 - (beta * tEnd ** 2) / 2))).toBeLessThan(1e-12);
  });
});
