/**
 * Decay in flight over a traced ensemble: for every precursor ion of a decaying block the decay time
 * is drawn (seeded, one stream per block), the precursor is flown to it, and both products continue
 * from that state — same position and time, the precursor's velocity plus the release, each with its
 * own charge-to-mass ratio — to their own fates (src/physics/fragments/flight.ts). Decayed precursors
 * get the fate DECAYED in the main trace; the products are kept in blocks of their own.
 *
 * Transverse motion: ideal grids leave it unchanged, so the detector-plane position is the precursor's
 * x0 + vx·t_decay, then the product's own transverse velocity (plus its release share) to arrival.
 */
import { hasSolvedRegion, type AnalyserModel } from '../analyser';
import { createExactPlan, prepareExactPlan, type ExactPlan } from '../exactEngine';
import { ATOMIC_MASS_CONSTANT_KG } from '../constants';
import { Fate } from '../fates';
import { allocateTraceResult, type Ensemble, type TraceResult } from '../../ions/ensemble';
import { SeededRandom } from '../../ions/random';
import { LEG_COUNT, Leg, type BlockDecayModel, type DecayProduct, type FragmentModel } from './decayModel';
import { DECAY_STREAM_OFFSET, lifetimeDecayTime_s, pickChannel, releaseVelocity } from './decaySampling';
import { traceFragmentsSolved } from './solvedDecay';
import { copyFlightState, createFlightState, fly, Flight, startFlight, type FlightState } from './flight';
import { AxialIntegrator } from '../regions/axialIntegrator';
import { legacyTally } from '../regions/legacyTally';
import { createIonState, startIonState, type IonState as RegionIonState, type SectionCode } from '../regions/contract';
import { createFlight } from '../regions/driver';
import { chargeToMassIn } from '../regions/plan';


export interface ProductBlock {
  /** Index into FragmentModel.blocks, the channel in it, and which product. */
  readonly decayBlock: number;
  readonly channel: number;
  readonly role: 'fragment' | 'complement';
  readonly product: DecayProduct;
  /** Per product ion: arrival (or fate) time, fate, weight, detector-plane position, speed at the detector. */
  readonly trace: TraceResult;
  /** When and in which leg (Leg.*) its precursor decayed. */
  readonly decayTime_s: Float64Array;
  readonly decayLeg: Uint8Array;
  /** The precursor's ion index in the ensemble, and the product's axial start (position, velocity) in the decay leg's own frame. */
  readonly precursor: Int32Array;
  readonly start_z_m: Float64Array;
  readonly start_v_m_per_s: Float64Array;
}

export interface BlockDecayCount {
  readonly decayBlock: number;
  readonly precursors: number;
  readonly decayed: number;
  /** Decays per leg (Leg.* index). */
  readonly perLeg: Int32Array;
}

export interface FragmentTrace {
  readonly products: ProductBlock[];
  readonly counts: BlockDecayCount[];
}

interface DecayScratch {
  readonly decayed: Uint8Array;
  readonly channel: Int16Array;
  readonly state: Float64Array; // t, z, v, w, leg, stage per ion
  readonly kick: Float64Array; // axial, x, y release velocity of product 1 per ion
}

const scratchPlan = createExactPlan();
const precursorState = createFlightState();
const productState = createFlightState();
const kick = new Float64Array(3);

function mirrorDepth_m(plan: ExactPlan, model: AnalyserModel): number {
  if (model.mirror?.profile) return model.mirror.profile.depth_m;
  let depth = 0;
  for (let j = 0; j < plan.mirrorStageCount; j++) depth += plan.mirrorLength_m[j];
  return depth;
}

function planFor(model: AnalyserModel, product: DecayProduct): ExactPlan {
  // A neutral has no charge-to-mass ratio: every field leaves it alone (m/z = ∞ gives q/m = 0).
  return prepareExactPlan(createExactPlan(), model, product.charge === 0 ? Infinity : product.mz);
}

