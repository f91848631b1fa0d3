/**
 * A per-run transfer map of a solved (aperture-plate) source: the exit time, exit position and
 * exit velocity at the source's far plane as polynomials of the ion's start state, fitted to
 * designed rays traced through the time-dependent solved field and used for the species' ions only
 * where it was validated on held-out ions. Tracing one ion through the source costs ~450 field
 * evaluations (more than half of them in the extraction delay, where the ion barely moves);
 * evaluating the map costs none.
 *
 * Why it holds: every ion starts at t = 0 and sees the same waveform, so for one species (one q/m;
 * the delay couples time and mass, so there is no 1/sqrt(q/m) scaling) the exit state is a smooth
 * function of the start state alone. The field is rotationally symmetric about the axis and
 * symmetric under reflection in every plane through it, so with the start offset P and transverse
 * velocity V the exit transverse position and velocity are P·g + V·h, with g, h functions of the
 * axial start (speed vz0, position z0) and the invariants |P|², P·V, |V|²; exit time and exit energy
 * per charge are such functions too. They are fitted as polynomials (least squares, Householder
 * QR) in those variables normalised to the species' range.
 *
 * Designed rays, not the run's first ions: when a species begins, the driver hands the map the
 * species' start arrays; the map spans their range (axial speed and position from their least to
 * their largest value; start offset and transverse speed up to TRANSVERSE_QUANTILE of the species,
 * at most TRANSVERSE_RMS_SPAN times their rms, so that a few stray ions cannot stretch it) with
 * DESIGN_PER_TERM rays per fitted term on a Halton sequence (axial coordinates on cosine-spaced,
 * Chebyshev-like points, so the polynomial is pinned at the ends of the range), traced at FINE
 * precision (rtol 1e-9, ~25× closer to the rtol-1e-12 reference than the normal trace on the demo).
 * Rays that strike, leave during the delay, or come within APERTURE_MARGIN of an aperture edge (at
 * the start, or on their straight exit line back to each apertured plate) shrink the transverse
 * range, and the rays are designed again over what is left (at most DESIGN_PASSES times). The
 * first VALIDATE_IONS ions of the species inside the domain are traced at FINE precision (they keep
 * those results) and compared with the map; the map carries the rest only if the rms and largest
 * errors of exit time, exit energy, position and direction meet the limits below. Ions outside the
 * domain (transverse tails, other starts) and ions whose predicted path comes near an edge are
 * traced directly at the normal precision; the report counts them by reason.
 *
 * Measured (bench/sourceTraceBench.ts, 2·10^4 ions of the aperture-source demo, machine loaded by
 * other work): 99.2 % mapped, 6.5·10^4–7.0·10^4 against 3.8·10^3–4.9·10^3 ions per CPU second for
 * the direct trace in the same run (14–17×); flight-time error 2.7e-8 rms (largest 4.3e-7, from the traced tails) of the time inside the
 * source against 1.35e-6 (4.0e-6) for the direct trace. Of the remaining time ~55 % is the designed
 * rays, ~25 % validation, ~20 % the traced tails; evaluating the map is negligible. The direct
 * trace spends more than half its ~450 field evaluations in the extraction delay.
 * Where it does not hold: in a source with 0.4 mm aperture radii (tests/physics/solvedSourceMap.test.ts)
 * the exit time bends sharply for starts below ~330 m/s (its second difference in vz0 changes
 * 100-fold), which no polynomial of this order follows to 5e-7; validation then declines the map.
 * Likewise wide beams (start offsets over ~half an aperture radius, transverse speeds of ~1 km/s on
 * the demo) need higher transverse orders than the map has: declined, traced directly.
 */
import { solveLeastSquaresMany } from '../fields/leastSquares';
import type { Ensemble } from '../ions/ensemble';
import { Exit, type RegionExit } from './fates';
import { createIonState, startIonState, type IonState } from './regions/contract';
import { crossSolvedSource, type SolvedSourceModel, type SourceMap } from './regions/solvedKernels';
import { SolvedFieldTracer, SolvedPrecision, createSolvedIonState } from './regions/solvedTracer';

