/**
 * Decay in flight in an analyser with solved-field regions (a solved source, a gridless mirror).
 *
 * The precursor is flown by the engine's own region kernels (regions/driver.ts) section by section,
 * tracing every solved region directly (no transfer map: the fate of one ion is wanted, and stopped
 * inside). The section in which the decay time falls is crossed again from its entry state up to the
 * decay time: a solved region by the solved-field tracer with the decay time as its end time
 * (crossSolvedMirror / crossSolvedSource, which stop there with the full 3-D state), an ideal region
 * by the leg walker (flight.ts), exactly. The products then start from that state — position,
 * velocity plus their share of the release, transverse position and velocity — with their own
 * charge-to-mass ratio, again through the driver with every solved region traced directly: the
 * run's transfer map is fitted for the precursor's q/m and would be wrong for a product. A neutral
 * feels no force and flies straight through a solved region until it leaves it or meets an electrode
 * (neutralSolved.ts).
 *
 * Not modelled: a precursor that passes through the mirror's back plane decays no more (a solved
 * mirror has no detector behind it; with a solved source and a gridded mirror such precursors are lost
 * to the run anyway).
 */
import type { AnalyserModel } from '../analyser';
import { ATOMIC_MASS_CONSTANT_KG } from '../constants';
import { createExactPlan, prepareExactPlan, type ExactPlan } from '../exactEngine';
import { Exit, Fate } from '../fates';
import { allocateTraceResult, type Ensemble, type TraceResult } from '../../ions/ensemble';
import { SeededRandom } from '../../ions/random';
import { createIonState, SECTION_COUNT, Section, startIonState, transverseXAt, transverseYAt, type IonState, type RegionKernel, type SectionCode } from '../regions/contract';
import { createFlight, flySections, type ModelFlight } from '../regions/driver';
import { chargeToMassIn } from '../regions/plan';
import { crossSolvedMirror, crossSolvedSource } from '../regions/solvedKernels';
import { createSolvedIonState, SolvedFieldTracer } from '../regions/solvedTracer';
import { LEG_COUNT, Leg, type BehindMirrorDetectorModel, type BlockDecayModel, type DecayProduct, type FragmentModel } from './decayModel';
import { DECAY_STREAM_OFFSET, lifetimeDecayTime_s, pickChannel, releaseVelocity } from './decaySampling';
import { createFlightState, fly, Flight, startFlight } from './flight';
import { AxialIntegrator } from '../regions/axialIntegrator';
import { legacyTally } from '../regions/legacyTally';
import { NeutralSolvedKernel } from './neutralSolved';
import type { BlockDecayCount, FragmentTrace, ProductBlock } from './traceFragments';

/** The full state of an ion at a decay, in the frame of its section (see regions/contract.ts). */
export interface DecayPoint {
  t: number;
  /** Section (Section.* = Leg.*) and stage within it. */
  section: number;
  z: number;
  v: number;
  w: number;
  /** Transverse position and velocity at t (the flight axis at x = y = 0). */
  x: number;
  y: number;
  vx: number;
  vy: number;
}

export function createDecayPoint(): DecayPoint {
  return { t: 0, section: 0, z: 0, v: 0, w: 1, x: 0, y: 0, vx: 0, vy: 0 };
}

function copyIonState(out: IonState, from: IonState): IonState {
  out.t = from.t;
  out.z = from.z;
  out.v = from.v;
  out.fate = from.fate;
  out.w = from.w;
  out.tRef = from.tRef;
  out.xRef = from.xRef;
  out.yRef = from.yRef;
  out.vxRef = from.vxRef;
  out.vyRef = from.vyRef;
  out.struckElectrode = from.struckElectrode;
  return out;
}

/**
 * Flies one precursor ion through a model with solved regions and stops it at a chosen time.
 * `entry_s` holds the time it entered each section (NaN: not reached) and `end_s` the time of its
 * fate, after each call.
 */
