/**
 * Published focusing conditions, used as the optimiser's start point where they apply. All of them
 * are for ideal grids and uniform fields (the model of the exact engine), for one reference ion: the
 * mean start position and mean axial velocity of the population, at the objective's m/z.
 *
 * - Space focus of a static source: Wiley & McLaren 1955, Rev. Sci. Instrum. 26, 1150.
 * - First-order energy focus of a single-stage gridded mirror (field-free path = 4 × penetration
 *   depth) and second-order focus of a dual-stage mirror: Mamyrin, Karataev, Shmikk & Zagulin 1973,
 *   Sov. Phys. JETP 37, 45.
 * - Time-lag focusing of delayed extraction: Wiley & McLaren 1955; Vestal, Juhasz & Martin 1995,
 *   Rapid Commun. Mass Spectrom. 9, 1044. The optimum delay is derived below (`timeLagResidual`).
 *
 * Each condition is a residual of the preset that vanishes where the condition holds; the start value
 * of a tuned parameter is the residual's root inside the parameter's bounds (bracketed on a grid, then
 * bisected), so one code path serves every parameter a condition involves.
 */
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../physics/constants';
import type { Preset } from '../presets/schema';
import type { Objective, TuneParameter } from './api';
import { cloneJson, parsePath, type PathKey } from './paramPath';

// ---------------------------------------------------------------------------------------------
// Closed forms

/**
 * Wiley & McLaren 1955, two-field source: the drift length at which ions starting at rest a distance
 * s0 before the extraction grid, with a spread about s0, are focused to first order:
 * D = 2·s0·k0^{3/2}·(1 − d/((k0 + √k0)·s0)), with k0 = (s0·Es + d·Ed)/(s0·Es) (total energy over the
 * energy gained in the first field). With d = 0 (one field) it reduces to D = 2·s0.
 */
export function wileyMcLarenFocus_m(s0_m: number, d_m: number, k0: number): number {
  return 2 * s0_m * k0 ** 1.5 * (1 - d_m / ((k0 + Math.sqrt(k0)) * s0_m));
}

/** k0 of Wiley & McLaren: (s0·Es + d·Ed)/(s0·Es), fields in V/m. */
export function wileyMcLarenK0(s0_m: number, Es_V_per_m: number, d_m: number, Ed_V_per_m: number): number {
  return (s0_m * Es_V_per_m + d_m * Ed_V_per_m) / (s0_m * Es_V_per_m);
}

/**
 * Mamyrin et al. 1973, single-stage mirror: an ion of energy U (per charge, V) entering a uniform
 * retarding stage of depth `depth` across which the potential rises by ΔV stops at p = depth·U/ΔV;
 * the flight time is stationary in U (first-order energy focus) when the field-free path L = 4p.
 * This returns the back-plate step ΔV that satisfies it.
 */
export function mamyrinSingleStageStep_V(depth_m: number, U_V: number, fieldFreePath_m: number): number {
  return (4 * depth_m * U_V) / fieldFreePath_m;
}

/**
 * Mamyrin et al. 1973, dual-stage mirror. With c = sqrt(2q/m) the time from the drift start back to
 * the detector is c·T = L·U^{-1/2} + (4d1/V1)(U^{1/2} − (U−V1)^{1/2}) + 4·D2·(U−V1)^{1/2}, D2 = d2/(V2−V1),
 * V1 and V2 the potential steps at the intermediate grid and the back plate. dT/dU = d²T/dU² = 0 at U0
 * are two equations linear in L and D2 (the same conditions as in
 * tests/physics/exactEngine.reference.test.ts); solved here for given U0, V1, d1.
 */
export function mamyrinSecondOrder(U0: number, V1: number, d1: number): { L: number; D2: number } {
  const W = U0 - V1;
  const a11 = -0.5 * U0 ** -1.5;
  const a12 = 2 * W ** -0.5;
  const b1 = -((2 * d1) / V1) * (U0 ** -0.5 - W ** -0.5);
  const a21 = 0.75 * U0 ** -2.5;
  const a22 = -(W ** -1.5);
  const b2 = -(d1 / V1) * (-(U0 ** -1.5) + W ** -1.5);
  const det = a11 * a22 - a12 * a21;
  return { L: (b1 * a22 - a12 * b2) / det, D2: (a11 * b2 - a21 * b1) / det };
}