/** Designed training rays per fitted coefficient of the time polynomial. */
export const DESIGN_PER_TERM = 1.5;
/** Held-out ions per species traced at FINE precision and compared with the map before it is used. */
export const VALIDATE_IONS = 30;
/**
 * The map's transverse range: this quantile of the species' start offsets and of its transverse
 * speeds, at most TRANSVERSE_RMS_SPAN times their rms (the rest is traced). A Gaussian spread's
 * 99.9 % lies within 2.6 rms, a uniform spot's all of it within 1.41 rms.
 */
export const TRANSVERSE_QUANTILE = 0.999;
export const TRANSVERSE_RMS_SPAN = 3;
/** Designs over a range shrunk away from rays that struck or grazed an edge, at most this many. */
export const DESIGN_PASSES = 3;
/** Species with fewer ions are traced directly: the designed rays would cost more than they save. */
export const SOURCE_MAP_MIN_IONS = 600;
/**
 * Validation limits against FINE traces. Time: rms 5e-7 of the time inside the source (the direct
 * trace at its default tolerance is 1e-6…6e-6 rms off the rtol-1e-12 reference on the demo, mostly a bias
 * built up in the delay), largest 2e-6. Exit energy per charge: 2e-8 relative rms (a drift of
 * length L then takes L/v·1e-8 longer or shorter: 0.2 ps on the demo's 1.2 m at ~20 µs, 2e-7 of
 * the ~1 µs inside the source, below the time limit). Exit position 1 µm rms, direction
 * (transverse over axial speed) 1e-6 rms. The FINE traces themselves are ~5e-8 (time) and ~2e-9
 * (energy) off the rtol-1e-12 reference on the demo.
 */
export const TIME_TOL_RMS = 5e-7;
export const TIME_TOL_MAX = 2e-6;
export const ENERGY_TOL_RMS = 2e-8;
export const POSITION_TOL_RMS_M = 1e-6;
export const DIRECTION_TOL_RMS = 1e-6;
/** Start and straight exit line must pass each aperture within this fraction of its radius. */
export const APERTURE_MARGIN = 0.7;

/** Exponents (e, s, a, b, c) of a basis: transverse order ≤ 2, total axial degree per transverse order; s only when z0 has a spread. */
function exponents(axialDegree: readonly number[], withS: boolean): Int8Array {
  const out: number[] = [];
  for (let td = 0; td <= 2; td++)
    for (let j = 0; j <= td; j++)
      for (let l = 0; l <= td - j; l++) {
        const m = td - j - l;
        for (let deg = 0; deg <= axialDegree[td]; deg++)
          for (let is = 0; is <= (withS ? deg : 0); is++) out.push(deg - is, is, j, l, m);
      }
  return Int8Array.from(out);
}
const TIME_DEGREES = [8, 4, 2];
const LINEAR_DEGREES = [6, 3, 1];
const BASES = {
  time: [exponents(TIME_DEGREES, false), exponents(TIME_DEGREES, true)],
  linear: [exponents(LINEAR_DEGREES, false), exponents(LINEAR_DEGREES, true)],
};
const MAX_POWER = 8;
const STRIDE = MAX_POWER + 1;

/** The normalised start state. */
interface MapInput {
  e: number;
  s: number;
  a: number;
  b: number;
  c: number;
  px: number;
  py: number;
  vx: number;
  vy: number;
}

const State = { WAITING: 0, VALIDATING: 1, MAPPED: 2, DIRECT: 3 } as const;

/** One species' part of a run's source map. */
export interface SourceSpeciesReport {
  qOverM_C_per_kg: number;
  mapped: number;
  traced: number;
  /** Designed rays traced (FINE) to fit the map; they are not ions of the run. */
  designRays: number;
  validationIons: number;
  /** Validation rms of the exit time relative to the time inside (null before validation ended). */
  validationTimeRms: number | null;
  validationEnergyRms: number | null;
  /** Why the map was not used for this species (or for its ions outside the domain), or '' when it carried them all. */
  note: string;
}

