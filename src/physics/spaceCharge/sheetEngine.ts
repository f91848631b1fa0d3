/**
 * Space charge of one shot as charged sheets: every ion is a sheet of its charge spread evenly
 * over the beam cross-section A, so its field is uniform, E = Q/(2·ε0·A) pointing away from it
 * on either side (Gauss's law for an infinite plane). An ion then feels the external field of its
 * stage plus (Q_below − Q_above)/(2·ε0·A) from the other sheets, which is constant until some
 * sheet passes it: between events every ion moves with constant acceleration, in closed form.
 *
 * Events, taken in time order from a binary heap (./eventQueue) with lazy invalidation (a version number per
 * sheet): two neighbouring sheets meet (they pass through each other and swap rank: only those
 * two change acceleration), a sheet reaches a plane of its region (the next source stage, the
 * drift, or its fate), the extraction switches (every sheet changes acceleration), a sheet leaves
 * the modelled space (every other sheet loses its field). Each sheet keeps its own reference time,
 * so a crossing moves two sheets, not all of them.
 *
 * Modelled space: the uniform-field source stages (hold field until the delay, then the
 * extraction field, an ideal step) and the field-free drift to the mirror entrance (reflectron)
 * or the detector end of the drift (linear). Behind that, an ion continues alone, in the exact
 * engine's closed form (mirror, return drift, post-acceleration): its charge no longer acts. The
 * sheets' fields are those of free space: images in the grids are left out.
 *
 * A sheet alone meets only the events of the exact engine and uses its formulas in the same
 * order, so one ion per shot gives the exact engine's numbers bit for bit.
 */
import type { AnalyserModel } from '../analyser';
import { createExactPlan, driftExact, mirrorExact, postAccelerateExact, prepareExactPlan, type ExactPlan, type IonState } from '../exactEngine';
import { Fate } from '../fates';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../constants';
import { EventQueue } from './eventQueue';
import { createMotion, crossForward, Crossing, firstExit, firstPositiveRoot } from '../uniformField';

/** Vacuum permittivity ε0 in F/m (CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)). */
export const VACUUM_PERMITTIVITY_F_PER_M = 8.8541878128e-12;

/** A shot whose events exceed this is stopped and its ions marked as failed (a guard, never reached in tests). */
const MAX_EVENTS_PER_SHOT = 200_000_000;

const PLANE = 0;
const PAIR = 1;
const SWITCH = 2;

/** Why the sheet engine cannot run this analyser, or null when it can. */
export function spaceChargeUnsupported(model: AnalyserModel): string | null {
  if (model.source.solved) return 'the source has a solved field; the sheet model needs ideal grids';
  if (model.mirror?.solved) return 'the mirror has a solved field; the sheet model hands ions to the closed-form mirror';
  if (model.mirror?.profile) return 'the mirror has a non-uniform profile; the sheet model hands ions to the closed-form mirror';
  if (model.source.rise.kind !== 'step') return 'the extraction pulse rises gradually; the sheet model needs a step';
  if (model.forceIntegrator) return 'run.engine is "integrator"; the sheet model is closed-form only';
  return null;
}

/** Output of a traced sheet, written by index of the ion it stands for. */
export interface SheetSink {
  readonly flightTime_s: Float64Array;
  readonly fate: Uint8Array;
  readonly finalSpeed_m_per_s: Float64Array;
  readonly weight: Float64Array;
}

export class SheetEngine {
  private readonly model: AnalyserModel;
  private readonly plans: ExactPlan[] = [];
  private readonly planOfMz = new Map<number, number>();
  private readonly stages: number;
  private readonly sourceExit_m: number;
  /** 1/(2·ε0·A): field per unit sheet charge (V/m per C). */
  readonly fieldPerCharge: number;

  private cap = 0;
  private n = 0;
  private ion = new Int32Array(0);
  private plan = new Int32Array(0);
  private qm = new Float64Array(0);
  private charge = new Float64Array(0);
  private mass = new Float64Array(0);
  private tRef = new Float64Array(0);
  private zRef = new Float64Array(0);
  private vRef = new Float64Array(0);
  private acc = new Float64Array(0);
  private sum = new Float64Array(0);
  private weight = new Float64Array(0);
  private region = new Int32Array(0);
  private rank = new Int32Array(0);
  private order = new Int32Array(0);
  private ver = new Int32Array(0);
  private alive = new Uint8Array(0);
  private aliveCount = 0;
  private hold = false;
  /** Events handled in the current shot. */
  events = 0;

  private readonly queue = new EventQueue();

  private readonly motion = createMotion();
  private readonly st: IonState = { t: 0, z: 0, v: 0, fate: Fate.UNSET, w: 1 };

