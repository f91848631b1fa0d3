/**
 * Closed-form motion in a source stage whose potentials change in time (delayed extraction with a
 * linear ramp, an exponential rise or a pasted table). Between ideal grids the field is uniform in
 * space even while a pulse rises, so the acceleration depends on time only and the trajectory is an
 * exact double integral of it. Time is cut into segments on which the acceleration is
 *
 *   a(s) = α + β·s + γ·e^{−s/τ},   s = t − t0 (t0 = where the ion entered the segment),
 *
 * (β ≠ 0 only for a ramp or a table segment, γ ≠ 0 only for an exponential rise), so that
 *
 *   v(s) = v0 + α·s + β·s²/2 + γ·τ·(1 − e^{−s/τ})
 *   z(s) = z0 + v0·s + α·s²/2 + β·s³/6 + γ·τ²·(s/τ − 1 + e^{−s/τ}).
 *
 * Plane crossings: a(s) is monotone on a segment, so it has at most one zero, and v(s) at most one
 * zero on each side of it. Those zeros (the turning points, found first) cut the segment into
 * pieces on which z(s) is monotone and convex or concave; a piece whose end lies beyond a plane
 * brackets exactly one crossing, located by Newton's method safeguarded by bisection inside the
 * bracket. Bracketing before iterating is what guarantees that no crossing (a brief excursion
 * through a grid and back) is missed. The integrator (src/physics/regions/axialIntegrator.ts) stays as the
 * cross-check under run.engine = "integrator".
 */
import type { SourceModel, WaveformTable } from './analyser';
import { Exit } from './fates';
import type { NumericState } from './regions/axialIntegrator';

/** Coefficients of one segment, in the ion's own segment clock s = t − t0. One reused instance. */
class PulseSegment {
  alpha = 0;
  beta = 0;
  gamma = 0;
  tau = 1;
  /** Absolute time at which this acceleration law stops holding (Infinity for the last one). */
  end_s = Infinity;
  z0 = 0;
  v0 = 0;
  /** Results of the last `evaluate`: position, velocity and acceleration at s. */
  z = 0;
  v = 0;
  a = 0;

  evaluate(s: number): void {
    const { alpha, beta, gamma } = this;
    let zPulse = 0;
    let vPulse = 0;
    let aPulse = 0;
    if (gamma !== 0) {
      const x = s / this.tau;
      const decay = Math.exp(-x);
      vPulse = -gamma * this.tau * Math.expm1(-x);
      zPulse = gamma * this.tau * this.tau * rampResidue(x);
      aPulse = gamma * decay;
    }
    this.z = this.z0 + s * (this.v0 + s * (0.5 * alpha + s * (beta / 6))) + zPulse;
    this.v = this.v0 + s * (alpha + 0.5 * beta * s) + vPulse;
    this.a = alpha + beta * s + aPulse;
  }
}

/**
 * x − 1 + e^{−x} without cancellation: its Taylor series below x = 0.5 (terms alternate and fall
 * by at least x/k, so 16 terms reach 1e-19 relative), the direct form above.
 */
function rampResidue(x: number): number {
  if (x >= 0.5) return x + Math.expm1(-x);
  let term = (x * x) / 2;
  let sum = term;
  for (let k = 3; k <= 18; k++) {
    term *= -x / k;
    sum += term;
  }
  return sum;
}

const seg = new PulseSegment();

/** Value and slope (V/s) at t of one plane's drive, and the next time its law changes (s). */
interface PlaneLaw {
  value: number;
  slope: number;
  next: number;
}
const nearLaw: PlaneLaw = { value: 0, slope: 0, next: Infinity };
const farLaw: PlaneLaw = { value: 0, slope: 0, next: Infinity };