export interface SourceMapReport {
  mapped: number;
  traced: number;
  /** Why ions were traced, summed over species: no map (too few ions, failed validation), validation, outside the domain or near an aperture edge, another start. */
  tracedBecause: { noMap: number; validation: number; outsideDomain: number; otherStart: number };
  species: SourceSpeciesReport[];
}

/** Halton radical inverse of i in base b. */
function halton(i: number, b: number): number {
  let f = 1;
  let r = 0;
  while (i > 0) {
    f /= b;
    r += f * (i % b);
    i = Math.floor(i / b);
  }
  return r;
}

class SpeciesMap {
  state: number = State.WAITING;
  withS = false;
  timeBasis = BASES.time[0];
  linearBasis = BASES.linear[0];
  vMid = 0;
  vHalf = 1;
  zMid = 0;
  zHalf = 1;
  rMax = 1;
  wMax = 1;
  aHi = Infinity;
  cHi = Infinity;
  meanTime = 0;
  meanEnergy = 0;
  timeCoef = new Float64Array(0);
  energyCoef = new Float64Array(0);
  posCoef = new Float64Array(0);
  velCoef = new Float64Array(0);
  sumTime2 = 0;
  sumEnergy2 = 0;
  sumPos2 = 0;
  sumDir2 = 0;
  maxTime = 0;
  readonly report: SourceSpeciesReport;
  constructor(
    qOverM: number,
    readonly from: number,
    readonly to: number,
  ) {
    this.report = { qOverM_C_per_kg: qOverM, mapped: 0, traced: 0, designRays: 0, validationIons: 0, validationTimeRms: null, validationEnergyRms: null, note: '' };
  }
}

/** An apertured plate: aperture radius and the plate's z range (mesh frame). */
interface Aperture {
  radius_m: number;
  zMin_m: number;
  zMax_m: number;
}

/**
 * The map of one run's solved source. The driver calls `beginSpecies` with each species' ions
 * before flying them; `crossIon` then carries an ion from its start to the far plane by the map
 * where it holds and traces it otherwise (on the run's tracer, so its effort is in the run's
 * counters). Owns its scratch; nothing is shared between runs.
 */
export class SolvedSourceMapper implements SourceMap {
  private readonly ion = createSolvedIonState();
  private readonly rayState = createIonState();
  private readonly inp: MapInput = { e: 0, s: 0, a: 0, b: 0, c: 0, px: 0, py: 0, vx: 0, vy: 0 };
  private readonly powers = new Float64Array(5 * STRIDE);
  private readonly row = new Float64Array(256);
  private readonly out2 = new Float64Array(2);
  private readonly vel2 = new Float64Array(2);
  private readonly apertures: Aperture[] = [];
  private readonly maps: SpeciesMap[] = [];
  private current: SpeciesMap | null = null;
  private lastZ_m = 0;
  readonly report: SourceMapReport = { mapped: 0, traced: 0, tracedBecause: { noMap: 0, validation: 0, outsideDomain: 0, otherStart: 0 }, species: [] };

  constructor(
    private readonly source: SolvedSourceModel,
    private readonly tracer: SolvedFieldTracer = new SolvedFieldTracer(null),
  ) {
    const s = source.region.solids;
    for (let k = 0; k < s.length; k += 4) if (s[k] > 0) this.apertures.push({ radius_m: s[k], zMin_m: s[k + 2], zMax_m: s[k + 3] });
  }

  get stopZ_m(): number {
    return this.lastZ_m;
  }