  constructor(model: AnalyserModel, beamArea_m2: number) {
    if (!(beamArea_m2 > 0)) throw new RangeError(`beam area must be > 0 (got ${beamArea_m2})`);
    const reason = spaceChargeUnsupported(model);
    if (reason) throw new RangeError(reason);
    this.model = model;
    this.stages = model.source.stageLengths_m.length;
    this.sourceExit_m = model.source.stageLengths_m.reduce((a, b) => a + b, 0);
    this.fieldPerCharge = 1 / (2 * VACUUM_PERMITTIVITY_F_PER_M * beamArea_m2);
  }

  private planFor(mz: number): number {
    let p = this.planOfMz.get(mz);
    if (p === undefined) {
      p = this.plans.length;
      this.plans.push(prepareExactPlan(createExactPlan(), this.model, mz));
      this.planOfMz.set(mz, p);
    }
    return p;
  }

  private ensure(n: number): void {
    if (n <= this.cap) return;
    const c = Math.max(n, 2 * this.cap, 16);
    this.cap = c;
    this.ion = new Int32Array(c);
    this.plan = new Int32Array(c);
    this.qm = new Float64Array(c);
    this.charge = new Float64Array(c);
    this.mass = new Float64Array(c);
    this.tRef = new Float64Array(c);
    this.zRef = new Float64Array(c);
    this.vRef = new Float64Array(c);
    this.acc = new Float64Array(c);
    this.sum = new Float64Array(c);
    this.weight = new Float64Array(c);
    this.region = new Int32Array(c);
    this.rank = new Int32Array(c);
    this.order = new Int32Array(c);
    this.ver = new Int32Array(c);
    this.alive = new Uint8Array(c);
  }

  /**
   * Loads a shot: ion `ions[k]` of m/z `mz[k]` and charge state `chargeState[k]` starts at `z0[k]`
   * (from the repeller; or, with `inDrift`, from the start of the drift) with axial speed `v0[k]`.
   */
  load(ions: ArrayLike<number>, mz: ArrayLike<number>, chargeState: ArrayLike<number>, z0: ArrayLike<number>, v0: ArrayLike<number>, inDrift = false): void {
    const n = ions.length;
    this.ensure(n);
    this.n = n;
    this.aliveCount = n;
    this.events = 0;
    const pol = this.model.polarity;
    for (let k = 0; k < n; k++) {
      this.ion[k] = ions[k];
      this.plan[k] = this.planFor(mz[k]);
      this.qm[k] = this.plans[this.plan[k]].qOverM;
      this.charge[k] = pol * chargeState[k] * ELEMENTARY_CHARGE_C;
      this.mass[k] = mz[k] * chargeState[k] * ATOMIC_MASS_CONSTANT_KG;
      this.tRef[k] = 0;
      this.zRef[k] = z0[k];
      this.vRef[k] = v0[k];
      this.weight[k] = 1;
      this.region[k] = inDrift ? this.stages : 0;
      this.ver[k] = 0;
      this.alive[k] = 1;
      this.order[k] = k;
    }
    const z = this.zRef;
    const v = this.vRef;
    // Coincident sheets are ranked by velocity: the faster one is above an instant later.
    const sorted = Array.from(this.order.subarray(0, n)).sort((a, b) => z[a] - z[b] || v[a] - v[b] || a - b);
    for (let r = 0; r < n; r++) {
      this.order[r] = sorted[r];
      this.rank[sorted[r]] = r;
    }
    this.hold = !inDrift && this.model.source.delay_s > 0;
    this.recomputeSums();
    for (let k = 0; k < n; k++) this.acc[k] = this.accelerationOf(k);
    this.rebuildHeap(0);
  }