export class SolvedDecayWalker {
  readonly entry_s = new Float64Array(SECTION_COUNT);
  end_s = 0;
  endFate: number = Fate.UNSET;
  private readonly flight: ModelFlight;
  private readonly tracer = new SolvedFieldTracer(null);
  private readonly solvedIon = createSolvedIonState();
  private readonly st = createIonState();
  private readonly atEntry = createIonState();
  private readonly scratch = createIonState();
  private readonly legState = createFlightState();
  private readonly exactPlan: ExactPlan = createExactPlan();
  /** For the ideal sections' integrated crossings; its first-step memory stays within this run. */
  private readonly integrator = new AxialIntegrator(legacyTally);

  constructor(
    private readonly model: AnalyserModel,
    private readonly behind: BehindMirrorDetectorModel | null,
  ) {
    this.flight = createFlight(model, { transferMap: false });
  }

  /** Prepare for precursors of m/z `mz`. */
  setMz(mz: number): void {
    this.flight.setMz(mz);
    prepareExactPlan(this.exactPlan, this.model, mz);
  }

  /**
   * Fly ion i of `ens` until tStop_s: true with its state then in `out` when it is still in flight,
   * false when it met its fate first (or tStop_s is Infinity: a whole flight, for the entry times).
   */
  flyTo(ens: Ensemble, i: number, tStop_s: number, out: DecayPoint): boolean {
    const st = startIonState(this.st, ens.z0_m[i], ens.vz0_m_per_s[i], ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
    const kernels = this.flight.kernels;
    const plan = this.flight.plan;
    const tLimit = this.model.maxFlightTime_s;
    this.entry_s.fill(NaN);
    this.endFate = Fate.UNSET;
    for (let s = 0; s < SECTION_COUNT; s++) {
      const kernel = kernels[s];
      if (kernel === null) continue;
      if (s > 0) st.z = 0;
      this.entry_s[s] = st.t;
      copyIonState(this.atEntry, st);
      const alive = kernel.cross(st, plan, null) === Exit.FAR;
      // The stop falls before the ion left this section (or was lost in it): cross it again up to the stop.
      if (tStop_s < st.t && tStop_s < tLimit) return this.stopInside(s as SectionCode, ens, i, tStop_s, out);
      if (!alive) {
        this.end_s = Math.min(st.t, tLimit);
        this.endFate = st.fate;
        return false;
      }
    }
    this.end_s = Math.min(st.t, tLimit);
    this.endFate = st.t <= tLimit ? Fate.DETECTED : Fate.TIMED_OUT;
    return false;
  }

  /** From the saved entry state of section s to tStop_s inside it. */
  private stopInside(s: SectionCode, ens: Ensemble, i: number, tStop_s: number, out: DecayPoint): boolean {
    const entry = this.atEntry;
    const model = this.model;
    const solvedMirror = s === Section.MIRROR ? (model.mirror?.solved ?? null) : null;
    const solvedSource = s === Section.SOURCE ? (model.source.solved ?? null) : null;
    if (solvedMirror !== null || solvedSource !== null) {
      const st = copyIonState(this.scratch, entry);
      const ion = this.solvedIon;
      const exit =
        solvedMirror !== null
          ? crossSolvedMirror(st, this.flight.plan, solvedMirror, tStop_s, this.tracer, ion)
          : crossSolvedSource(st, solvedSource!, this.flight.plan.qOverM, tStop_s, this.tracer, ion);
      // The tracer pauses at its end time: "timed out" here is the stop (anything else: it left or was lost first).
      if (exit !== Fate.TIMED_OUT || ion.t !== tStop_s) return false;
      const origin = solvedMirror !== null ? solvedMirror.region.entryZ_m : solvedSource!.repellerFaceZ_m;
      out.t = ion.t;
      out.section = s;
      out.z = ion.z - origin;
      out.v = ion.vz;
      out.w = entry.w;
      out.x = ion.x;
      out.y = ion.y;
      out.vx = ion.vx;
      out.vy = ion.vy;
      return true;
    }
    // An ideal section: the leg walker crosses it in closed form (or integrates it) up to the stop time.
    const fs = this.legState;
    if (s === Section.SOURCE) startFlight(fs, ens.z0_m[i], ens.vz0_m_per_s[i]);
    else {
      startFlight(fs, 0, entry.v);
      fs.t = entry.t;
      fs.w = entry.w * (s === Section.MIRROR ? (model.mirror?.entranceGridTransmission ?? 1) : 1);
      fs.leg = s;
    }
    if (fly(fs, this.exactPlan, model, this.behind, tStop_s, this.integrator) !== Flight.STOPPED || fs.leg !== s) return false;
    out.t = fs.t;
    out.section = s;
    out.z = fs.z;
    out.v = fs.v;
    out.w = fs.w;
    out.x = transverseXAt(entry, fs.t);
    out.y = transverseYAt(entry, fs.t);
    out.vx = entry.vxRef;
    out.vy = entry.vyRef;
    return true;
  }
}

/** Flies products from their decay points through a model with solved regions. */
export class SolvedProductFlight {
  private readonly flight: ModelFlight;
  private readonly ion = createIonState();
  private readonly legState = createFlightState();
  private readonly exactPlan: ExactPlan;
  private readonly integrator = new AxialIntegrator(legacyTally);
  /** The driver's kernels, with the solved ones replaced by straight flight for a neutral. */
  private readonly kernels: readonly (RegionKernel | null)[];
  /** After fly: the product's fate, time, weight, speed and detector-plane position. */
  fate: number = Fate.UNSET;
  t = 0;
  w = 1;
  speed = 0;
  x = 0;
  y = 0;

