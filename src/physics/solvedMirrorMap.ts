/**
 * A per-run transfer map of a solved (gridless) mirror: the time inside and the exit state as
 * polynomials of the entry state, fitted to rays traced through the solved field and used for the
 * rest of the run's ions only where it was validated. Tracing 3-D through a solved field costs
 * ~300 field evaluations per ion; evaluating the map costs one field sample.
 *
 * Why the map is species-free and its form: in a static electric field the path depends only on
 * the start position, the start direction and the kinetic energy per charge U; time scales as
 * 1/sqrt(q/m). The field is rotationally symmetric about the axis and symmetric under reflection
 * in every plane through it, so with P = (x, y) the entry position and D = (dx, dy) the transverse
 * direction cosines, the exit position and direction are P·g + D·h with g, h functions of
 * (U, |P|², P·D, |D|²) only, and the time is such a function too. These functions are fitted as
 * polynomials (least squares, Householder QR) in those four invariants, normalised to the
 * training rays' range.
 *
 * The run's ions arrive in random order (they are sampled so), so the first of them are a fair
 * sample of the population's domain: the first ones (2 % of the run, 120…400) are traced at FINE
 * precision (rtol 1e-9) and fitted, the next quarter as many are traced at FINE precision and
 * compared with the map. The map is used for the rest only if every validation ray agrees within
 * TIME_TOL (relative, of the time inside the mirror), POSITION_TOL_M and DIRECTION_TOL, and only
 * for ions inside the central range of the training rays (DOMAIN_QUANTILE: near the edges of the
 * sampled range the polynomials are poorly pinned down). Ions outside it, and every ion of a run
 * whose training or validation rays did not all come back out of the mirror (a strike: electrode
 * edges are near), are traced directly as before. The result is deterministic for a given run
 * (same seed, same ion order), but a mapped ion's time differs from its direct trace at about the
 * direct trace's error level.
 *
 * Status, measured (bench/fieldTraceBench.ts, loaded machine): on the benchmark's spread the map
 * takes ~90 % of 4000 ions, 4–5× faster than tracing each, with a smaller rms time error than the
 * direct trace (6e-8 against 2.2e-7, both against a rtol-1e-12 reference). On the shipped
 * gridless demo, whose ions enter with position and direction nearly proportional, the fitted exit
 * direction misses the validation limit (errors ~4e-5 rad) at 2·10^4 ions, and the map declines.
 * So it is opt-in (AnalyserModel.mapSolvedMirror), not yet what a user's run does.
 */
import { createFieldSample, sampleField } from '../fields/interpolate';
import { solveLeastSquares } from '../fields/leastSquares';
import { SolvedExit, SolvedPrecision, createSolvedIonState, traceSolvedRegion } from './regions/solvedTracer';
import type { ExactPlan, IonState } from './exactEngine';
import { Fate } from './fates';
import { leftSolvedRegion, transverse, transverseX, transverseY, type SolvedMirrorModel } from './solvedMirror';

/** Training rays: more for larger runs (denser near the domain's edges), within these bounds. */
export const TRAIN_RAYS_MIN = 120;
export const TRAIN_RAYS_MAX = 400;
export const TRAIN_SHARE = 0.02;
/** Runs with fewer ions trace every ion directly: fitting would cost more than it saves. */
export const MAP_MIN_IONS = 1500;
/** Validation limits: well below the direct trace's own error (~2e-7 relative rms in time). */
export const TIME_TOL = 2e-7;
/** The map is used between these quantiles of the training rays' energies (and below the upper one of |P|², |D|²). */
export const DOMAIN_QUANTILE = 0.02;
export const POSITION_TOL_M = 1e-6;
export const DIRECTION_TOL = 5e-6;