  /** Runs the shot until every sheet has a fate (or until `until`, leaving the rest in flight); writes fates into `sink`. */
  run(sink: SheetSink | null, until = Infinity): void {
    const limit = Math.min(until, this.model.maxFlightTime_s);
    const q = this.queue;
    while (q.length > 0 && this.aliveCount > 0) {
      if (q.time[0] > limit) break;
      const te = q.time[0];
      const kind = q.kind[0];
      const slot = q.slot[0];
      const a = q.a[slot];
      const b = q.b[slot];
      const va = q.versionA[slot];
      const vb = q.versionB[slot];
      const side = q.side[slot];
      const vOut = q.speed[slot];
      q.pop();
      if (kind === SWITCH) {
        if (!this.hold) continue;
        this.events++;
        this.hold = false;
        for (let r = 0; r < this.n; r++) {
          const k = this.order[r];
          if (!this.alive[k]) continue;
          this.rebase(k, te);
          this.acc[k] = this.accelerationOf(k);
        }
        this.rebuildHeap(te);
        continue;
      }
      if (!this.alive[a] || this.ver[a] !== va) continue;
      if (kind === PAIR && (!this.alive[b] || this.ver[b] !== vb)) continue;
      if (++this.events > MAX_EVENTS_PER_SHOT) break;
      if (kind === PAIR) this.passThrough(a, b, te);
      else this.reachPlane(a, te, side, vOut, sink);
    }
    if (until < this.model.maxFlightTime_s && this.events <= MAX_EVENTS_PER_SHOT) return;
    const failed = this.events > MAX_EVENTS_PER_SHOT;
    for (let k = 0; k < this.n; k++) {
      if (!this.alive[k]) continue;
      this.alive[k] = 0;
      if (sink) this.write(sink, k, this.model.maxFlightTime_s, failed ? Fate.INTEGRATION_FAILED : Fate.TIMED_OUT, 0);
    }
    this.aliveCount = 0;
  }

  /** Axial position (global, from the repeller) of sheet k at time t. */
  positionAt(k: number, t: number): number {
    const d = t - this.tRef[k];
    return this.offset(k) + this.zRef[k] + (this.vRef[k] * d + 0.5 * this.acc[k] * d * d);
  }

  velocityAt(k: number, t: number): number {
    return this.vRef[k] + this.acc[k] * (t - this.tRef[k]);
  }

  isAlive(k: number): boolean {
    return this.alive[k] === 1;
  }

  /** Kinetic + external potential + mutual (sheet–sheet) energy of the sheets still modelled, at time t (J). */
  energyAt(t: number): number {
    let e = 0;
    for (let i = 0; i < this.n; i++) {
      if (!this.alive[i]) continue;
      const v = this.velocityAt(i, t);
      const z = this.positionAt(i, t);
      e += 0.5 * this.mass[i] * v * v + this.charge[i] * this.externalPotential(i, z);
      for (let j = i + 1; j < this.n; j++) {
        if (this.alive[j]) e -= this.fieldPerCharge * this.charge[i] * this.charge[j] * Math.abs(z - this.positionAt(j, t));
      }
    }
    return e;
  }

  // --- internals ------------------------------------------------------------------------------

  private offset(k: number): number {
    return this.region[k] >= this.stages ? this.sourceExit_m : 0;
  }

  private externalPotential(k: number, z: number): number {
    const src = this.model.source;
    if (this.region[k] >= this.stages) return this.model.drift.potential_V;
    const j = this.region[k];
    let lo = 0;
    for (let s = 0; s < j; s++) lo += src.stageLengths_m[s];
    const which = this.hold ? 'hold_V' : 'final_V';
    const a = src.planes[j][which];
    const b = src.planes[j + 1][which];
    return a + ((b - a) * (z - lo)) / src.stageLengths_m[j];
  }

  private externalAcceleration(k: number): number {
    const r = this.region[k];
    if (r >= this.stages) return 0;
    const p = this.plans[this.plan[k]];
    return this.hold ? (r === 0 ? p.holdAcceleration : 0) : p.sourceAcceleration[r];
  }

  private accelerationOf(k: number): number {
    const ext = this.externalAcceleration(k);
    const s = this.sum[k];
    return s === 0 ? ext : ext + this.qm[k] * s * this.fieldPerCharge;
  }

  /** Q_below − Q_above for every live sheet, from the rank order (the live sheets are order[0 … aliveCount)). */
  private recomputeSums(): void {
    const live = this.aliveCount;
    let total = 0;
    for (let r = 0; r < live; r++) total += this.charge[this.order[r]];
    let below = 0;
    for (let r = 0; r < live; r++) {
      const k = this.order[r];
      const above = total - below - this.charge[k];
      this.sum[k] = this.aliveCount === 1 ? 0 : below - above;
      below += this.charge[k];
    }
  }

  private rebase(k: number, t: number): void {
    const d = t - this.tRef[k];
    if (d === 0) return;
    const a = this.acc[k];
    this.zRef[k] += this.vRef[k] * d + 0.5 * a * d * d;
    this.vRef[k] += a * d;
    this.tRef[k] = t;
  }

  /**
   * True when sheet k is the top or bottom sheet of its region in rank order. Only those can reach a
   * plane of the region before meeting another sheet, so only they get plane events (a few per shot
   * instead of one per sheet, each time every sheet changes acceleration).
   */
  private atRegionEdge(k: number): boolean {
    const r = this.rank[k];
    if (r === 0 || r + 1 >= this.aliveCount) return true;
    return this.region[this.order[r - 1]] !== this.region[k] || this.region[this.order[r + 1]] !== this.region[k];
  }