/** Piecewise-linear drive of a tabulated electrode (held outside the table), as waveforms.tableValue. */
function tableLaw(out: PlaneLaw, table: WaveformTable, t: number): void {
  const ts = table.time_s;
  const vs = table.potential_V;
  const n = ts.length;
  if (t < ts[0]) {
    out.value = vs[0];
    out.slope = 0;
    out.next = ts[0];
    return;
  }
  if (t >= ts[n - 1]) {
    out.value = vs[n - 1];
    out.slope = 0;
    out.next = Infinity;
    return;
  }
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (ts[mid] <= t) lo = mid;
    else hi = mid;
  }
  out.slope = (vs[hi] - vs[lo]) / (ts[hi] - ts[lo]);
  out.value = vs[lo] + out.slope * (t - ts[lo]);
  out.next = ts[hi];
}

function planeLaw(out: PlaneLaw, source: SourceModel, plane: number, t: number): void {
  const rise = source.rise;
  const table = rise.kind === 'table' ? rise.tables[plane] : null;
  if (table) return tableLaw(out, table, t);
  // An electrode without a table steps at the delay (waveforms.planePotential_V).
  const drive = source.planes[plane];
  out.slope = 0;
  out.value = t < source.delay_s ? drive.hold_V : drive.final_V;
  out.next = t < source.delay_s ? source.delay_s : Infinity;
}

/** Fill `seg` with the acceleration law of source stage `stage` from time t0 on. */
function segmentAt(source: SourceModel, qOverM: number, stage: number, gap_m: number, t0: number): void {
  const near = source.planes[stage];
  const far = source.planes[stage + 1];
  const aHold = (qOverM * (near.hold_V - far.hold_V)) / gap_m;
  const aFinal = (qOverM * (near.final_V - far.final_V)) / gap_m;
  const rise = source.rise;
  const delay = source.delay_s;
  seg.beta = 0;
  seg.gamma = 0;
  seg.tau = 1;
  if (rise.kind !== 'table' && t0 < delay) {
    seg.alpha = aHold;
    seg.end_s = delay;
    return;
  }
  switch (rise.kind) {
    case 'step':
      seg.alpha = aFinal;
      seg.end_s = Infinity;
      return;
    case 'linear': {
      const s = t0 - delay;
      if (s >= rise.riseTime_s) {
        seg.alpha = aFinal;
        seg.end_s = Infinity;
        return;
      }
      seg.beta = (aFinal - aHold) / rise.riseTime_s;
      seg.alpha = aHold + seg.beta * s;
      seg.end_s = delay + rise.riseTime_s;
      return;
    }
    case 'exponential':
      seg.alpha = aFinal;
      seg.gamma = (aHold - aFinal) * Math.exp(-(t0 - delay) / rise.timeConstant_s);
      seg.tau = rise.timeConstant_s;
      seg.end_s = Infinity;
      return;
    case 'table':
      planeLaw(nearLaw, source, stage, t0);
      planeLaw(farLaw, source, stage + 1, t0);
      seg.alpha = (qOverM * (nearLaw.value - farLaw.value)) / gap_m;
      seg.beta = (qOverM * (nearLaw.slope - farLaw.slope)) / gap_m;
      seg.end_s = Math.min(nearLaw.next, farLaw.next);
      return;
  }
}

/** Zero of a(s) inside (0, S), or NaN. The law is monotone, so there is at most one. */
function accelerationZero(S: number): number {
  const { alpha, beta, gamma } = seg;
  let s = NaN;
  if (gamma !== 0) {
    const r = -alpha / gamma; // α + γ·e^{−s/τ} = 0  ⇔  e^{−s/τ} = −α/γ
    if (r > 0 && r < 1) s = -seg.tau * Math.log(r);
  } else if (beta !== 0) s = -alpha / beta;
  return s > 0 && s < S ? s : NaN;
}

const Target = { POSITION: 0, VELOCITY: 1 } as const;

/**
 * Root of z(s) − plane (target POSITION) or of v(s) (target VELOCITY) in [lo, hi], where it changes
 * sign and is monotone: Newton's method, falling back to bisection whenever a step would leave the
 * bracket or fails to halve it (the "rtsafe" safeguard), to a few ulps of s.
 */