  /**
   * Ions [from, to) of `ens` are one species of charge-to-mass `qOverM` and come next: the map's
   * domain is their range; it is fitted when the first of them arrives.
   */
  beginSpecies(ens: Ensemble, from: number, to: number, qOverM: number): void {
    const m = new SpeciesMap(qOverM, from, to);
    this.maps.push(m);
    this.report.species.push(m.report);
    this.current = m;
    if (to - from < SOURCE_MAP_MIN_IONS) return this.giveUp(m, `fewer than ${SOURCE_MAP_MIN_IONS} ions of the species`);
    let vLo = Infinity;
    let vHi = -Infinity;
    let zLo = Infinity;
    let zHi = -Infinity;
    const r2s = new Float64Array(to - from);
    const w2s = new Float64Array(to - from);
    let count = 0;
    for (let i = from; i < to; i++) {
      const v = ens.vz0_m_per_s[i];
      const z = ens.z0_m[i];
      if (z <= 0 && v < 0) continue; // struck at once: never mapped
      vLo = Math.min(vLo, v);
      vHi = Math.max(vHi, v);
      zLo = Math.min(zLo, z);
      zHi = Math.max(zHi, z);
      r2s[count] = ens.x0_m[i] ** 2 + ens.y0_m[i] ** 2;
      w2s[count++] = ens.vx0_m_per_s[i] ** 2 + ens.vy0_m_per_s[i] ** 2;
    }
    // The transverse tails are left to the tracer (beyond TRANSVERSE_QUANTILE, and beyond TRANSVERSE_RMS_SPAN
    // times the rms, which a few stray ions cannot stretch much): they alone would stretch the polynomial over paths near the edges.
    const range2 = (xs: Float64Array) => {
      const sorted = xs.subarray(0, count).sort();
      let mean = 0;
      for (let i = 0; i < count; i++) mean += sorted[i] / count;
      return Math.min(sorted[Math.min(count - 1, Math.floor(TRANSVERSE_QUANTILE * count))] ?? 0, TRANSVERSE_RMS_SPAN ** 2 * mean);
    };
    const r2 = range2(r2s);
    const w2 = range2(w2s);
    if (!(vHi >= vLo)) return this.giveUp(m, 'no ion of the species moves off the repeller');
    m.vMid = 0.5 * (vLo + vHi);
    m.vHalf = vHi > vLo ? 0.5 * (vHi - vLo) : 1;
    m.withS = zHi > zLo;
    m.zMid = 0.5 * (zLo + zHi);
    m.zHalf = m.withS ? 0.5 * (zHi - zLo) : 1;
    // A little beyond the largest offsets, so the largest ion is inside and the normalised invariants stay ≤ 1.
    m.rMax = r2 > 0 ? Math.sqrt(r2) * (1 + 1e-9) : 1e-12;
    m.wMax = w2 > 0 ? Math.sqrt(w2) * (1 + 1e-9) : 1e-12;
    m.timeBasis = BASES.time[m.withS ? 1 : 0];
    m.linearBasis = BASES.linear[m.withS ? 1 : 0];
    this.fit(m, qOverM);
  }

  private giveUp(m: SpeciesMap, note: string): void {
    m.state = State.DIRECT;
    m.report.note = note;
  }

  /** Set the normalised input from a start state; false when outside the map's domain. */
  private setInput(m: SpeciesMap, z0: number, vz0: number, x: number, y: number, vx: number, vy: number): boolean {
    const inp = this.inp;
    inp.e = (vz0 - m.vMid) / m.vHalf;
    inp.s = m.withS ? (z0 - m.zMid) / m.zHalf : 0;
    inp.px = x / m.rMax;
    inp.py = y / m.rMax;
    inp.vx = vx / m.wMax;
    inp.vy = vy / m.wMax;
    inp.a = inp.px * inp.px + inp.py * inp.py;
    inp.b = inp.px * inp.vx + inp.py * inp.vy;
    inp.c = inp.vx * inp.vx + inp.vy * inp.vy;
    // The axial range is the species' own (a start outside it comes from elsewhere: traced).
    const axial = inp.e >= -1 - 1e-12 && inp.e <= 1 + 1e-12 && (m.withS ? inp.s >= -1 - 1e-12 && inp.s <= 1 + 1e-12 : z0 === m.zMid);
    if (!(axial && inp.a < m.aHi && inp.c < m.cHi)) return false;
    this.fillPowers();
    return true;
  }

  /** Powers 0…MAX_POWER of each normalised variable at the current input (once per input, for both bases). */
  private fillPowers(): void {
    const inp = this.inp;
    const pw = this.powers;
    for (let v = 0; v < 5; v++) {
      const x = v === 0 ? inp.e : v === 1 ? inp.s : v === 2 ? inp.a : v === 3 ? inp.b : inp.c;
      let p = 1;
      for (let i = 0; i <= MAX_POWER; i++) {
        pw[v * STRIDE + i] = p;
        p *= x;
      }
    }
  }

