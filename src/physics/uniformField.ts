/**
 * Closed-form motion in a uniform static field (constant acceleration a) between two planes.
 * These are the exact kernels of the engine. They write into a caller-owned `Motion` scratch
 * object so that the per-ion loop allocates nothing.
 *
 * Forms are chosen to avoid cancellation: the forward crossing time is written as
 * 2Δ/(v + sqrt(v² + 2aΔ)) when v ≥ 0, which is exact for a → 0 as well.
 */
import { Exit, Fate } from './fates';

export interface Motion {
  /** Time taken by the last operation (s). */
  dt: number;
  /** Velocity after the last operation (m/s). */
  v: number;
}

export function createMotion(): Motion {
  return { dt: 0, v: 0 };
}

/**
 * Outcome of `crossForward` under its older names: views of the one exit vocabulary
 * (src/physics/fates.ts): through the exit plane, back through the entry plane, or never (at rest
 * in a field-free stage: the ion's fate is then "timed out").
 */
export const Crossing = { FORWARD: Exit.FAR, BACKWARD: Exit.ENTRY, NEVER: Fate.TIMED_OUT } as const;

/**
 * Cross a stage forward: start `ahead` metres before its exit plane and `behind` metres after its
 * entry plane, with velocity v (positive = towards the exit) and acceleration a.
 * Returns FORWARD and fills `out` when the ion leaves through the exit plane; BACKWARD when it
 * leaves back through the entry plane (it turns around, or starts moving back and never returns);
 * NEVER when it rests in a field-free stage.
 */
export function crossForward(out: Motion, v: number, a: number, ahead: number, behind: number): typeof Exit.FAR | typeof Exit.ENTRY | typeof Fate.TIMED_OUT {
  if (ahead <= 0) {
    if (v < 0) return Crossing.BACKWARD;
    out.dt = 0;
    out.v = v;
    return Crossing.FORWARD;
  }
  if (v >= 0) {
    const disc = v * v + 2 * a * ahead;
    if (disc < 0) return Crossing.BACKWARD;
    const vOut = Math.sqrt(disc);
    const denom = v + vOut;
    if (denom <= 0) return a < 0 ? Crossing.BACKWARD : Crossing.NEVER; // at rest with no field
    out.dt = (2 * ahead) / denom;
    out.v = vOut;
    return Crossing.FORWARD;
  }
  // Moving backwards: only a forward acceleration can bring it back before it reaches the entry plane.
  if (a <= 0) return Crossing.BACKWARD;
  if (v * v > 2 * a * behind) return Crossing.BACKWARD;
  const vOut = Math.sqrt(v * v + 2 * a * ahead);
  out.dt = (vOut - v) / a;
  out.v = vOut;
  return Crossing.FORWARD;
}

/**
 * Enter a retarding stage at its entry plane with speed v > 0 and acceleration a (negative to retard).
 * Returns true and fills `out` with the time to the far plane and the speed there when the ion
 * gets through; returns false and fills `out.dt` with the time from entry back to the entry plane
 * (turned around inside the stage, arriving back with speed v).
 */
export function enterStage(out: Motion, v: number, a: number, length: number): boolean {
  const disc = v * v + 2 * a * length;
  if (disc > 0) {
    const vOut = Math.sqrt(disc);
    out.dt = (2 * length) / (v + vOut);
    out.v = vOut;
    return true;
  }
  // disc ≤ 0 needs a < 0: the ion stops at depth v²/(2|a|) ≤ length and comes back symmetrically.
  out.dt = (2 * v) / -a;
  out.v = v;
  return false;
}

/**
 * Where an ion at x inside [lo, hi], with velocity v and constant acceleration a, first leaves the
 * interval: +1 through `hi`, −1 through `lo`, 0 if it never leaves. `out.dt` is the time taken
 * (Infinity when it never leaves) and `out.v` the velocity at that moment.
 */
export function firstExit(out: Motion, x: number, v: number, a: number, lo: number, hi: number): -1 | 0 | 1 {
  // On a plane and heading out (or pushed out from rest): leaves at once.
  if (x <= lo && (v < 0 || (v === 0 && a < 0))) return exitNow(out, v, -1);
  if (x >= hi && (v > 0 || (v === 0 && a > 0))) return exitNow(out, v, 1);
  const tHi = firstPositiveRoot(hi - x, v, a);
  const tLo = firstPositiveRoot(lo - x, v, a);
  if (tHi === Infinity && tLo === Infinity) {
    out.dt = Infinity;
    out.v = v;
    return 0;
  }
  const side = tLo < tHi ? -1 : 1;
  out.dt = side < 0 ? tLo : tHi;
  out.v = v + a * out.dt;
  return side;
}

function exitNow(out: Motion, v: number, side: -1 | 1): -1 | 1 {
  out.dt = 0;
  out.v = v;
  return side;
}

/** Smallest t > 0 with v·t + a·t²/2 = d, or Infinity; roots computed without cancellation. */
export function firstPositiveRoot(d: number, v: number, a: number): number {
  if (a === 0) {
    if (v === 0) return Infinity;
    const t = d / v;
    return t > 0 ? t : Infinity;
  }
  const disc = v * v + 2 * a * d;
  if (disc < 0) return Infinity;
  const s = Math.sqrt(disc);
  const q = v >= 0 ? -(v + s) : s - v; // q = −(v + sign(v)·s)
  const r1 = q / a;
  const r2 = q !== 0 ? (-2 * d) / q : Infinity;
  let best = Infinity;
  if (r1 > 0) best = r1;
  if (r2 > 0 && r2 < best) best = r2;
  return best;
}