/** Where (and whether) precursor ion i decays; fills `st` with its state at the decay. */
function decayPoint(model: AnalyserModel, fragments: FragmentModel, dm: BlockDecayModel, plan: ExactPlan, ens: Ensemble, i: number, u1: number, u2: number, integrator: AxialIntegrator): boolean {
  const st = precursorState;
  const behind = fragments.behindMirror;
  let tDecay: number;
  if (dm.law.kind === 'lifetime') {
    tDecay = lifetimeDecayTime_s(dm.law.lifetime_s, u1);
  } else {
    if (!(u1 < dm.law.fraction)) return false;
    startFlight(st, ens.z0_m[i], ens.vz0_m_per_s[i]);
    fly(st, plan, model, behind, Infinity, integrator);
    const tIn = st.legEntry_s[dm.law.leg];
    if (Number.isNaN(tIn)) return false; // lost before it got there
    let tOut = st.t;
    for (let k = 0; k < LEG_COUNT; k++) if (st.legEntry_s[k] > tIn && st.legEntry_s[k] < tOut) tOut = st.legEntry_s[k];
    tDecay = tIn + u2 * (tOut - tIn);
  }
  startFlight(st, ens.z0_m[i], ens.vz0_m_per_s[i]);
  return fly(st, plan, model, behind, tDecay, integrator) === Flight.STOPPED;
}

/**
 * Decays of every block in `fragments` over the ensemble, after the main trace: decayed precursors
 * become Fate.DECAYED in `trace` (time = decay time); their products are returned.
 */
export function traceFragments(model: AnalyserModel, fragments: FragmentModel, ens: Ensemble, trace: TraceResult, seed: number): FragmentTrace {
  // Solved regions are crossed by the solved-field tracer, stopped at the decay (solvedDecay.ts).
  if (hasSolvedRegion(model)) return traceFragmentsSolved(model, fragments, ens, trace, seed);
  const products: ProductBlock[] = [];
  const counts: BlockDecayCount[] = [];
  // The integrator (polynomial-profile mirror) keeps its first step from solve to solve: one per run, so that a run's numbers depend on nothing traced before it.
  const integrator = new AxialIntegrator(legacyTally);
  fragments.blocks.forEach((dm, d) => {
    const from = ens.speciesStart[dm.block];
    const to = ens.speciesStart[dm.block + 1];
    const n = to - from;
    const plan = prepareExactPlan(scratchPlan, model, dm.precursorMz);
    const rng = new SeededRandom(seed, DECAY_STREAM_OFFSET + dm.block);
    const scratch: DecayScratch = { decayed: new Uint8Array(n), channel: new Int16Array(n), state: new Float64Array(6 * n), kick: new Float64Array(3 * n) };
    const perChannel = new Int32Array(dm.channels.length);
    const perLeg = new Int32Array(LEG_COUNT);
    const branching = dm.channels.map((c) => c.branching);
    let decayed = 0;
    for (let k = 0; k < n; k++) {
      // Five deviates per ion whatever happens, so the streams stay aligned between runs.
      const u1 = rng.uniform();
      const u2 = rng.uniform();
      const uChannel = rng.uniform();
      const uCos = rng.uniform();
      const uPhi = rng.uniform();
      if (!decayPoint(model, fragments, dm, plan, ens, from + k, u1, u2, integrator)) continue;
      const st = precursorState;
      const c = pickChannel(branching, uChannel);
      const ch = dm.channels[c];
      releaseVelocity(kick, dm.kineticEnergyRelease_J, ch.fragment.mass_u * ATOMIC_MASS_CONSTANT_KG, ch.complement.mass_u * ATOMIC_MASS_CONSTANT_KG, uCos, uPhi);
      scratch.decayed[k] = 1;
      scratch.channel[k] = c;
      const sk = scratch.state;
      sk[6 * k] = st.t;
      sk[6 * k + 1] = st.z;
      sk[6 * k + 2] = st.v;
      sk[6 * k + 3] = st.w;
      sk[6 * k + 4] = st.leg;
      sk[6 * k + 5] = st.stage;
      scratch.kick[3 * k] = kick[0];
      scratch.kick[3 * k + 1] = kick[1];
      scratch.kick[3 * k + 2] = kick[2];
      perChannel[c]++;
      perLeg[st.leg]++;
      decayed++;
      const i = from + k;
      trace.fate[i] = Fate.DECAYED;
      trace.flightTime_s[i] = st.t;
      trace.finalSpeed_m_per_s[i] = 0;
    }
    counts.push({ decayBlock: d, precursors: n, decayed, perLeg });
    dm.channels.forEach((ch, c) => {
      for (const role of ['fragment', 'complement'] as const) {
        const product = ch[role];
        const block = traceProducts(model, fragments, ens, from, scratch, c, role, product, ch, perChannel[c], integrator);
        products.push({ decayBlock: d, channel: c, role, product, ...block });
      }
    });
  });
  return { products, counts };
}