  /** Schedules sheet k's next plane of its region (computed from its reference state), if it is at a region edge. */
  private schedulePlane(k: number): void {
    if (!this.atRegionEdge(k)) return;
    const m = this.motion;
    const z = this.zRef[k];
    const v = this.vRef[k];
    const a = this.acc[k];
    const r = this.region[k];
    const t0 = this.tRef[k];
    if (r >= this.stages) {
      const length = this.plans[this.plan[k]].driftLength_m;
      if (a === 0) {
        // The exact engine's drift: length / v.
        if (v > 0) this.push(t0 + (length - z) / v, PLANE, k, -1, 1, v);
        else if (v < 0) this.push(t0 + z / -v, PLANE, k, -1, -1, v);
        return;
      }
      this.scheduleStage(k, t0, z, v, a, 0, length);
      return;
    }
    const p = this.plans[this.plan[k]];
    if (this.hold) {
      const side = firstExit(m, z, v, a, 0, p.sourcePlane_m[1]);
      if (side !== 0) this.push(t0 + m.dt, PLANE, k, -1, side, m.v);
      return;
    }
    this.scheduleStage(k, t0, z, v, a, p.sourcePlane_m[r], p.sourcePlane_m[r + 1]);
  }

  private scheduleStage(k: number, t0: number, z: number, v: number, a: number, lo: number, hi: number): void {
    const m = this.motion;
    const c = crossForward(m, v, a, hi - z, z - lo);
    if (c === Crossing.FORWARD) {
      this.push(t0 + m.dt, PLANE, k, -1, 1, m.v);
      return;
    }
    if (c === Crossing.NEVER) return;
    const side = firstExit(m, z, v, a, lo, hi);
    if (side !== 0) this.push(t0 + m.dt, PLANE, k, -1, side, m.v);
  }

  /** Schedules the meeting of the sheets at ranks r and r+1, seen from time t. */
  private schedulePair(r: number, t: number): void {
    if (r < 0 || r + 1 >= this.n) return;
    const lower = this.order[r];
    const upper = this.order[r + 1];
    if (!this.alive[lower] || !this.alive[upper]) return;
    let gap = this.positionAt(upper, t) - this.positionAt(lower, t);
    const dv = this.velocityAt(upper, t) - this.velocityAt(lower, t);
    const da = this.acc[upper] - this.acc[lower];
    if (gap <= 0 && (dv < 0 || (dv === 0 && da < 0))) {
      this.push(t, PAIR, lower, upper, 0, 0);
      return;
    }
    if (gap < 0) gap = 0;
    const dt = firstPositiveRoot(-gap, dv, da);
    if (dt < Infinity) this.push(t + dt, PAIR, lower, upper, 0, 0);
  }

  /** Drops every queued event and schedules all of them afresh (appended unordered, then heapified in O(n)). */
  private rebuildHeap(t: number): void {
    this.queue.clear(true);
    if (this.hold) this.push(this.model.source.delay_s, SWITCH, -1, -1, 0, 0);
    const live = this.aliveCount;
    for (let r = 0; r < live; r++) {
      const k = this.order[r];
      this.ver[k]++;
      this.schedulePlane(k);
    }
    for (let r = 0; r + 1 < live; r++) this.schedulePair(r, t);
    this.queue.heapify();
  }

  /** Two neighbours meet: they pass through each other and swap rank. */
  private passThrough(lower: number, upper: number, t: number): void {
    this.rebase(lower, t);
    this.rebase(upper, t);
    // Put both on the same point so the new pair starts at zero gap, moving apart.
    const meet = 0.5 * (this.positionAt(lower, t) + this.positionAt(upper, t));
    this.zRef[lower] = meet - this.offset(lower);
    this.zRef[upper] = meet - this.offset(upper);
    const r = this.rank[lower];
    this.order[r] = upper;
    this.order[r + 1] = lower;
    this.rank[upper] = r;
    this.rank[lower] = r + 1;
    this.sum[lower] += 2 * this.charge[upper];
    this.sum[upper] -= 2 * this.charge[lower];
    this.acc[lower] = this.accelerationOf(lower);
    this.acc[upper] = this.accelerationOf(upper);
    this.ver[lower]++;
    this.ver[upper]++;
    this.schedulePlane(lower);
    this.schedulePlane(upper);
    this.schedulePair(r - 1, t);
    this.schedulePair(r, t);
    this.schedulePair(r + 1, t);
  }