/**
 * The dual-stage potential steps (V1, V2) meeting the second-order conditions for a given geometry:
 * V1 is the root of L(V1) = L (bracketed on a grid of V1/U0), then V2 = V1 + d2/D2. Only roots with
 * the reference ion turning in the second stage (D2 > 0, V2 > U0) count; the one nearest `nearV1`
 * is returned, or null when there is none.
 */
export function mamyrinDualStageSteps(U0: number, d1: number, d2: number, L: number, nearV1 = (2 / 3) * U0): { V1: number; V2: number } | null {
  const f = (V1: number): number => mamyrinSecondOrder(U0, V1, d1).L - L;
  const roots = bracketRoots(f, 0.01 * U0, 0.99 * U0, 400);
  let best: { V1: number; V2: number } | null = null;
  for (const V1 of roots) {
    const { D2 } = mamyrinSecondOrder(U0, V1, d1);
    const V2 = V1 + d2 / D2;
    if (!(D2 > 0) || !(V2 > U0)) continue;
    if (!best || Math.abs(V1 - nearV1) < Math.abs(best.V1 - nearV1)) best = { V1, V2 };
  }
  return best;
}

// ---------------------------------------------------------------------------------------------
// The analyser of a preset, for one reference ion, in SI units

interface SourceStage {
  readonly length_m: number;
  /** Acceleration after the extraction switch (m/s², positive towards the detector). */
  readonly accel: number;
}

interface ReferenceFlight {
  readonly qOverM: number;
  readonly delay_s: number;
  /** True when the first stage is field-free during the delay (the time-lag condition's assumption). */
  readonly fieldFreeHold: boolean;
  readonly z0_m: number;
  readonly v0_m_per_s: number;
  readonly stages: readonly SourceStage[];
  readonly driftLength_m: number;
  readonly returnLength_m: number;
  /** Mirror stages: length and retarding potential step (V, > 0 retards), inwards. */
  readonly mirror: readonly { readonly length_m: number; readonly step_V: number }[];
  readonly post: { readonly gap_m: number; readonly accel_V: number } | null;
}

const MM = 1e-3;

/** Mean of a normal(mean, sd) truncated below at `min` (Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions, eq. 13.134). */
export function truncatedNormalMean(mean: number, sd: number, min: number): number {
  if (!(sd > 0) || !Number.isFinite(min)) return mean;
  const alpha = (min - mean) / sd;
  const pdf = Math.exp(-0.5 * alpha * alpha) / Math.sqrt(2 * Math.PI);
  const tail = 0.5 * erfc(alpha / Math.SQRT2);
  return tail > 1e-12 ? mean + (sd * pdf) / tail : min;
}

/** Complementary error function, Numerical Recipes (Press et al. 2007, §6.2.2) Chebyshev fit, |error| < 1.2e-7. */
export function erfc(x: number): number {
  const z = Math.abs(x);
  const t = 1 / (1 + 0.5 * z);
  const r =
    t *
    Math.exp(
      -z * z -
        1.26551223 +
        t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))),
    );
  return x >= 0 ? r : 2 - r;
}

function meanStart_m(preset: Preset): number {
  const p = preset.ions.startPosition;
  switch (p.kind) {
    case 'surface':
      return p.position_mm * MM;
    case 'uniform':
      return 0.5 * (p.from_mm + p.to_mm) * MM;
    case 'gaussian':
      return p.mean_mm * MM;
    default:
      return 0;
  }
}

function meanVelocity(preset: Preset, mz: number, charge: number): number {
  const v = preset.ions.startVelocity as { kind: string; mean_m_per_s?: number; sd_m_per_s?: number; minimum_m_per_s?: number; mean_eV?: number };
  if (v.kind === 'normal') return truncatedNormalMean(v.mean_m_per_s ?? 0, v.sd_m_per_s ?? 0, v.minimum_m_per_s ?? -Infinity);
  if (v.kind === 'energy') return Math.sqrt((2 * (v.mean_eV ?? 0) * ELEMENTARY_CHARGE_C) / (mz * charge * ATOMIC_MASS_CONSTANT_KG));
  return 0; // thermal and other symmetric spreads have zero mean axial velocity
}