/** Monomial exponents (e, a, b, c) of the time basis: transverse order ≤ 2, fewer energy powers with it. */
function exponents(maxTransverse: number, energyPowers: readonly number[]): Int8Array {
  const out: number[] = [];
  for (let td = 0; td <= maxTransverse; td++)
    for (let j = 0; j <= td; j++)
      for (let l = 0; l <= td - j; l++) {
        const m = td - j - l;
        for (let i = 0; i <= energyPowers[td]; i++) out.push(i, j, l, m);
      }
  return Int8Array.from(out);
}
const TIME_BASIS = exponents(2, [8, 4, 2]);
const LINEAR_BASIS = exponents(2, [6, 3, 1]);
const TIME_TERMS = TIME_BASIS.length / 4;
const LINEAR_TERMS = LINEAR_BASIS.length / 4;

/** Entry state in the map's variables. */
interface MapInput {
  /** Normalised invariants. */
  e: number;
  a: number;
  b: number;
  c: number;
  /** Normalised transverse position and direction (P/R, D/Dmax). */
  px: number;
  py: number;
  dx: number;
  dy: number;
}

/** Powers 0…MAX_POWER of each invariant (e, a, b, c), filled once per evaluation. */
const MAX_POWER = 8;
const powers = new Float64Array(4 * (MAX_POWER + 1));

function basis(ex: Int8Array, inp: MapInput, out: Float64Array): void {
  const stride = MAX_POWER + 1;
  for (let v = 0; v < 4; v++) {
    const x = v === 0 ? inp.e : v === 1 ? inp.a : v === 2 ? inp.b : inp.c;
    let p = 1;
    for (let i = 0; i <= MAX_POWER; i++) {
      powers[v * stride + i] = p;
      p *= x;
    }
  }
  for (let k = 0, n = ex.length / 4; k < n; k++) {
    out[k] = powers[ex[4 * k]] * powers[stride + ex[4 * k + 1]] * powers[2 * stride + ex[4 * k + 2]] * powers[3 * stride + ex[4 * k + 3]];
  }
}

/** One traced ray: entry state and what the solved field did to it. */
interface Ray {
  x: number;
  y: number;
  dx: number;
  dy: number;
  U: number;
  /** Time inside × sqrt(q/m) (s·sqrt(C/kg)). */
  scaledTime: number;
  xOut: number;
  yOut: number;
  dxOut: number;
  dyOut: number;
}

const State = { TRAINING: 0, VALIDATING: 1, MAPPED: 2, DIRECT: 3 } as const;

export interface MirrorMapReport {
  mapped: number;
  traced: number;
  /** Why the map was not used, or '' when it was. */
  note: string;
}

const ion = createSolvedIonState();
const sample = createFieldSample();
const inp: MapInput = { e: 0, a: 0, b: 0, c: 0, px: 0, py: 0, dx: 0, dy: 0 };
const timeRow = new Float64Array(TIME_TERMS);
const linRow = new Float64Array(LINEAR_TERMS);

/** The map of one run's solved mirror: feed it every ion that reaches the mirror, in order. */
export class SolvedMirrorMapper {
  private state: number = State.TRAINING;
  private readonly rays: Ray[] = [];
  private uMid = 0;
  private uHalf = 1;
  private rMax = 1;
  private dMax = 1;
  private timeCoef = new Float64Array(TIME_TERMS);
  private posCoef = new Float64Array(2 * LINEAR_TERMS);
  private dirCoef = new Float64Array(2 * LINEAR_TERMS);
  readonly report: MirrorMapReport = { mapped: 0, traced: 0, note: '' };

  private readonly trainRays: number;
  private readonly validateRays: number;

  /** `ions`: how many ions the run will bring to the mirror (sets the number of training rays). */
  constructor(
    private readonly mirror: SolvedMirrorModel,
    ions: number,
  ) {
    this.trainRays = Math.round(Math.min(TRAIN_RAYS_MAX, Math.max(TRAIN_RAYS_MIN, TRAIN_SHARE * ions)));
    this.validateRays = Math.round(this.trainRays / 4);
  }