  constructor(
    private readonly model: AnalyserModel,
    private readonly behind: BehindMirrorDetectorModel | null,
    product: DecayProduct,
  ) {
    this.flight = createFlight(model, { transferMap: false });
    this.flight.setChargeToMass(product.charge === 0 ? 0 : chargeToMassIn(model, product.mz));
    this.exactPlan = prepareExactPlan(createExactPlan(), model, product.charge === 0 ? Infinity : product.mz);
    const kernels = [...this.flight.kernels];
    if (product.charge === 0) {
      const tLimit = model.maxFlightTime_s;
      if (model.source.solved) kernels[Section.SOURCE] = new NeutralSolvedKernel(Section.SOURCE, null, model.source.solved, tLimit);
      if (model.mirror?.solved) kernels[Section.MIRROR] = new NeutralSolvedKernel(Section.MIRROR, model.mirror.solved, null, tLimit);
    }
    this.kernels = kernels;
  }

  /** From the decay point `at` with the extra velocity (kz, kx, ky) to the product's fate. */
  fly(at: DecayPoint, kz: number, kx: number, ky: number): number {
    const ion = this.ion;
    startIonState(ion, at.z, at.v + kz, at.x, at.y, at.vx + kx, at.vy + ky);
    ion.t = at.t;
    ion.tRef = at.t;
    ion.w = at.w;
    flySections(this.kernels, ion, this.flight.plan, at.section as SectionCode, this.model.maxFlightTime_s, null);
    let fate = ion.fate;
    let t = ion.t;
    let w = ion.w;
    let v = ion.v;
    this.x = transverseXAt(ion, t);
    this.y = transverseYAt(ion, t);
    if (fate === Fate.PASSED_THROUGH_MIRROR) {
      // Through the back of the mirror: on to the detector behind it if there is one (gridded mirrors only), else lost.
      const fs = startFlight(this.legState, mirrorDepth_m(this.model, this.exactPlan), Math.abs(v));
      fs.t = t;
      fs.w = w;
      fs.leg = Leg.BEHIND;
      fly(fs, this.exactPlan, this.model, this.behind, Infinity, this.integrator);
      fate = fs.fate;
      t = fs.t;
      w = fs.w;
      v = fs.v;
      this.x = transverseXAt(ion, t);
      this.y = transverseYAt(ion, t);
    }
    const aperture = this.model.detectorAperture;
    if (fate === Fate.DETECTED && aperture) {
      const dx = this.x - aperture.centreX_m;
      const dy = this.y - aperture.centreY_m;
      if (dx * dx + dy * dy > aperture.radius_m * aperture.radius_m) fate = Fate.MISSED_DETECTOR;
    }
    const behind = this.behind;
    if (fate === Fate.DETECTED_BEHIND_MIRROR && behind && this.x * this.x + this.y * this.y > behind.radius_m * behind.radius_m) fate = Fate.MISSED_DETECTOR;
    this.fate = fate;
    this.t = t;
    this.w = w;
    this.speed = fate === Fate.DETECTED || fate === Fate.DETECTED_BEHIND_MIRROR ? Math.abs(v) : 0;
    return fate;
  }
}

function mirrorDepth_m(model: AnalyserModel, plan: ExactPlan): number {
  if (model.mirror?.profile) return model.mirror.profile.depth_m;
  let depth = 0;
  for (let j = 0; j < plan.mirrorStageCount; j++) depth += plan.mirrorLength_m[j];
  return depth;
}

/** Per ion of a block: the decay point (9 numbers), the channel and the release kick (3). */
const POINT = 9;

/**
 * traceFragments for a model with solved regions (same random streams, same outputs): decayed
 * precursors become Fate.DECAYED in `trace`; the products are returned.
 */
export function traceFragmentsSolved(model: AnalyserModel, fragments: FragmentModel, ens: Ensemble, trace: TraceResult, seed: number): FragmentTrace {
  const products: ProductBlock[] = [];
  const counts: BlockDecayCount[] = [];
  const behind = fragments.behindMirror;
  const walker = new SolvedDecayWalker(model, behind);
  const at = createDecayPoint();
  const kick = new Float64Array(3);
  fragments.blocks.forEach((dm, d) => {
    const from = ens.speciesStart[dm.block];
    const n = ens.speciesStart[dm.block + 1] - from;
    walker.setMz(dm.precursorMz);
    const rng = new SeededRandom(seed, DECAY_STREAM_OFFSET + dm.block);
    const channelOf = new Int16Array(n).fill(-1);
    const points = new Float64Array(POINT * n);
    const kicks = new Float64Array(3 * n);
    const perChannel = new Int32Array(dm.channels.length);
    const perLeg = new Int32Array(LEG_COUNT);
    const branching = dm.channels.map((c) => c.branching);
    let decayed = 0;
    for (let k = 0; k < n; k++) {
      // Five deviates per ion whatever happens, as in traceFragments.
      const u1 = rng.uniform();
      const u2 = rng.uniform();
      const uChannel = rng.uniform();
      const uCos = rng.uniform();
      const uPhi = rng.uniform();
      const i = from + k;
      if (!decayPoint(walker, dm, ens, trace, i, u1, u2, at)) continue;
      const c = pickChannel(branching, uChannel);
      const ch = dm.channels[c];
      releaseVelocity(kick, dm.kineticEnergyRelease_J, ch.fragment.mass_u * ATOMIC_MASS_CONSTANT_KG, ch.complement.mass_u * ATOMIC_MASS_CONSTANT_KG, uCos, uPhi);
      channelOf[k] = c;
      const p = POINT * k;
      points[p] = at.t;
      points[p + 1] = at.section;
      points[p + 2] = at.z;
      points[p + 3] = at.v;
      points[p + 4] = at.w;
      points[p + 5] = at.x;
      points[p + 6] = at.y;
      points[p + 7] = at.vx;
      points[p + 8] = at.vy;
      kicks.set(kick, 3 * k);
      perChannel[c]++;
      perLeg[at.section]++;
      decayed++;
      trace.fate[i] = Fate.DECAYED;
      trace.flightTime_s[i] = at.t;
      trace.finalSpeed_m_per_s[i] = 0;
    }
    counts.push({ decayBlock: d, precursors: n, decayed, perLeg });
    dm.channels.forEach((ch, c) => {
      for (const role of ['fragment', 'complement'] as const) {
        const product = ch[role];
        const share = role === 'fragment' ? 1 : -ch.fragment.mass_u / ch.complement.mass_u;
        const block = flyProducts(new SolvedProductFlight(model, behind, product), from, channelOf, points, kicks, c, share, perChannel[c]);
        products.push({ decayBlock: d, channel: c, role, product, ...block });
      }
    });
  });
  return { products, counts };
}

/** Where (and whether) precursor i decays, as decayPoint in traceFragments but through the solved regions. */
function decayPoint(walker: SolvedDecayWalker, dm: BlockDecayModel, ens: Ensemble, trace: TraceResult, i: number, u1: number, u2: number, at: DecayPoint): boolean {
  let tDecay: number;
  if (dm.law.kind === 'lifetime') {
    tDecay = lifetimeDecayTime_s(dm.law.lifetime_s, u1);
    // The run's trace already says when the ion's flight ended: a later decay cannot happen (saves a trace).
    if (!(tDecay < trace.flightTime_s[i])) return false;
  } else {
    if (!(u1 < dm.law.fraction)) return false;
    walker.flyTo(ens, i, Infinity, at);
    const tIn = walker.entry_s[dm.law.leg];
    if (Number.isNaN(tIn)) return false; // lost before it got there
    let tOut = walker.end_s;
    for (let k = 0; k < SECTION_COUNT; k++) if (walker.entry_s[k] > tIn && walker.entry_s[k] < tOut) tOut = walker.entry_s[k];
    tDecay = tIn + u2 * (tOut - tIn);
  }
  return walker.flyTo(ens, i, tDecay, at);
}

function flyProducts(
  flight: SolvedProductFlight,
  from: number,
  channelOf: Int16Array,
  points: Float64Array,
  kicks: Float64Array,
  c: number,
  share: number,
  count: number,
): Omit<ProductBlock, 'decayBlock' | 'channel' | 'role' | 'product'> {
  const out = allocateTraceResult(count);
  const decayTime_s = new Float64Array(count);
  const decayLeg = new Uint8Array(count);
  const precursor = new Int32Array(count);
  const start_z_m = new Float64Array(count);
  const start_v_m_per_s = new Float64Array(count);
  const at = createDecayPoint();
  let m = 0;
  for (let k = 0; k < channelOf.length; k++) {
    if (channelOf[k] !== c) continue;
    const p = POINT * k;
    at.t = points[p];
    at.section = points[p + 1];
    at.z = points[p + 2];
    at.v = points[p + 3];
    at.w = points[p + 4];
    at.x = points[p + 5];
    at.y = points[p + 6];
    at.vx = points[p + 7];
    at.vy = points[p + 8];
    const kz = share * kicks[3 * k];
    flight.fly(at, kz, share * kicks[3 * k + 1], share * kicks[3 * k + 2]);
    out.flightTime_s[m] = flight.t;
    out.fate[m] = flight.fate;
    out.weight[m] = flight.w;
    out.detectorX_m[m] = flight.x;
    out.detectorY_m[m] = flight.y;
    out.finalSpeed_m_per_s[m] = flight.speed;
    decayTime_s[m] = at.t;
    decayLeg[m] = at.section;
    precursor[m] = from + k;
    start_z_m[m] = at.z;
    start_v_m_per_s[m] = at.v + kz;
    m++;
  }
  return { trace: out, decayTime_s, decayLeg, precursor, start_z_m, start_v_m_per_s };
}