/** The reference flight of a preset for the species nearest `mz`. */
function referenceFlight(preset: Preset, mz: number): ReferenceFlight {
  const species = preset.ions.species.reduce((a, b) => (Math.abs(b.mz - mz) < Math.abs(a.mz - mz) ? b : a));
  const sign = preset.polarity === 'positive' ? 1 : -1;
  const qOverM = ELEMENTARY_CHARGE_C / (species.mz * ATOMIC_MASS_CONSTANT_KG);
  const src = preset.source;
  const drift_V = preset.drift.potential_V;
  const planes: number[] = [src.repeller.potential_V];
  const holds: number[] = [src.repeller.hold_V ?? NaN];
  const lengths: number[] = [];
  if (src.extractionGrid) {
    planes.push(src.extractionGrid.potential_V);
    holds.push(src.extractionGrid.hold_V ?? src.extractionGrid.potential_V);
    lengths.push(src.extractionGrid.gap_mm * MM);
  }
  planes.push(drift_V);
  holds.push(drift_V);
  lengths.push(src.groundGrid.gap_mm * MM);
  const delayed = src.extraction.mode === 'delayed';
  // Default repeller hold: the next plane's hold potential (a field-free first stage), as the compiler does.
  const repellerHold = Number.isNaN(holds[0]) ? holds[1] : holds[0];
  const stages = lengths.map((length_m, j) => ({ length_m, accel: (sign * qOverM * (planes[j] - planes[j + 1])) / length_m }));
  const mirror =
    preset.mirror.type === 'single'
      ? [{ length_m: preset.mirror.depth_mm * MM, step_V: sign * (preset.mirror.backPlate_V - drift_V) }]
      : preset.mirror.type === 'dual'
        ? [
            { length_m: preset.mirror.deceleratingLength_mm * MM, step_V: sign * (preset.mirror.intermediateGrid_V - drift_V) },
            { length_m: preset.mirror.reflectingLength_mm * MM, step_V: sign * (preset.mirror.backPlate_V - preset.mirror.intermediateGrid_V) },
          ]
        : [];
  const post = preset.detector.postAcceleration;
  return {
    qOverM,
    delay_s: src.extraction.mode === 'delayed' ? src.extraction.delay_ns * 1e-9 : 0,
    fieldFreeHold: !delayed || repellerHold === holds[1],
    z0_m: meanStart_m(preset),
    v0_m_per_s: meanVelocity(preset, species.mz, species.charge),
    stages,
    driftLength_m: preset.drift.length_mm * MM,
    returnLength_m: preset.mirror.type === 'none' ? 0 : preset.mirror.returnLength_mm * MM,
    mirror,
    post: post ? { gap_m: post.gap_mm * MM, accel_V: sign * (drift_V - post.potential_V) } : null,
  };
}

/** Crossing time of a uniform stage of length x from speed v to speed w: 2x/(v + w) (no cancellation for weak fields). */
const crossTime = (x: number, v: number, w: number): number => (2 * x) / (v + w);

/**
 * Flight time after the source for an ion leaving the ground grid at speed v (closed forms of the
 * ideal-grid stages: drift, mirror stages turned in or crossed twice, return drift, post-acceleration).
 * NaN when the ion does not arrive (passes through the mirror or is turned back).
 */
function timeAfterSource(f: ReferenceFlight, v: number): number {
  if (!(v > 0)) return NaN;
  let t = f.driftLength_m / v;
  if (f.mirror.length > 0) {
    let u = v;
    let turned = false;
    for (const stage of f.mirror) {
      const a = (f.qOverM * stage.step_V) / stage.length_m; // deceleration
      const w2 = u * u - 2 * a * stage.length_m;
      if (w2 <= 0) {
        t += (2 * u) / a; // turns inside this stage and comes back out at speed u
        turned = true;
        break;
      }
      const w = Math.sqrt(w2);
      t += 2 * crossTime(stage.length_m, u, w);
      u = w;
    }
    if (!turned) return NaN;
    t += f.returnLength_m / v;
  }
  if (f.post) {
    const w2 = v * v + 2 * f.qOverM * f.post.accel_V;
    if (w2 <= 0) return NaN;
    t += crossTime(f.post.gap_m, v, Math.sqrt(w2));
  }
  return t;
}

/** dT_after/dv by a central difference of the closed form (smooth: a relative step of 1e-6 is ample). */
function timeAfterSourceSlope(f: ReferenceFlight, v: number): number {
  const h = 1e-6 * v;
  return (timeAfterSource(f, v + h) - timeAfterSource(f, v - h)) / (2 * h);
}