  /** Through the mirror as solvedMirror.mirrorSolved, by the map where it holds. */
  pass(st: IonState, plan: ExactPlan, tLimit_s: number): boolean {
    const region = this.mirror.region;
    ion.t = st.t;
    ion.x = transverseX(st.t);
    ion.y = transverseY(st.t);
    ion.z = region.entryZ_m;
    ion.vx = transverse.vxRef;
    ion.vy = transverse.vyRef;
    ion.vz = st.v;
    const k = plan.qOverM;
    const speed = Math.sqrt(ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz);
    const U = (speed * speed) / (2 * k);
    if (this.state === State.MAPPED && k > 0 && st.v > 0 && this.setInput(ion.x, ion.y, ion.vx / speed, ion.vy / speed, U)) {
      this.report.mapped++;
      return this.applyMap(st, k, speed, tLimit_s);
    }
    const learning = this.state === State.TRAINING || this.state === State.VALIDATING;
    const x0 = ion.x;
    const y0 = ion.y;
    const vx0 = ion.vx;
    const vy0 = ion.vy;
    const t0 = ion.t;
    const exit = traceSolvedRegion(ion, region, k, tLimit_s, learning ? SolvedPrecision.FINE : SolvedPrecision.NORMAL);
    this.report.traced++;
    if (learning) {
      if (exit !== SolvedExit.ENTRY || !(k > 0) || !(st.v > 0)) this.giveUp('a training or validation ray did not come back out of the mirror');
      else this.learn({ x: x0, y: y0, dx: vx0 / speed, dy: vy0 / speed, U, scaledTime: (ion.t - t0) * Math.sqrt(k), xOut: ion.x, yOut: ion.y, dxOut: ion.vx / speed, dyOut: ion.vy / speed });
    }
    return finish(st, exit);
  }

  private giveUp(note: string): void {
    this.state = State.DIRECT;
    this.report.note = note;
  }

  private learn(ray: Ray): void {
    if (this.state === State.TRAINING) {
      this.rays.push(ray);
      if (this.rays.length === this.trainRays) this.fit();
      return;
    }
    // Validation: the map against this FINE-traced ray.
    if (!this.setInput(ray.x, ray.y, ray.dx, ray.dy, ray.U)) {
      this.rays.push(ray); // outside the training range: counts neither way
    } else {
      const time = this.scaledTime();
      const pos = this.transverseOut(this.posCoef, ray.x, ray.y, ray.dx, ray.dy);
      const posError = Math.hypot(pos[0] - ray.xOut, pos[1] - ray.yOut);
      const dir = this.transverseOut(this.dirCoef, ray.x, ray.y, ray.dx, ray.dy);
      const dirError = Math.hypot(dir[0] - ray.dxOut, dir[1] - ray.dyOut);
      const bad = !(Math.abs(time - ray.scaledTime) <= TIME_TOL * ray.scaledTime) || !(posError <= POSITION_TOL_M) || !(dirError <= DIRECTION_TOL);
      if (bad) return this.giveUp(`validation ray outside tolerance (time ${(Math.abs(time - ray.scaledTime) / ray.scaledTime).toExponential(1)} relative, exit position ${posError.toExponential(1)} m, direction ${dirError.toExponential(1)})`);
      this.rays.push(ray);
    }
    if (this.rays.length === this.validateRays) this.state = State.MAPPED;
  }

  /** Normalised map input; false when the entry lies outside the training rays' range. */
  private setInput(x: number, y: number, dx: number, dy: number, U: number): boolean {
    inp.e = (U - this.uMid) / this.uHalf;
    inp.px = x / this.rMax;
    inp.py = y / this.rMax;
    inp.dx = dx / this.dMax;
    inp.dy = dy / this.dMax;
    inp.a = inp.px * inp.px + inp.py * inp.py;
    inp.b = inp.px * inp.dx + inp.py * inp.dy;
    inp.c = inp.dx * inp.dx + inp.dy * inp.dy;
    return inp.e >= this.eLo && inp.e <= this.eHi && inp.a <= this.aHi && inp.c <= this.cHi;
  }