  private reachPlane(k: number, t: number, side: number, vOut: number, sink: SheetSink | null): void {
    const r = this.region[k];
    const p = this.plans[this.plan[k]];
    this.tRef[k] = t;
    this.vRef[k] = vOut;
    if (r >= this.stages) {
      this.zRef[k] = side > 0 ? p.driftLength_m : 0;
      if (side < 0) return this.remove(k, t, Fate.TURNED_BACK, 0, sink); // pushed back into the source by the cloud
      const st = this.st;
      st.t = t;
      st.z = this.sourceExit_m + p.driftLength_m;
      st.v = vOut;
      st.w = this.weight[k];
      st.fate = Fate.UNSET;
      finishAfterDrift(st, p);
      return this.remove(k, t, st.fate, st.fate === Fate.DETECTED ? Math.abs(st.v) : 0, sink, st.w, st.t);
    }
    if (this.hold) {
      this.zRef[k] = side < 0 ? 0 : p.sourcePlane_m[1];
      return this.remove(k, t, side < 0 ? Fate.STRUCK_REPELLER : Fate.LEFT_SOURCE_DURING_DELAY, 0, sink);
    }
    if (side < 0) {
      this.zRef[k] = p.sourcePlane_m[r];
      return this.remove(k, t, r === 0 ? Fate.STRUCK_REPELLER : Fate.TURNED_BACK, 0, sink);
    }
    this.weight[k] *= p.sourceExitTransmission[r];
    this.region[k] = r + 1;
    this.zRef[k] = r + 1 >= this.stages ? 0 : p.sourcePlane_m[r + 1];
    this.acc[k] = this.accelerationOf(k);
    this.ver[k]++;
    this.schedulePlane(k);
    const rank = this.rank[k];
    // The sheet below is now the top of the region k left (a second event for it is harmless: the first one to fire bumps its version).
    if (rank > 0) this.schedulePlane(this.order[rank - 1]);
    this.schedulePair(rank - 1, t);
    this.schedulePair(rank, t);
  }

  /** Sheet k leaves the modelled space at time t; `recorded_s` is the time its fate was decided (later for an ion flown on alone). */
  private remove(k: number, t: number, fate: number, speed: number, sink: SheetSink | null, w = this.weight[k], recorded_s = t): void {
    this.alive[k] = 0;
    this.aliveCount--;
    if (sink) {
      this.weight[k] = w;
      this.write(sink, k, recorded_s, fate, speed);
    }
    if (this.aliveCount === 0) return;
    // Its field is gone: every other sheet changes acceleration from now on. The live sheets stay
    // first in rank order (order[0 … aliveCount)): those above k move down one rank, k goes behind them.
    const from = this.rank[k];
    for (let r = from; r < this.aliveCount; r++) {
      const j = this.order[r + 1];
      this.order[r] = j;
      this.rank[j] = r;
    }
    this.order[this.aliveCount] = k;
    this.rank[k] = this.aliveCount;
    this.recomputeSums();
    for (let r = 0; r < this.aliveCount; r++) {
      const j = this.order[r];
      this.rebase(j, t);
      this.acc[j] = this.accelerationOf(j);
    }
    this.rebuildHeap(t);
  }

  private write(sink: SheetSink, k: number, t: number, fate: number, speed: number): void {
    const i = this.ion[k];
    let time = t;
    let f = fate;
    if (f === Fate.TIMED_OUT || !(time <= this.model.maxFlightTime_s)) {
      f = Fate.TIMED_OUT;
      time = this.model.maxFlightTime_s;
    }
    sink.flightTime_s[i] = time;
    sink.fate[i] = f;
    sink.finalSpeed_m_per_s[i] = f === Fate.DETECTED ? speed : 0;
    sink.weight[i] = this.weight[k];
  }

  private push(time: number, kind: number, a: number, b: number, side: number, v: number): void {
    this.queue.push(time, kind, a, b, a >= 0 ? this.ver[a] : 0, b >= 0 ? this.ver[b] : 0, side, v);
  }
}

/** The exact engine's flight after the first drift: mirror and return drift (if any), post-acceleration, detector, time limit. */
function finishAfterDrift(st: IonState, plan: ExactPlan): void {
  let ok = true;
  if (plan.mirrorStageCount > 0) ok = mirrorExact(st, plan) && driftExact(st, plan.returnLength_m);
  if (ok && postAccelerateExact(st, plan)) st.fate = Fate.DETECTED;
  if (st.fate === Fate.TIMED_OUT || !(st.t <= plan.maxFlightTime_s)) {
    st.fate = Fate.TIMED_OUT;
    st.t = plan.maxFlightTime_s;
  }
}
