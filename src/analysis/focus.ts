/**
 * Focus analysis of a reference ion: how its flight time T depends on where (z0) and with what
 * axial energy (U0) it starts, and where the space-focus plane lies.
 *
 * The caller supplies T as a function, so any engine can be probed. Derivatives are central
 * differences at steps h and h/2 combined by one Richardson extrapolation (error O(h⁴) instead of
 * O(h²); Richardson 1911, see e.g. Press et al., Numerical Recipes 3rd ed., §5.7). The default
 * step, 2e-3 of the scale over which T varies, balances that truncation against rounding
 * (ε/h for the first derivative, ε/h² for the second: ~1e-11 relative for both). Near a bound of
 * the allowed start range the step shrinks, or becomes one-sided when it would shrink too far.
 *
 * Focusing order over a spread Δ (position or energy): the Taylor terms |T'|·Δ and ½|T''|·Δ² are
 * compared with T. A term is negligible when it moves T by less than `negligible_ppm` (default
 * 1 ppm, far below the 1/(2R) ≈ 50 ppm of R = 10⁴). Order 0: the first term is not negligible;
 * order 1 (first-order focus, Wiley & McLaren 1955): only the first term is negligible; order 2
 * (second-order focus): both are.
 */
import { createRootReport, findRootBrent } from '../physics/integrator';
import { ELEMENTARY_CHARGE_C } from '../physics/constants';

/** Flight time (s) of the reference ion from start position z0 (m) and axial start energy U0 (J). */
export type FlightTimeFunction = (z0_m: number, U0_J: number) => number;

/** Flight time (s) from start position z0 (m) to a detector plane after a drift of the given length (m). */
export type FlightTimeToPlaneFunction = (z0_m: number, driftLength_m: number) => number;

export const DEFAULT_RELATIVE_STEP = 2e-3;
export const DEFAULT_NEGLIGIBLE_PPM = 1;

export interface Derivatives {
  readonly first: number;
  readonly second: number;
  /** Step actually used (signed: negative for a one-sided stencil below x). */
  readonly step: number;
  readonly stencil: 'central' | 'one-sided';
}

/**
 * First and second derivative of f at x, Richardson-extrapolated central differences with step h,
 * kept inside [lower, upper]. Null if the stencil cannot fit or f is not finite on it.
 */
export function differentiate(f: (x: number) => number, x: number, h: number, lower = -Infinity, upper = Infinity): Derivatives | null {
  if (!(h > 0) || !(x >= lower && x <= upper)) return null;
  const room = Math.min(x - lower, upper - x);
  const f0 = f(x);
  if (!Number.isFinite(f0)) return null;
  if (room >= h / 8) {
    const step = Math.min(h, room);
    const fp = f(x + step);
    const fm = f(x - step);
    const fp2 = f(x + step / 2);
    const fm2 = f(x - step / 2);
    if (![fp, fm, fp2, fm2].every(Number.isFinite)) return null;
    const d1h = (fp - fm) / (2 * step);
    const d1h2 = (fp2 - fm2) / step;
    const d2h = (fp - 2 * f0 + fm) / (step * step);
    const d2h2 = (4 * (fp2 - 2 * f0 + fm2)) / (step * step);
    return { first: (4 * d1h2 - d1h) / 3, second: (4 * d2h2 - d2h) / 3, step, stencil: 'central' };
  }
  // One-sided, away from the nearer bound; second-order formulas at h and h/2, extrapolated.
  const step = x - lower <= upper - x ? h : -h;
  if (!(x + 3 * step >= lower && x + 3 * step <= upper)) return null;
  const g = [0.5, 1, 1.5, 2, 3].map((k) => f(x + k * step));
  if (!g.every(Number.isFinite)) return null;
  const [fHalf, f1, f3Half, f2, f3] = g;
  const oneSidedFirst = (a: number, b: number, s: number): number => (-3 * f0 + 4 * a - b) / (2 * s);
  const oneSidedSecond = (a: number, b: number, c: number, s: number): number => (2 * f0 - 5 * a + 4 * b - c) / (s * s);
  const d1h = oneSidedFirst(f1, f2, step);
  const d1h2 = oneSidedFirst(fHalf, f1, step / 2);
  const d2h = oneSidedSecond(f1, f2, f3, step);
  const d2h2 = oneSidedSecond(fHalf, f1, f3Half, step / 2);
  return { first: (4 * d1h2 - d1h) / 3, second: (4 * d2h2 - d2h) / 3, step, stencil: 'one-sided' };
}