  /** The basis `ex` at the current input (powers filled), into `this.row`. */
  private basis(ex: Int8Array): number {
    const pw = this.powers;
    const n = ex.length / 5;
    const row = this.row;
    for (let k = 0; k < n; k++) {
      const o = 5 * k;
      row[k] = pw[ex[o]] * pw[STRIDE + ex[o + 1]] * pw[2 * STRIDE + ex[o + 2]] * pw[3 * STRIDE + ex[o + 3]] * pw[4 * STRIDE + ex[o + 4]];
    }
    return n;
  }

  private dot(coef: Float64Array, n: number, offset = 0): number {
    const row = this.row;
    let sum = 0;
    for (let k = 0; k < n; k++) sum += coef[offset + k] * row[k];
    return sum;
  }

  /** P·g + V·h at the current input (linear basis in row) into `out`. */
  private transverse(coef: Float64Array, n: number, out: Float64Array): void {
    const g = this.dot(coef, n, 0);
    const h = this.dot(coef, n, n);
    out[0] = this.inp.px * g + this.inp.vx * h;
    out[1] = this.inp.py * g + this.inp.vy * h;
  }

  /** Largest ratio of a path's radius to an aperture's: at the start, and on the straight exit line back to each apertured plate. */
  private edgeRatio(x0: number, y0: number, xOut: number, yOut: number, vxOut: number, vyOut: number, vzOut: number): number {
    let worst = 0;
    const r0 = Math.sqrt(x0 * x0 + y0 * y0);
    const far = this.source.region.farZ_m;
    for (const ap of this.apertures) {
      worst = Math.max(worst, r0 / ap.radius_m);
      for (let side = 0; side < 2; side++) {
        const dt = (far - (side === 0 ? ap.zMin_m : ap.zMax_m)) / vzOut;
        const x = xOut - vxOut * dt;
        const y = yOut - vyOut * dt;
        worst = Math.max(worst, Math.sqrt(x * x + y * y) / ap.radius_m);
      }
    }
    return worst;
  }

  /** Trace designed rays over the species' range, shrink the transverse domain clear of the edges, fit. */
  private fit(m: SpeciesMap, k: number): void {
    const timeTerms = m.timeBasis.length / 5;
    const n = Math.ceil(DESIGN_PER_TERM * timeTerms);
    const rays = new Float64Array(n * 13); // z0, vz0, x, y, vx, vy, t, xOut, yOut, vxOut, vyOut, vzOut, clear
    let hiA = Infinity; // normalised |P|² and |V|² bounds below which every designed ray was clear
    let hiC = Infinity;
    for (let pass = 0; pass < DESIGN_PASSES; pass++) {
      if (pass > 0) {
        if (hiA === Infinity && hiC === Infinity) break;
        // Some rays struck or grazed an edge: design again over the part of the range clear of them.
        m.rMax *= Math.sqrt(Math.min(hiA, 1));
        m.wMax *= Math.sqrt(Math.min(hiC, 1));
        hiA = hiC = Infinity;
      }
      this.designRays(m, k, n, rays);
      for (let j = 0; j < n; j++) {
        const o = 13 * j;
        if (rays[o + 12] === 1) continue;
        // Keep out every ray like this one: below its |P|² or below its |V|², whichever it is extreme in.
        const a = (rays[o + 2] ** 2 + rays[o + 3] ** 2) / m.rMax ** 2;
        const c = (rays[o + 4] ** 2 + rays[o + 5] ** 2) / m.wMax ** 2;
        if (a >= c) hiA = Math.min(hiA, a);
        else hiC = Math.min(hiC, c);
      }
    }
    // The designed range itself (|P|², |V|² ≤ 1 normalised), less any part where a ray was not clear.
    m.aHi = Math.min(hiA, 1 + 1e-12);
    m.cHi = Math.min(hiC, 1 + 1e-12);
    let used = 0;
    for (let j = 0; j < n; j++) {
      const o = 13 * j;
      if (rays[o + 12] === 1 && this.setInput(m, rays[o], rays[o + 1], rays[o + 2], rays[o + 3], rays[o + 4], rays[o + 5])) used++;
      else rays[o + 12] = 0;
    }
    if (used < 1.25 * timeTerms) return this.giveUp(m, `too few designed rays passed clear of the electrodes (${used} of ${n})`);
    if (hiA < Infinity || hiC < Infinity || m.report.designRays > n) m.report.note = 'ions with the largest start offsets or transverse speeds are traced: designed rays there came near an aperture edge or struck';
    this.fitRays(m, k, n, used, rays);
  }