/** Energy per charge (V) of the reference ion in the drift tube, and its speed there. */
function driftEnergy(f: ReferenceFlight): { U: number; v: number } {
  const zStart = f.z0_m + f.v0_m_per_s * f.delay_s;
  let v2 = f.v0_m_per_s * f.v0_m_per_s;
  let start = 0;
  for (const stage of f.stages) {
    const from = Math.max(zStart - start, 0);
    v2 += 2 * stage.accel * Math.max(stage.length_m - from, 0);
    start += stage.length_m;
  }
  return { U: v2 / (2 * f.qOverM), v: Math.sqrt(Math.max(v2, 0)) };
}

// ---------------------------------------------------------------------------------------------
// Residuals: zero where each published condition holds

/**
 * Time-lag focusing (field-free delay τ, then an ideal step to the extraction fields). An ion starting
 * at z0 with speed v0 is at z = z0 + v0·τ when the fields switch on, and then crosses the remaining
 * x1 = s1 − z0 − v0·τ of stage 1 and the whole of the later stages. With v_j the speed leaving stage j,
 * v1² = v0² + 2·a1·x1, v_{j+1}² = v_j² + 2·a_{j+1}·s_{j+1}, stage times 2x/(v_in + v_out), and
 * T(v0) = τ + t1 + t2 + T_after(v_exit). The delay focuses to first order when dT/dv0 = 0 at the
 * mean v0. By the chain rule (τ is the same for every ion, dx1/dv0 = −τ):
 *   g1 = dv1/dv0 = (v0 − a1·τ)/v1,           dt1/dv0 = −2(τ·(v0 + v1) + x1·(1 + g1))/(v0 + v1)²,
 *   g2 = dv2/dv0 = (v1/v2)·g1,                dt2/dv0 = −2·s2·(g1 + g2)/(v1 + v2)²,
 *   dT/dv0 = dt1/dv0 + dt2/dv0 + T_after'(v_exit)·g_exit, with T_after' = −D/v² for a drift D.
 * This is the first-order condition of Wiley & McLaren's time-lag focusing (1955, section on
 * energy focusing) in the form Vestal et al. (1995) use for delayed extraction. For v0·τ ≪ s1 and
 * v0 ≪ v1 it gives τ ≈ (v0 − g1·v1)/a1 with g1 mass-independent, so the optimum delay grows with m/z:
 * as √(m/z) from the g1 term plus a term ∝ m/z from the start velocity itself.
 */
export function timeLagResidual(f: ReferenceFlight, delay_s: number): number {
  const v0 = f.v0_m_per_s;
  const tau = delay_s;
  const a1 = f.stages[0].accel;
  const x1 = f.stages[0].length_m - f.z0_m - v0 * tau;
  if (!(x1 > 0)) return NaN; // the reference ion has left the first stage before the pulse
  const v1sq = v0 * v0 + 2 * a1 * x1;
  if (!(v1sq > 0)) return NaN;
  const v1 = Math.sqrt(v1sq);
  let g = (v0 - a1 * tau) / v1;
  let dT = (-2 * (tau * (v0 + v1) + x1 * (1 + g))) / ((v0 + v1) * (v0 + v1));
  let v = v1;
  for (let j = 1; j < f.stages.length; j++) {
    const s = f.stages[j].length_m;
    const w2 = v * v + 2 * f.stages[j].accel * s;
    if (!(w2 > 0)) return NaN;
    const w = Math.sqrt(w2);
    const gNext = (v / w) * g;
    dT += (-2 * s * (g + gNext)) / ((v + w) * (v + w));
    g = gNext;
    v = w;
  }
  return dT + timeAfterSourceSlope(f, v) * g;
}

/** The first-order optimum delay (s) for the reference ion of `mz`, searched in [lo, hi] s; null when none. */
export function timeLagFocusDelay_s(preset: Preset, mz: number, lo_s = 0, hi_s = 5e-6): number | null {
  const f = referenceFlight(preset, mz);
  if (!f.fieldFreeHold) return null;
  const roots = bracketRoots((tau) => timeLagResidual(f, tau), lo_s, hi_s, 200);
  return roots.length ? roots[0] : null;
}

interface Condition {
  readonly name: string;
  readonly applies: (preset: Preset) => boolean;
  /** Residual of the condition, for the reference ion of `mz`; NaN where undefined. */
  readonly residual: (preset: Preset, mz: number) => number;
  /** Parameters it can be solved for, in order of preference. */
  readonly solves: (path: string) => boolean;
}