export interface FocusProbe {
  /** Reference start position (m from the repeller) and axial start energy (J, > 0 for energy derivatives). */
  readonly z0_m: number;
  readonly U0_J: number;
  /** Distance over which T changes appreciably, e.g. from the start to the first grid; sets the step. */
  readonly lengthScale_m: number;
  /** Allowed start positions (e.g. the first source stage); the stencil stays inside. */
  readonly z0Range_m?: readonly [number, number];
  /** Half-width of the start-position spread over which focusing is judged. */
  readonly positionSpread_m: number;
  /** Half-width of the start-energy spread over which focusing is judged. */
  readonly energySpread_J: number;
  readonly negligible_ppm?: number;
  readonly positionStep_m?: number;
  readonly energyStep_J?: number;
}

export type FocusOrder = 0 | 1 | 2;

export interface FocusAnalysis {
  readonly flightTime_ns: number;
  readonly dT_dz0_ns_per_mm: number;
  readonly d2T_dz02_ns_per_mm2: number;
  /** Null when U0 = 0 (T ∝ √U0 there: no finite derivative) or T fails near U0; see energyNote. */
  readonly dT_dU0_ns_per_eV: number | null;
  readonly d2T_dU02_ns_per_eV2: number | null;
  /** |T'|·Δz and ½|T''|·Δz² over the position spread, in ppm of T. */
  readonly positionFirstOrder_ppm: number;
  readonly positionSecondOrder_ppm: number;
  readonly energyFirstOrder_ppm: number | null;
  readonly energySecondOrder_ppm: number | null;
  readonly spaceFocusOrder: FocusOrder;
  readonly energyFocusOrder: FocusOrder | null;
  readonly negligible_ppm: number;
  readonly positionStencil: 'central' | 'one-sided';
  readonly energyNote: string | null;
}

export type FocusResult = { readonly ok: true; readonly focus: FocusAnalysis } | { readonly ok: false; readonly reason: string };

function order(firstPpm: number, secondPpm: number, negligible: number): FocusOrder {
  if (firstPpm > negligible) return 0;
  return secondPpm > negligible ? 1 : 2;
}

/** Flight-time derivatives of the reference ion and the focusing order they imply. */
export function analyseFocus(flightTime: FlightTimeFunction, probe: FocusProbe): FocusResult {
  const { z0_m, U0_J } = probe;
  if (!(probe.lengthScale_m > 0)) return { ok: false, reason: `lengthScale_m must be > 0 (got ${probe.lengthScale_m})` };
  if (!(probe.positionSpread_m >= 0)) return { ok: false, reason: `positionSpread_m must be ≥ 0 (got ${probe.positionSpread_m})` };
  if (!(probe.energySpread_J >= 0)) return { ok: false, reason: `energySpread_J must be ≥ 0 (got ${probe.energySpread_J})` };
  if (!(U0_J >= 0)) return { ok: false, reason: `U0_J must be ≥ 0 (got ${U0_J})` };
  const T = flightTime(z0_m, U0_J);
  if (!(Number.isFinite(T) && T > 0)) return { ok: false, reason: 'the reference ion has no finite flight time (lost?)' };
  const negligible = probe.negligible_ppm ?? DEFAULT_NEGLIGIBLE_PPM;
  const [zLo, zHi] = probe.z0Range_m ?? [-Infinity, Infinity];
  const hz = probe.positionStep_m ?? DEFAULT_RELATIVE_STEP * probe.lengthScale_m;
  const dz = differentiate((z) => flightTime(z, U0_J), z0_m, hz, zLo, zHi);
  if (dz === null) return { ok: false, reason: 'flight time not finite around the reference start position, or z0 outside z0Range_m' };

  let dU: Derivatives | null = null;
  let energyNote: string | null = null;
  if (U0_J > 0) {
    const hu = probe.energyStep_J ?? DEFAULT_RELATIVE_STEP * U0_J;
    dU = differentiate((u) => flightTime(z0_m, u), U0_J, hu, 0, Infinity);
    if (dU === null) energyNote = 'flight time not finite around the reference start energy';
  } else {
    energyNote = 'U0 = 0: T varies as √U0 there and has no finite energy derivative; give a reference energy > 0';
  }

  const ppm = (term: number): number => (Math.abs(term) / T) * 1e6;
  const posFirst = ppm(dz.first * probe.positionSpread_m);
  const posSecond = ppm(0.5 * dz.second * probe.positionSpread_m ** 2);
  const enFirst = dU === null ? null : ppm(dU.first * probe.energySpread_J);
  const enSecond = dU === null ? null : ppm(0.5 * dU.second * probe.energySpread_J ** 2);
  const e = ELEMENTARY_CHARGE_C;
  return {
    ok: true,
    focus: {
      flightTime_ns: T * 1e9,
      dT_dz0_ns_per_mm: dz.first * 1e6, // s/m → ns/mm
      d2T_dz02_ns_per_mm2: dz.second * 1e3, // s/m² → ns/mm²
      dT_dU0_ns_per_eV: dU === null ? null : dU.first * e * 1e9,
      d2T_dU02_ns_per_eV2: dU === null ? null : dU.second * e * e * 1e9,
      positionFirstOrder_ppm: posFirst,
      positionSecondOrder_ppm: posSecond,
      energyFirstOrder_ppm: enFirst,
      energySecondOrder_ppm: enSecond,
      spaceFocusOrder: order(posFirst, posSecond, negligible),
      energyFocusOrder: enFirst === null || enSecond === null ? null : order(enFirst, enSecond, negligible),
      negligible_ppm: negligible,
      positionStencil: dz.stencil,
      energyNote,
    },
  };
}