  /** Trace n designed rays over the map's current range into `rays` (13 numbers each; the last is 1 when the ray passed clear). */
  private designRays(m: SpeciesMap, k: number, n: number, rays: Float64Array): void {
    const st = this.rayState;
    const delay = this.source.timing.delay_s;
    for (let j = 0; j < n; j++) {
      const u = [halton(j + 1, 2), halton(j + 1, 3), halton(j + 1, 5), halton(j + 1, 7), halton(j + 1, 11)];
      const e = -Math.cos(Math.PI * u[0]);
      const sN = m.withS ? -Math.cos(Math.PI * u[1]) : 0;
      const a = u[2];
      const c = u[3];
      const phi = Math.PI * u[4];
      const z0 = m.zMid + m.zHalf * sN;
      const vz0 = m.vMid + m.vHalf * e;
      const x = m.rMax * Math.sqrt(a);
      const vx = m.wMax * Math.sqrt(c) * Math.cos(phi);
      const vy = m.wMax * Math.sqrt(c) * Math.sin(phi);
      startIonState(st, m.withS ? z0 : m.zMid, vz0, x, 0, vx, vy);
      const exit = crossSolvedSource(st, this.source, k, Infinity, this.tracer, this.ion, SolvedPrecision.FINE);
      m.report.designRays++;
      const o = 13 * j;
      rays.set([m.withS ? z0 : m.zMid, vz0, x, 0, vx, vy, st.t, st.xRef, st.yRef, st.vxRef, st.vyRef, st.v], o);
      const clear = exit === Exit.FAR && st.t > delay && this.edgeRatio(x, 0, st.xRef, st.yRef, st.vxRef, st.vyRef, st.v) <= APERTURE_MARGIN;
      rays[o + 12] = clear ? 1 : 0;
    }
  }

  /** Least-squares fit of time, energy and the transverse exit state to the `used` clear rays. */
  private fitRays(m: SpeciesMap, k: number, n: number, used: number, rays: Float64Array): void {
    const timeTerms = m.timeBasis.length / 5;
    const linTerms = m.linearBasis.length / 5;
    let tMean = 0;
    let uMean = 0;
    for (let j = 0; j < n; j++) {
      const o = 13 * j;
      if (rays[o + 12] !== 1) continue;
      tMean += rays[o + 6] / used;
      uMean += (rays[o + 9] ** 2 + rays[o + 10] ** 2 + rays[o + 11] ** 2) / (2 * k) / used;
    }
    m.meanTime = tMean;
    m.meanEnergy = uMean;
    const A = new Float64Array(used * timeTerms);
    const rt = new Float64Array(used);
    const ru = new Float64Array(used);
    const A2 = new Float64Array(2 * used * 2 * linTerms);
    const pos = new Float64Array(2 * used);
    const vel = new Float64Array(2 * used);
    const inp = this.inp;
    const row = this.row;
    let i = 0;
    for (let j = 0; j < n; j++) {
      const o = 13 * j;
      if (rays[o + 12] !== 1) continue;
      this.setInput(m, rays[o], rays[o + 1], rays[o + 2], rays[o + 3], rays[o + 4], rays[o + 5]);
      this.basis(m.timeBasis);
      A.set(row.subarray(0, timeTerms), i * timeTerms);
      rt[i] = rays[o + 6] / tMean - 1; // the variation about the mean, for precision
      ru[i] = (rays[o + 9] ** 2 + rays[o + 10] ** 2 + rays[o + 11] ** 2) / (2 * k) / uMean - 1;
      this.basis(m.linearBasis);
      const w = 2 * linTerms;
      for (let q = 0; q < linTerms; q++) {
        A2[2 * i * w + q] = inp.px * row[q];
        A2[2 * i * w + linTerms + q] = inp.vx * row[q];
        A2[(2 * i + 1) * w + q] = inp.py * row[q];
        A2[(2 * i + 1) * w + linTerms + q] = inp.vy * row[q];
      }
      pos[2 * i] = rays[o + 7];
      pos[2 * i + 1] = rays[o + 8];
      vel[2 * i] = rays[o + 9];
      vel[2 * i + 1] = rays[o + 10];
      i++;
    }
    [m.timeCoef, m.energyCoef] = solveLeastSquaresMany(A, used, timeTerms, [rt, ru], 1e-9);
    [m.posCoef, m.velCoef] = solveLeastSquaresMany(A2, 2 * used, 2 * linTerms, [pos, vel], 1e-9);
    m.state = State.VALIDATING;
  }