  /** Where the map is used: inside the central range of the training rays, where they are dense enough. */
  private eLo = -1;
  private eHi = 1;
  private aHi = 1;
  private cHi = 1;

  private setDomain(): void {
    const es = this.rays.map((r) => (this.setInput(r.x, r.y, r.dx, r.dy, r.U), inp.e)).sort((p, q) => p - q);
    const as = this.rays.map((r) => (this.setInput(r.x, r.y, r.dx, r.dy, r.U), inp.a)).sort((p, q) => p - q);
    const cs = this.rays.map((r) => (this.setInput(r.x, r.y, r.dx, r.dy, r.U), inp.c)).sort((p, q) => p - q);
    const at = (xs: number[], q: number) => xs[Math.min(xs.length - 1, Math.max(0, Math.round(q * (xs.length - 1))))];
    this.eLo = at(es, DOMAIN_QUANTILE);
    this.eHi = at(es, 1 - DOMAIN_QUANTILE);
    this.aHi = at(as, 1 - DOMAIN_QUANTILE);
    this.cHi = at(cs, 1 - DOMAIN_QUANTILE);
  }

  private fit(): void {
    const rays = this.rays;
    let uLo = Infinity;
    let uHi = -Infinity;
    let r2 = 0;
    let d2 = 0;
    for (const r of rays) {
      uLo = Math.min(uLo, r.U);
      uHi = Math.max(uHi, r.U);
      r2 = Math.max(r2, r.x * r.x + r.y * r.y);
      d2 = Math.max(d2, r.dx * r.dx + r.dy * r.dy);
    }
    this.uMid = 0.5 * (uLo + uHi);
    this.uHalf = uHi > uLo ? 0.5 * (uHi - uLo) : Math.max(1e-9 * Math.abs(this.uMid), 1e-12);
    this.rMax = r2 > 0 ? Math.sqrt(r2) : 1e-9;
    this.dMax = d2 > 0 ? Math.sqrt(d2) : 1e-12;
    const n = rays.length;
    const A = new Float64Array(n * TIME_TERMS);
    const rhs = new Float64Array(n);
    const A2 = new Float64Array(2 * n * 2 * LINEAR_TERMS);
    const pos = new Float64Array(2 * n);
    const A3 = new Float64Array(2 * n * 2 * LINEAR_TERMS);
    const dir = new Float64Array(2 * n);
    let timeScale = 0;
    for (const r of rays) timeScale += r.scaledTime / n;
    rays.forEach((r, i) => {
      this.setInput(r.x, r.y, r.dx, r.dy, r.U);
      basis(TIME_BASIS, inp, timeRow);
      A.set(timeRow, i * TIME_TERMS);
      rhs[i] = r.scaledTime / timeScale - 1; // fit the variation about the mean, for precision
      basis(LINEAR_BASIS, inp, linRow);
      // Exit (x, y) = P·g + D·h: two rows per ray, g's coefficients then h's.
      for (let k = 0; k < LINEAR_TERMS; k++) {
        A2[2 * i * 2 * LINEAR_TERMS + k] = inp.px * linRow[k];
        A2[2 * i * 2 * LINEAR_TERMS + LINEAR_TERMS + k] = inp.dx * linRow[k];
        A2[(2 * i + 1) * 2 * LINEAR_TERMS + k] = inp.py * linRow[k];
        A2[(2 * i + 1) * 2 * LINEAR_TERMS + LINEAR_TERMS + k] = inp.dy * linRow[k];
      }
      pos[2 * i] = r.xOut;
      pos[2 * i + 1] = r.yOut;
      dir[2 * i] = r.dxOut;
      dir[2 * i + 1] = r.dyOut;
    });
    A3.set(A2);
    const timeCoef = solveLeastSquares(A, n, TIME_TERMS, rhs, 1e-3);
    for (let k = 0; k < TIME_TERMS; k++) timeCoef[k] *= timeScale;
    timeCoef[0] += timeScale; // the basis' first term is the constant 1
    this.timeCoef = timeCoef;
    this.posCoef = solveLeastSquares(A2, 2 * n, 2 * LINEAR_TERMS, pos, 1e-3);
    this.dirCoef = solveLeastSquares(A3, 2 * n, 2 * LINEAR_TERMS, dir, 1e-3);
    this.setDomain();
    this.rays.length = 0;
    this.state = State.VALIDATING;
  }