function traceProducts(
  model: AnalyserModel,
  fragments: FragmentModel,
  ens: Ensemble,
  from: number,
  scratch: DecayScratch,
  c: number,
  role: 'fragment' | 'complement',
  product: DecayProduct,
  ch: { readonly fragment: DecayProduct; readonly complement: DecayProduct },
  count: number,
  integrator: AxialIntegrator,
): Omit<ProductBlock, 'decayBlock' | 'channel' | 'role' | 'product'> {
  const out = allocateTraceResult(count);
  const decayTime_s = new Float64Array(count);
  const decayLeg = new Uint8Array(count);
  const precursor = new Int32Array(count);
  const start_z_m = new Float64Array(count);
  const start_v_m_per_s = new Float64Array(count);
  const plan = planFor(model, product);
  // The product flies on through the rest of the analyser by the engine's own driver (regions/driver.ts),
  // from the section and state of the decay; only the path behind the back plate is walked here.
  const flight = createFlight(model, { ions: count });
  flight.setChargeToMass(product.charge === 0 ? 0 : chargeToMassIn(model, product.mz));
  const ion: RegionIonState = createIonState();
  // Product 2 takes −(m1/m2) of product 1's release velocity (momentum conservation).
  const share = role === 'fragment' ? 1 : -ch.fragment.mass_u / ch.complement.mass_u;
  const aperture = model.detectorAperture;
  const behind = fragments.behindMirror;
  let m = 0;
  for (let k = 0; k < scratch.decayed.length; k++) {
    if (scratch.decayed[k] === 0 || scratch.channel[k] !== c) continue;
    const i = from + k;
    const s = scratch.state;
    const st: FlightState = productState;
    copyFlightState(st, precursorState);
    st.t = s[6 * k];
    st.z = s[6 * k + 1];
    st.v = s[6 * k + 2] + share * scratch.kick[3 * k];
    st.w = s[6 * k + 3];
    st.leg = s[6 * k + 4];
    st.stage = s[6 * k + 5];
    st.fate = Fate.UNSET;
    st.legEntry_s.fill(NaN);
    const tDecay = st.t;
    precursor[m] = i;
    start_z_m[m] = st.z;
    start_v_m_per_s[m] = st.v;
    if (st.leg !== Leg.BEHIND) {
      startIonState(ion, st.z, st.v);
      ion.t = st.t;
      ion.w = st.w;
      flight.fly(ion, st.leg as SectionCode);
      st.t = ion.t;
      st.z = ion.z;
      st.v = ion.v;
      st.w = ion.w;
      st.fate = ion.fate;
      if (ion.fate === Fate.PASSED_THROUGH_MIRROR) {
        // Through the back plate: straight on to the detector behind the mirror, if there is one.
        st.fate = Fate.UNSET;
        st.leg = Leg.BEHIND;
        st.z = mirrorDepth_m(plan, model); // on the back plate
        fly(st, plan, model, behind, Infinity, integrator);
      }
    } else fly(st, plan, model, behind, Infinity, integrator);
    const vx = ens.vx0_m_per_s[i] + share * scratch.kick[3 * k + 1];
    const vy = ens.vy0_m_per_s[i] + share * scratch.kick[3 * k + 2];
    const x = ens.x0_m[i] + ens.vx0_m_per_s[i] * tDecay + vx * (st.t - tDecay);
    const y = ens.y0_m[i] + ens.vy0_m_per_s[i] * tDecay + vy * (st.t - tDecay);
    let fate = st.fate;
    if (fate === Fate.DETECTED && aperture) {
      const dx = x - aperture.centreX_m;
      const dy = y - aperture.centreY_m;
      if (dx * dx + dy * dy > aperture.radius_m * aperture.radius_m) fate = Fate.MISSED_DETECTOR;
    }
    if (fate === Fate.DETECTED_BEHIND_MIRROR && behind && x * x + y * y > behind.radius_m * behind.radius_m) fate = Fate.MISSED_DETECTOR;
    out.flightTime_s[m] = st.t;
    out.fate[m] = fate;
    out.weight[m] = st.w;
    out.detectorX_m[m] = x;
    out.detectorY_m[m] = y;
    out.finalSpeed_m_per_s[m] = fate === Fate.DETECTED || fate === Fate.DETECTED_BEHIND_MIRROR ? Math.abs(st.v) : 0;
    decayTime_s[m] = tDecay;
    decayLeg[m] = s[6 * k + 4];
    m++;
  }
  return { trace: out, decayTime_s, decayLeg, precursor, start_z_m, start_v_m_per_s };
}

export { Leg };