  /** The map's exit state at the current input: time, energy per charge; position and velocity into out2, vel2. */
  private evaluate(m: SpeciesMap, k: number): { t: number; vz: number } {
    const timeTerms = this.basis(m.timeBasis);
    const t = m.meanTime * (1 + this.dot(m.timeCoef, timeTerms));
    const U = m.meanEnergy * (1 + this.dot(m.energyCoef, timeTerms));
    const linTerms = this.basis(m.linearBasis);
    this.transverse(m.posCoef, linTerms, this.out2);
    this.transverse(m.velCoef, linTerms, this.vel2);
    const v2 = 2 * k * U - this.vel2[0] ** 2 - this.vel2[1] ** 2;
    this.result.t = t;
    this.result.vz = v2 > 0 ? Math.sqrt(v2) : NaN;
    return this.result;
  }
  private readonly result = { t: 0, vz: 0 };

  crossIon(st: IonState, k: number, tLimit_s: number): RegionExit {
    const m = this.current;
    const report = this.report;
    const x0 = st.xRef + st.vxRef * (st.t - st.tRef);
    const y0 = st.yRef + st.vyRef * (st.t - st.tRef);
    const z0 = st.z;
    const vz0 = st.v;
    const vx0 = st.vxRef;
    const vy0 = st.vyRef;
    let why: 'noMap' | 'validation' | 'outsideDomain' | 'otherStart' = 'noMap';
    if (m !== null && m.report.qOverM_C_per_kg === k && (m.state === State.MAPPED || m.state === State.VALIDATING)) {
      why = 'otherStart';
      if (st.t === 0 && !(z0 <= 0 && vz0 < 0)) {
        why = 'outsideDomain';
        if (this.setInput(m, z0, vz0, x0, y0, vx0, vy0)) {
          const r = this.evaluate(m, k);
          const out2 = this.out2;
          const vel2 = this.vel2;
          const clear = r.vz > 0 && r.t > this.source.timing.delay_s && r.t <= tLimit_s && this.edgeRatio(x0, y0, out2[0], out2[1], vel2[0], vel2[1], r.vz) <= APERTURE_MARGIN;
          if (clear && m.state === State.MAPPED) {
            m.report.mapped++;
            report.mapped++;
            st.t = r.t;
            st.tRef = r.t;
            st.xRef = out2[0];
            st.yRef = out2[1];
            st.vxRef = vel2[0];
            st.vyRef = vel2[1];
            st.struckElectrode = -1;
            st.v = r.vz;
            st.z = 0;
            this.lastZ_m = this.source.region.farZ_m;
            return Exit.FAR;
          }
          if (clear) return this.validate(m, st, k, tLimit_s, r.t, r.vz);
        }
      }
    }
    if (m !== null) m.report.traced++;
    report.traced++;
    report.tracedBecause[why]++;
    const exit = crossSolvedSource(st, this.source, k, tLimit_s, this.tracer, this.ion);
    this.lastZ_m = this.ion.z;
    return exit;
  }