function safeguardedRoot(target: number, plane: number, lo: number, hi: number): number {
  seg.evaluate(lo);
  const fLo = target === Target.POSITION ? seg.z - plane : seg.v;
  seg.evaluate(hi);
  const fHi = target === Target.POSITION ? seg.z - plane : seg.v;
  if (fLo === 0) return lo;
  if (fHi === 0) return hi;
  // Orient so that f(a) < 0 < f(b).
  let a = fLo < 0 ? lo : hi;
  let b = fLo < 0 ? hi : lo;
  let s = hi;
  let f = fHi;
  let df = target === Target.POSITION ? seg.v : seg.a;
  let lastStep = Math.abs(hi - lo);
  let step = lastStep;
  for (let it = 0; it < 200; it++) {
    const newton = s - f / df;
    const outside = !((newton - a) * (newton - b) < 0) || !Number.isFinite(newton);
    if (outside || Math.abs(2 * f) > Math.abs(lastStep * df)) {
      lastStep = step;
      step = 0.5 * (b - a);
      s = a + step;
    } else {
      lastStep = step;
      step = newton - s;
      s = newton;
    }
    if (Math.abs(step) <= 2 * Number.EPSILON * Math.abs(s) || Math.abs(b - a) <= 4 * Number.EPSILON * Math.abs(s)) break;
    seg.evaluate(s);
    f = target === Target.POSITION ? seg.z - plane : seg.v;
    df = target === Target.POSITION ? seg.v : seg.a;
    if (f === 0) break;
    if (f < 0) a = s;
    else b = s;
  }
  return s;
}

/** Critical points of the current segment in (0, S): turning points and the zero of a, ascending. */
const cuts = new Float64Array(5);

function collectCuts(S: number): number {
  let n = 0;
  cuts[n++] = 0;
  const sA = accelerationZero(S);
  const ends = Number.isNaN(sA) ? 1 : 2;
  for (let piece = 0; piece < ends; piece++) {
    const lo = piece === 0 ? 0 : sA;
    const hi = ends === 1 ? S : piece === 0 ? sA : S;
    seg.evaluate(lo);
    const vLo = seg.v;
    seg.evaluate(hi);
    const vHi = seg.v;
    // v is monotone on the piece: a sign change brackets its one turning point.
    if ((vLo < 0 && vHi > 0) || (vLo > 0 && vHi < 0)) cuts[n++] = safeguardedRoot(Target.VELOCITY, 0, lo, hi);
    if (piece === 0 && ends === 2) cuts[n++] = sA;
  }
  cuts[n++] = S;
  return n;
}

/**
 * Cross source stage `stage` (between absolute planes lo and hi) in closed form up to tEnd, from
 * the state in `st`; same contract and exit codes as AxialIntegrator.crossSourceStage
 * (src/physics/regions/axialIntegrator.ts): Exit.FAR through hi, Exit.ENTRY through lo, Exit.PAUSED at tEnd.
 */
export function crossSourceStageClosed(st: NumericState, source: SourceModel, qOverM: number, stage: number, lo: number, hi: number, tEnd: number): number {
  const gap = hi - lo;
  while (st.t < tEnd) {
    segmentAt(source, qOverM, stage, gap, st.t);
    const segEnd = Math.min(seg.end_s, tEnd);
    const S = segEnd - st.t;
    seg.z0 = st.z;
    seg.v0 = st.v;
    const n = collectCuts(S);
    for (let k = 1; k < n; k++) {
      const sL = cuts[k - 1];
      const sR = cuts[k];
      if (!(sR > sL)) continue;
      seg.evaluate(sL);
      const zL = seg.z;
      seg.evaluate(sR);
      const zR = seg.z;
      const plane = zR > zL && zR >= hi ? hi : zR < zL && zR <= lo ? lo : NaN;
      if (Number.isNaN(plane)) continue;
      const s = safeguardedRoot(Target.POSITION, plane, sL, sR);
      seg.evaluate(s);
      st.t += s;
      st.z = plane; // snapped onto the plane it crossed, as the integrator does
      st.v = seg.v;
      return plane === hi ? Exit.FAR : Exit.ENTRY;
    }
    seg.evaluate(S);
    st.z = seg.z;
    st.v = seg.v;
    st.t = segEnd;
  }
  return Exit.PAUSED;
}