  /** Scaled time at the current input. */
  private scaledTime(): number {
    basis(TIME_BASIS, inp, timeRow);
    let t = 0;
    for (let k = 0; k < TIME_TERMS; k++) t += this.timeCoef[k] * timeRow[k];
    return t;
  }

  /** P·g + D·h at the current input, in metres (positions) or direction cosines. */
  private transverseOut(coef: Float64Array, x: number, y: number, dx: number, dy: number): Float64Array {
    basis(LINEAR_BASIS, inp, linRow);
    let g = 0;
    let h = 0;
    for (let k = 0; k < LINEAR_TERMS; k++) {
      g += coef[k] * linRow[k];
      h += coef[LINEAR_TERMS + k] * linRow[k];
    }
    // The fit used P/R and D/Dmax as prefactors.
    out2[0] = (x / this.rMax) * g + (dx / this.dMax) * h;
    out2[1] = (y / this.rMax) * g + (dy / this.dMax) * h;
    return out2;
  }

  private applyMap(st: IonState, k: number, speed: number, tLimit_s: number): boolean {
    const region = this.mirror.region;
    const x = ion.x;
    const y = ion.y;
    const dx = ion.vx / speed;
    const dy = ion.vy / speed;
    ion.t = st.t + this.scaledTime() / Math.sqrt(k);
    const pos = this.transverseOut(this.posCoef, x, y, dx, dy);
    const xOut = pos[0];
    const yOut = pos[1];
    const dir = this.transverseOut(this.dirCoef, x, y, dx, dy);
    // Exit speed from energy conservation between the entry and exit points on the entry plane.
    sampleField(region.map, Math.sqrt(x * x + y * y), region.entryZ_m, sample);
    const phiIn = sample.potential_V;
    sampleField(region.map, Math.sqrt(xOut * xOut + yOut * yOut), region.entryZ_m, sample);
    const speedOut = Math.sqrt(speed * speed + 2 * k * (phiIn - sample.potential_V));
    ion.x = xOut;
    ion.y = yOut;
    ion.z = region.entryZ_m;
    ion.vx = speedOut * dir[0];
    ion.vy = speedOut * dir[1];
    ion.vz = -Math.sqrt(Math.max(speedOut * speedOut - ion.vx * ion.vx - ion.vy * ion.vy, 0));
    return finish(st, ion.t <= tLimit_s ? SolvedExit.ENTRY : SolvedExit.TIME_LIMIT);
  }
}

const out2 = new Float64Array(2);

/** The ion left the mirror (or did not): as solvedMirror.mirrorSolved. */
function finish(st: IonState, exit: number): boolean {
  st.t = ion.t;
  leftSolvedRegion(ion);
  switch (exit) {
    case SolvedExit.ENTRY:
      st.v = -ion.vz;
      return true;
    case SolvedExit.STRUCK:
      st.fate = Fate.STRUCK_ELECTRODE;
      return false;
    case SolvedExit.FAR:
      st.fate = Fate.PASSED_THROUGH_MIRROR;
      return false;
    case SolvedExit.FAILED:
      st.fate = Fate.INTEGRATION_FAILED;
      return false;
    default:
      st.fate = Fate.TIMED_OUT;
      return false;
  }
}