  /** Trace the ion at FINE precision (it keeps that result) and compare it with the map's prediction (already in out2, vel2). */
  private validate(m: SpeciesMap, st: IonState, k: number, tLimit_s: number, tMap: number, vzMap: number): RegionExit {
    const xMap = this.out2[0];
    const yMap = this.out2[1];
    const vxMap = this.vel2[0];
    const vyMap = this.vel2[1];
    const exit = crossSolvedSource(st, this.source, k, tLimit_s, this.tracer, this.ion, SolvedPrecision.FINE);
    this.lastZ_m = this.ion.z;
    m.report.traced++;
    this.report.traced++;
    this.report.tracedBecause.validation++;
    if (exit !== Exit.FAR) {
      this.giveUp(m, 'a validation ion inside the fitted domain did not get through the source');
      return exit;
    }
    const rel = Math.abs(tMap - st.t) / st.t;
    const uMap = (vzMap ** 2 + vxMap ** 2 + vyMap ** 2) / (2 * k);
    const uTrace = (st.v ** 2 + st.vxRef ** 2 + st.vyRef ** 2) / (2 * k);
    const du = (uMap - uTrace) / uTrace;
    m.sumTime2 += rel * rel;
    m.maxTime = Math.max(m.maxTime, rel);
    m.sumEnergy2 += du * du;
    m.sumPos2 += (xMap - st.xRef) ** 2 + (yMap - st.yRef) ** 2;
    m.sumDir2 += ((vxMap - st.vxRef) ** 2 + (vyMap - st.vyRef) ** 2) / (st.v * st.v);
    const n = ++m.report.validationIons;
    if (!(rel <= TIME_TOL_MAX)) {
      this.giveUp(m, `validation ion outside tolerance (time ${rel.toExponential(1)} relative)`);
      return exit;
    }
    if (n < VALIDATE_IONS) return exit;
    const timeRms = Math.sqrt(m.sumTime2 / n);
    const energyRms = Math.sqrt(m.sumEnergy2 / n);
    const posRms = Math.sqrt(m.sumPos2 / n);
    const dirRms = Math.sqrt(m.sumDir2 / n);
    m.report.validationTimeRms = timeRms;
    m.report.validationEnergyRms = energyRms;
    if (timeRms <= TIME_TOL_RMS && energyRms <= ENERGY_TOL_RMS && posRms <= POSITION_TOL_RMS_M && dirRms <= DIRECTION_TOL_RMS) m.state = State.MAPPED;
    else
      this.giveUp(
        m,
        `validation outside tolerance (rms time ${timeRms.toExponential(1)} relative, energy ${energyRms.toExponential(1)}, exit position ${posRms.toExponential(1)} m, direction ${dirRms.toExponential(1)})`,
      );
    return exit;
  }
}

/** One line per species for the text report: how its ions crossed the solved source. */
export function formatSourceMap(report: SourceMapReport): string {
  const b = report.tracedBecause;
  const lines = report.species.map((s) => {
    const how = s.validationTimeRms !== null && s.note === '' ? 'transfer map validated' : s.note === '' ? 'transfer map not validated' : s.mapped > 0 ? `transfer map validated; ${s.note}` : `traced directly: ${s.note}`;
    const rms = s.validationTimeRms === null ? '' : `, validation rms time ${s.validationTimeRms.toExponential(1)}, energy ${(s.validationEnergyRms ?? 0).toExponential(1)}`;
    return `  q/m ${s.qOverM_C_per_kg.toPrecision(6)} C/kg: ${s.mapped} ions mapped, ${s.traced} traced, ${s.designRays} designed rays (${how}${rms})`;
  });
  return (
    `Solved source: ${report.mapped} ions by the transfer map, ${report.traced} traced through the field ` +
    `(${b.validation} validating the map, ${b.outsideDomain} outside its domain or near an aperture edge, ${b.noMap} without a map, ${b.otherStart} starting elsewhere)\n${lines.join('\n')}\n`
  );
}