export interface SpaceFocusOptions {
  /** As in FocusProbe: sets the position step of dT/dz0. */
  readonly lengthScale_m: number;
  readonly z0Range_m?: readonly [number, number];
  readonly positionStep_m?: number;
  /** Drift lengths sampled to bracket a sign change of dT/dz0. Default 32. */
  readonly scanPoints?: number;
}

export type SpaceFocusPlane =
  | {
      readonly driftLength_m: number;
      readonly driftLength_mm: number;
      /** Further sign changes of dT/dz0 found in the range (0 normally). */
      readonly otherCrossings: number;
      readonly iterations: number;
    }
  | { readonly driftLength_m: null; readonly reason: string };

/**
 * The drift length at which dT/dz0 = 0 for an ion starting at z0 (the space-focus plane), within
 * [driftRange_m[0], driftRange_m[1]]: a scan brackets the first sign change, Brent's method
 * (Brent 1973, Algorithms for Minimization without Derivatives, ch. 4) refines it.
 */
export function findSpaceFocusPlane(
  flightTime: FlightTimeToPlaneFunction,
  z0_m: number,
  driftRange_m: readonly [number, number],
  options: SpaceFocusOptions,
): SpaceFocusPlane {
  const [lo, hi] = driftRange_m;
  if (!(Number.isFinite(lo) && Number.isFinite(hi) && hi > lo)) return { driftLength_m: null, reason: `driftRange_m must be finite with end > start (got [${lo}, ${hi}])` };
  if (!(options.lengthScale_m > 0)) return { driftLength_m: null, reason: `lengthScale_m must be > 0 (got ${options.lengthScale_m})` };
  const points = Math.max(2, Math.floor(options.scanPoints ?? 32));
  const h = options.positionStep_m ?? DEFAULT_RELATIVE_STEP * options.lengthScale_m;
  const [zLo, zHi] = options.z0Range_m ?? [-Infinity, Infinity];
  let failed = false;
  const slope = (D: number): number => {
    const d = differentiate((z) => flightTime(z, D), z0_m, h, zLo, zHi);
    if (d === null) failed = true;
    return d === null ? 0 : d.first;
  };

  const drifts: number[] = [];
  const slopes: number[] = [];
  for (let k = 0; k < points; k++) {
    const D = lo + ((hi - lo) * k) / (points - 1);
    drifts.push(D);
    slopes.push(slope(D));
    if (failed) return { driftLength_m: null, reason: `flight time not finite around z0 at drift length ${D} m` };
  }
  const crossings: number[] = [];
  for (let k = 0; k + 1 < points; k++) {
    if (slopes[k] === 0 || Math.sign(slopes[k]) !== Math.sign(slopes[k + 1])) crossings.push(k);
  }
  if (crossings.length === 0) {
    const sense = slopes[0] > 0 ? 'positive (ions starting further from the repeller arrive later)' : 'negative (ions starting further from the repeller arrive earlier)';
    return {
      driftLength_m: null,
      reason: `dT/dz0 stays ${sense} for drift lengths ${lo}–${hi} m: no space-focus plane in that range`,
    };
  }
  const k = crossings[0];
  if (slopes[k] === 0) return { driftLength_m: drifts[k], driftLength_mm: drifts[k] * 1e3, otherCrossings: crossings.length - 1, iterations: 0 };
  const report = createRootReport();
  const x = findRootBrent({ evaluate: slope }, drifts[k], drifts[k + 1], slopes[k], slopes[k + 1], 0.5e-12 * (hi - lo), 100, report);
  const root = { x, iterations: report.evaluations };
  if (failed) return { driftLength_m: null, reason: 'flight time not finite around z0 while refining the focus' };
  return { driftLength_m: root.x, driftLength_mm: root.x * 1e3, otherCrossings: crossings.length - 1, iterations: root.iterations };
}