const SOURCE_POTENTIAL = /^source\.(repeller|extractionGrid)\.potential_V$/;
const SOURCE_GEOMETRY = /^source\.(extractionGrid|groundGrid)\.gap_mm$/;

const isLinearWithoutPost = (p: Preset): boolean => p.mirror.type === 'none' && !p.detector.postAcceleration;

const CONDITIONS: readonly Condition[] = [
  {
    name: 'Mamyrin et al. 1973 single-stage mirror, field-free path = 4 × penetration depth',
    applies: (p) => p.mirror.type === 'single',
    residual: (p, mz) => {
      const f = referenceFlight(p, mz);
      const { U } = driftEnergy(f);
      const m = f.mirror[0];
      return (m.step_V - mamyrinSingleStageStep_V(m.length_m, U, f.driftLength_m + f.returnLength_m)) / m.step_V;
    },
    solves: (path) => /^mirror\.(backPlate_V|depth_mm|returnLength_mm)$/.test(path) || path === 'drift.length_mm',
  },
  {
    name: 'first-order energy focus of the dual-stage mirror, dT/dU = 0 (Mamyrin et al. 1973)',
    applies: (p) => p.mirror.type === 'dual',
    residual: (p, mz) => {
      const f = referenceFlight(p, mz);
      const { v } = driftEnergy(f);
      return (timeAfterSourceSlope(f, v) * v) / timeAfterSource(f, v);
    },
    solves: (path) => /^mirror\.(intermediateGrid_V|backPlate_V|deceleratingLength_mm|reflectingLength_mm|returnLength_mm)$/.test(path) || path === 'drift.length_mm',
  },
  {
    name: 'time-lag focus of delayed extraction, dT/dv0 = 0 (Wiley & McLaren 1955; Vestal, Juhasz & Martin 1995)',
    applies: (p) => p.source.extraction.mode === 'delayed',
    residual: (p, mz) => {
      const f = referenceFlight(p, mz);
      if (!f.fieldFreeHold) return NaN;
      // Times a1: dimensionless, O(1) away from the root (only its sign matters to the bracketing).
      return timeLagResidual(f, f.delay_s) * Math.abs(f.stages[0].accel);
    },
    solves: (path) => path === 'source.extraction.delay_ns' || SOURCE_POTENTIAL.test(path) || path === 'drift.length_mm' || SOURCE_GEOMETRY.test(path),
  },
  {
    name: 'Wiley & McLaren 1955 space focus of a static source',
    applies: (p) => p.source.extraction.mode === 'static' && isLinearWithoutPost(p),
    residual: (p, mz) => {
      const f = referenceFlight(p, mz);
      const s0 = f.stages[0].length_m - f.z0_m;
      const Es = f.stages[0].accel;
      const d = f.stages.length > 1 ? f.stages[1].length_m : 0;
      const Ed = f.stages.length > 1 ? f.stages[1].accel : 0;
      if (!(Es > 0) || !(s0 > 0)) return NaN;
      return (wileyMcLarenFocus_m(s0, d, wileyMcLarenK0(s0, Es, d, Ed)) - f.driftLength_m) / f.driftLength_m;
    },
    solves: (path) => path === 'drift.length_mm' || SOURCE_POTENTIAL.test(path) || SOURCE_GEOMETRY.test(path),
  },
];

/** Sign changes of f on a uniform grid of `n` intervals over [lo, hi], each refined by bisection. */
export function bracketRoots(f: (x: number) => number, lo: number, hi: number, n: number): number[] {
  const roots: number[] = [];
  let xPrev = lo;
  let fPrev = f(lo);
  for (let i = 1; i <= n; i++) {
    const x = lo + ((hi - lo) * i) / n;
    const fx = f(x);
    if (fPrev === 0) roots.push(xPrev);
    else if (Number.isFinite(fPrev) && Number.isFinite(fx) && Math.sign(fx) === -Math.sign(fPrev)) roots.push(bisect(f, xPrev, x, fPrev));
    xPrev = x;
    fPrev = fx;
  }
  return roots;
}

function bisect(f: (x: number) => number, a: number, b: number, fa: number): number {
  let lo = a;
  let hi = b;
  let fLo = fa;
  for (let i = 0; i < 100 && hi - lo > 1e-14 * Math.max(Math.abs(lo), Math.abs(hi), 1e-300); i++) {
    const mid = 0.5 * (lo + hi);
    const fm = f(mid);
    if (!Number.isFinite(fm)) break;
    if (Math.sign(fm) === Math.sign(fLo)) {
      lo = mid;
      fLo = fm;
    } else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** Write a number at a path of a plain copy without validating (residuals only read numbers). */
function setRaw(doc: unknown, keys: readonly PathKey[], value: number): void {
  let node = doc as Record<PathKey, unknown>;
  for (let i = 0; i < keys.length - 1; i++) node = node[keys[i]] as Record<PathKey, unknown>;
  node[keys[keys.length - 1]] = value;
}

/** The m/z the start conditions are computed for: the target, or the geometric mean of the range. */
export function referenceMz(objective: Objective, preset: Preset): number {
  if (objective.range) {
    const inside = preset.ions.species.filter((s) => s.mz >= objective.range![0] && s.mz <= objective.range![1]).map((s) => s.mz);
    if (inside.length) return Math.sqrt(Math.min(...inside) * Math.max(...inside));
  }
  return objective.targetMz ?? preset.ions.species[0].mz;
}

export interface AnalyticStart {
  /** Start values (inside the bounds), one per parameter. */
  readonly values: number[];
  /** For each condition used: its name and the parameter it set. */
  readonly sources: string[];
}

/**
 * Start values for a tune: each applicable published condition sets one tuned parameter (the first
 * it can solve with a root inside the bounds); the dual-stage mirror's two potentials, when both are
 * tuned, come from the second-order conditions together. Parameters no condition sets keep their
 * current value (clamped to the bounds).
 */
export function analyticStart(preset: Preset, parameters: readonly TuneParameter[], objective: Objective, current: readonly number[]): AnalyticStart {
  const values = parameters.map((p, i) => Math.min(Math.max(current[i], p.min), p.max));
  const sources: string[] = [];
  const assigned = new Set<number>();
  const work = cloneJson(preset);
  const keys = parameters.map((p) => parsePath(p.path)!);
  const apply = (i: number, value: number): void => {
    values[i] = value;
    assigned.add(i);
    setRaw(work, keys[i], value);
  };
  const mz = referenceMz(objective, preset);

  // Dual-stage mirror with both potentials tuned: the second-order conditions fix both.
  const iV1 = parameters.findIndex((p) => p.path === 'mirror.intermediateGrid_V');
  const iV2 = parameters.findIndex((p) => p.path === 'mirror.backPlate_V');
  if (preset.mirror.type === 'dual' && iV1 >= 0 && iV2 >= 0) {
    const f = referenceFlight(preset, mz);
    const { U } = driftEnergy(f);
    const sign = preset.polarity === 'positive' ? 1 : -1;
    const drift_V = preset.drift.potential_V;
    const steps = mamyrinDualStageSteps(U, f.mirror[0].length_m, f.mirror[1].length_m, f.driftLength_m + f.returnLength_m, sign * (preset.mirror.intermediateGrid_V - drift_V));
    if (steps) {
      const V1 = drift_V + sign * steps.V1;
      const V2 = drift_V + sign * steps.V2;
      const inside = (i: number, v: number): boolean => v >= parameters[i].min && v <= parameters[i].max;
      if (inside(iV1, V1) && inside(iV2, V2)) {
        apply(iV1, V1);
        apply(iV2, V2);
        sources.push(`Mamyrin et al. 1973 second-order dual-stage conditions → mirror.intermediateGrid_V, mirror.backPlate_V`);
      }
    }
  }

  for (const condition of CONDITIONS) {
    if (!condition.applies(preset)) continue;
    for (let i = 0; i < parameters.length; i++) {
      if (assigned.has(i) || !condition.solves(parameters[i].path)) continue;
      const p = parameters[i];
      const residual = (x: number): number => {
        setRaw(work, keys[i], x);
        const r = condition.residual(work as Preset, mz);
        setRaw(work, keys[i], values[i]);
        return r;
      };
      const roots = bracketRoots(residual, p.min, p.max, 64);
      if (roots.length === 0) continue;
      const root = roots.reduce((a, b) => (Math.abs(b - values[i]) < Math.abs(a - values[i]) ? b : a));
      apply(i, root);
      sources.push(`${condition.name} → ${p.path}`);
      break;
    }
  }
  return { values, sources };
}
