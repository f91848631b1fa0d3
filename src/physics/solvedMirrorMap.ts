/**
 * A per-run transfer map of a solved (gridless) mirror: the time inside and the exit state as
 * polynomials of the entry state, fitted to rays traced through the solved field and used for the
 * rest of the run's ions only where it was validated. Tracing 3-D through a solved field costs
 * ~300 field evaluations per ion; evaluating the map costs two field samples.
 *
 * Why its form: in a static electric field the path depends only on the start position, the start
 * direction and the kinetic energy per charge U; time scales as 1/sqrt(q/m). The field is
 * rotationally symmetric about the axis and symmetric under reflection in every plane through it,
 * so with two transverse vectors A, B of the entry state the exit position and direction are
 * A·g + B·h with g, h functions of (U, |A|², A·B, |B|²) only, and the time is such a function too.
 * A is the offset from the beam's virtual source, P − L·D (P the entry position, D the transverse
 * direction cosines, L the least-squares ratio of P to D over the training rays), and B = D: ions
 * from a small spot arrive with P nearly proportional to D, so the invariants of (P, D) are nearly
 * dependent and their fit ill-conditioned, while those of (P − L·D, D) are not. The functions are
 * fitted as polynomials (least squares, Householder QR) in the invariants, normalised to the
 * training rays' range.
 *
 * One map per species (per q/m): species differ in their time of flight to the mirror, so their
 * (P, D) relation differs, and the ions of a run come species by species in random order within a
 * species (they are sampled so), so the first ones are a fair sample of its domain. The first
 * TRAIN_RAYS of a species are traced at the normal precision, as
 * every ion would be (so they cost nothing extra and their results are the direct traces), and
 * fitted: the least-squares fit averages their step-control noise, so the map is more accurate
 * than one trace. The next VALIDATE_RAYS inside the domain are traced at FINE precision (rtol 1e-9)
 * and compared with the map; the map is used for the rest only if the rms and largest errors of
 * time, exit position and exit direction meet the limits below and none of those rays struck.
 * Domain: the central range of the training rays (DOMAIN_QUANTILE), and, where the mirror has an
 * entrance aperture, an entry and a predicted exit line that pass it within APERTURE_MARGIN of its
 * radius (the rays that strike it graze its edge). Ions outside are traced directly, except those
 * the strike pre-test (STRIKE_RADIUS) takes as struck on the entrance electrode and those the
 * back-plate pre-test (BACK_MARGIN) takes as struck on the back plate. Where the whole-
 * domain map is refused, the species trains on more ions and its domain is split by energy into
 * pieces validated one by one (RETRAIN_RAYS); the ions of refused pieces are traced. Once a species'
 * map is decided (in use or refused, at the end of validation) every later ion's crossing depends
 * on that ion alone: a run split over workers fits it once and shares it (snapshot, restore).
 *
 * Measured before the exit position and direction were fitted to the rays clear of the aperture
 * only (which brought the error at the demo's settings to 1.6e-7 rms, largest 1.1e-6, the share
 * mapped unchanged) and before the energy pieces:
 * (bench/fieldTraceBench.ts, back to back with the earlier 600 training rays and no
 * pre-test, two runs on a machine at load 4–6 on 2 cores) on the gridless demo's own population
 * at 2·10^4 ions: 83 % mapped (463 of the 774 struck ions by the pre-test), 3.6–4.5× the direct
 * run's speed per CPU second (before 2.6×), flight-time error 2.3e-7 rms of the time inside
 * (largest 1.5e-6) against 2.7e-7 for the direct trace. The ions left to the tracer (training
 * rays, aperture edge, energy tails, large angles, strikes near the margin) bound the gain. Tried
 * and left: an edge patch (a second map per species fitted to the first 200 ions the core map
 * left to the tracer, validated alike) failed validation on both species (2.8–3.4e-7 rms against
 * 2e-7), with FINE training rays it passed on one and mapped only 300 more ions for 30 % more field
 * evaluations. The
 * domain widened (quantile 0.01, aperture margin 0.9) maps 84 %, but its mapped ions near the edges
 * raised the flight-time error of the test's 6000-ion run to 5.9e-7 rms.
 * Earlier form (one map for all species from the run's first ions, FINE training, a per-ray
 * direction limit of 5e-6, (P, D) invariants): on the retuned demo its rays struck the aperture or
 * its exit direction missed the limit (~5e-5; the demo's paths come near the aperture edge, where
 * the transfer is strongly non-linear), and it declined every ion.
 */
import { createFieldSample, sampleField } from '../fields/interpolate';
import { solveLeastSquares, solveLeastSquaresMany } from '../fields/leastSquares';
import { Exit, Fate, type RegionExit } from './fates';
import { transverseXAt, transverseYAt, type IonState } from './regions/contract';
import type { FlightPlan } from './regions/plan';
import { leftSolvedRegion, type MirrorMap, type SolvedMirrorModel } from './regions/solvedKernels';
import { SolvedFieldTracer, SolvedPrecision, createSolvedIonState, type SolvedIonState, type SolvedRegion } from './regions/solvedTracer';

/**
 * Training rays per species, whatever the run's size. Measured on the gridless demo
 * (bench/fieldTraceBench.ts's reference run, every 10th ion): at 2·10^4 ions 400 rays gave a
 * flight-time error of 2.3e-7 rms (largest 1.5e-6) against 2.6e-7 (3.6e-6) with the earlier
 * 4 % of the run (600 rays): fewer training rays leave more ions to the map, whose least-squares
 * fit averages the step-control noise of one trace. At 6000 ions (400 rays either way) 300 rays
 * raised it from 2.5e-7 to 3.7e-7 (its domain, cut at quantiles of fewer rays, reached further out).
 * Traced at FINE precision instead of NORMAL the rays cost more field evaluations than fewer of
 * them save (300 FINE: 1.86e6 in the run at 2·10^4 ions, 300 NORMAL: 1.64e6).
 */
export const TRAIN_RAYS = 400;
/** Validation rays per species (FINE traces inside the map's domain). */
export const VALIDATE_RAYS = 80;
/** Runs with fewer ions trace every ion directly: fitting would cost more than it saves. */
export const MAP_MIN_IONS = 1500;
/**
 * Validation limits against FINE traces. Time: rms no worse than the direct trace's own error
 * (~2.5e-7 relative rms on the demo), largest 3e-6. Exit position: 10 µm rms. Exit direction:
 * 2e-4 rms, i.e. 0.2 mm per metre of return path at the detector, and through cos θ an axial
 * return speed changed by ≲ 2e-6 relative for the demo's ~1e-2 rad paths.
 */
export const TIME_TOL_RMS = 2e-7;
export const TIME_TOL_MAX = 3e-6;
export const POSITION_TOL_RMS_M = 1e-5;
export const DIRECTION_TOL_RMS = 2e-4;
/** The map is used between these quantiles of the training rays' energies (and below the upper one of the transverse invariants). */
export const DOMAIN_QUANTILE = 0.02;
/** Entry and predicted exit lines must pass an entrance aperture within this fraction of its radius. */
export const APERTURE_MARGIN = 0.8;
/**
 * Strike pre-test: an ion whose predicted exit line meets the entrance electrode's mirror-side face
 * at STRIKE_RADIUS times the aperture radius or more is taken as struck there without tracing, if
 * by the end of validation STRIKE_CHECKS_MIN held-out traced ions (struck training rays, which the
 * fit never saw, and traced ions during validation) confirmed the prediction and none contradicted it. Measured on the gridless
 * demo (2·10^4 ions): the predicted radius of the ions that struck was ≥ 0.996 of the aperture
 * radius, of those that came back ≤ 0.996, so the 5 % margin is ~50× the scatter seen.
 */
export const STRIKE_RADIUS = 1.05;
export const STRIKE_CHECKS_MIN = 8;
/** Largest relative error of a predicted strike time (of the time inside) among the checks. */
export const STRIKE_TIME_TOL = 1e-3;

/**
 * Where the whole-domain map is refused, the species trains on RETRAIN_RAYS more ions (traced at
 * the normal precision, as every ion would be), and the domain is split by energy into pieces,
 * each with its time fitted to the training rays within it and PIECE_OVERLAP of its width beyond
 * (the exit position and direction: one fit over the whole domain, shared), validated on its own
 * (to the same limits) and used where it validates. Candidate splits: 2, 3 and 4 pieces
 * at quantiles of the training energies, validated side by side on the same FINE rays; the one
 * whose validated pieces hold the most training rays is used. Why: at low back plate potentials
 * the ions of the upper energies turn close to the back plate, where the terms in the transverse
 * invariants change steeply with energy; one polynomial over the whole range then misses by 1e-5
 * to 1e-4, while the lower pieces alone fit to the direct trace's level. Measured offline (the
 * gridless demo's population, every ion's mirror crossing traced at NORMAL and FINE precision and
 * fitted in numpy, the aperture cut left out; back plate 5580–5900 V): with 400 training rays two
 * pieces validated on the heavier species at most once in five settings, with 800 on four of five;
 * the best of 2, 3 and 4 pieces mapped 0.4–0.85 of the lighter species' ions, 0.27–0.76 of the
 * heavier's, where one map mapped none below 5900 V. In the run (bench/fieldTraceBench.ts, 2·10^4
 * ions): 30 % mapped at 5580 V, 39 % at 5620, 46 % at 5660, 71 % at 5800, where none were before;
 * the ions the map changed 1.5–1.6e-7 rms flight-time error against the direct trace's 2.2e-7. With
 * the back-plate pre-test, the kink cut (two tops), the restarted entrance pre-test and the early
 * decisions: 74, 74, 72 and 77 % (strikes by the pre-tests included), 1.5–2.0e-7 against 2.3–2.4e-7.
 */
export const RETRAIN_RAYS = 400;
export const PIECE_COUNTS: readonly number[] = [2, 3, 4];
const MAX_PIECES = 4;
export const PIECE_OVERLAP = 0.1;

/**
 * The top of the energy domain where the time inside stops rising with energy. Ions turning within
 * a few mesh cells of the back plate take less time the higher their energy (traced at FINE
 * precision on the axis of the demo at 5620 V: dt/dU ≈ +8.4e-7 s·sqrt(C/kg)/V up to 5600 V, then
 * falling to −2.4e-6 by 5610 V, before the strikes from 5615 V), a kink no polynomial in energy
 * follows. Where the training ray of the longest time lies more than KINK_MIN of the training
 * energy range below the highest, the map's domain and every fit stop as far below that ray's energy
 * as the highest lies above it; the ions above are traced (or taken by the back-plate pre-test).
 */
export const KINK_MIN = 0.01;
/**
 * Where there is a kink, the energy pieces' candidates are fitted twice: up to the cut and up to
 * KINK_LOWER times as far below the longest-time ray's energy, validated side by side; the choice by
 * training rays held weighs the mapped range against the pieces that validate. Measured on the demo
 * (2·10^4 ions): with the lower top alone the heavier species' top piece validated at 5660 V (6778 of
 * its 10^4 ions mapped against 4339) but it mapped 200–300 fewer at 5580 and 5620 V; with both tops
 * 6722 at 5660 V and the same as with the higher alone at 5580 and 5620 V.
 */
export const KINK_LOWER = 2;

/**
 * Back-plate strike pre-test: an ion whose energy lies BACK_MARGIN (relative) above every training
 * ray that came back out, inside the range of the training rays that struck the back plate, is taken
 * as struck there without tracing, with the strike time and point of polynomials fitted to those rays,
 * once BACK_CHECKS_MIN held-out traced ions confirmed it (struck on the same electrode, time within
 * STRIKE_TIME_TOL, point within BACK_POINT_TOL_M) and none contradicted it. Why: below the tuned back
 * plate potential the ions of the upper energies pass every turning point; traced, they cost as much
 * as a detected ion (~310 field evaluations each on the demo at 5620 V, 17 % of the run's).
 * The strike's time and point are fitted in sqrt(U − U_top) (BackFit): on the demo at 5620 V they
 * met the training rays to 5.5–7.9e-6 rms relative (largest 2.6e-5) and 0.2–0.8 µm; a traced strike's
 * own time is that of the step that ends in the metal (a check at 1e-4 was missed by 1.1e-4), hence the
 * entrance pre-test's STRIKE_TIME_TOL.
 * Measured on the demo at 5620 V (2·10^4 ions): every ion above 5615.7 V struck the back plate, every
 * one below came back, so the margin (≈ 5.6 V) is ~30× the ~0.2 V the transverse energy moves it.
 */
export const BACK_MARGIN = 1e-3;
export const BACK_CHECKS_MIN = 8;
export const BACK_POINT_TOL_M = 1e-4;

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
/** The back-plate strike's time and point: smaller bases (the training rays that strike are fewer, and the tolerance is looser). */
const BACK_TIME_BASIS = exponents(1, [4, 2]);
const BACK_POINT_BASIS = exponents(1, [3, 1]);
const BACK_TIME_TERMS = BACK_TIME_BASIS.length / 4;
const BACK_POINT_TERMS = BACK_POINT_BASIS.length / 4;

/** Entry state in the map's variables. */
interface MapInput {
  /** Normalised energy over the species' training range. */
  eg: number;
  /** Normalised invariants (e: the energy variable of the map being evaluated). */
  e: number;
  a: number;
  b: number;
  c: number;
  /** Normalised transverse vectors: offset from the virtual source (P − L·D)/R and direction D/Dmax. */
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
/** The strike pre-test: still being checked, used, or refused. */
const Strike = { CHECKING: 0, USED: 1, REFUSED: 2 } as const;

/** Entry state of a training ray that struck, and where and when (time × sqrt(q/m)) it struck. */
interface StruckRay {
  x: number;
  y: number;
  dx: number;
  dy: number;
  U: number;
  scaledTime: number;
  /** Strike point (mesh frame) and the electrode struck. */
  xs: number;
  ys: number;
  electrode: number;
}

/**
 * Numbers per species in a MirrorMapSnapshot: 17 scalars (q/m, states, normalisation, domains,
 * pieces in use: 0 for the whole map), MAX_PIECES − 1 splits, then the whole map and each piece
 * (state, eMid, eHalf, linMid, linHalf, time, position and direction coefficients; unused slots refused, zero),
 * then the back-plate pre-test (BACK_STRIDE numbers). A piece split's top is the domain's eHi.
 */
const SNAPSHOT_HEAD = 17;
const FIT_STRIDE = 5 + TIME_TERMS + 4 * LINEAR_TERMS;
/** The back-plate pre-test: state, electrode, face z, domain (4), energy variable (3), time and point coefficients. */
const BACK_HEAD = 10;
const BACK_STRIDE = BACK_HEAD + BACK_TIME_TERMS + 2 * BACK_POINT_TERMS;
const BACK_AT = SNAPSHOT_HEAD + (MAX_PIECES - 1) + (1 + MAX_PIECES) * FIT_STRIDE;
export const SNAPSHOT_STRIDE = BACK_AT + BACK_STRIDE;

function putFit(values: Float64Array, o: number, f: PolyFit | undefined): void {
  if (f === undefined) {
    values[o] = State.DIRECT;
    return;
  }
  values.set([f.state, f.eMid, f.eHalf, f.linMid, f.linHalf], o);
  values.set(f.timeCoef, o + 5);
  values.set(f.posCoef, o + 5 + TIME_TERMS);
  values.set(f.dirCoef, o + 5 + TIME_TERMS + 2 * LINEAR_TERMS);
}

function getFit(v: Float64Array, o: number): PolyFit {
  const f = new PolyFit();
  [f.state, f.eMid, f.eHalf, f.linMid, f.linHalf] = v.subarray(o, o + 5);
  f.timeCoef = v.slice(o + 5, o + 5 + TIME_TERMS);
  f.posCoef = v.slice(o + 5 + TIME_TERMS, o + 5 + TIME_TERMS + 2 * LINEAR_TERMS);
  f.dirCoef = v.slice(o + 5 + TIME_TERMS + 2 * LINEAR_TERMS, o + FIT_STRIDE);
  return f;
}

/** A fitted map as plain arrays (transferable between workers): see SolvedMirrorMapper.snapshot and restore. */
export interface MirrorMapSnapshot {
  readonly values: Float64Array;
  /** The settled species' reports at the snapshot (the fitting worker's counts, validation figures, notes). */
  readonly species: readonly SpeciesMapReport[];
}

/** One species' part of a run's map. */
export interface SpeciesMapReport {
  /** q/m of the species (C/kg). */
  qOverM_C_per_kg: number;
  mapped: number;
  traced: number;
  /** Validation figures against FINE traces (null before validation ended). */
  validationRays: number;
  validationTimeRms: number | null;
  validationDirectionRms: number | null;
  /** Why the map was not used for this species, or '' when it was. */
  note: string;
  /** Ions taken as struck on the entrance electrode by the strike pre-test (not traced; counted in `mapped`). */
  struckByMap: number;
  /** Traced ions that checked the strike pre-test, and why it is not used ('' when it is or is still being checked). */
  strikeChecks: number;
  strikeNote: string;
  /** Ions taken as struck on the back plate by its pre-test (not traced; counted in `mapped`), its checks, and why it is not used. */
  struckBackByMap: number;
  backChecks: number;
  backNote: string;
  /** Where the whole-domain map was refused and the domain split by energy: each piece (empty otherwise). */
  pieces: MapPieceReport[];
}

/** One energy piece of a species' map. */
export interface MapPieceReport {
  /** Its range of kinetic energy per charge at the entry plane (V). */
  uFrom_V: number;
  uTo_V: number;
  validationRays: number;
  validationTimeRms: number | null;
  /** Why the piece is not used, or '' when it is. */
  note: string;
}

export interface MirrorMapReport {
  mapped: number;
  traced: number;
  /** Of `mapped`: ions the strike pre-test took as struck on the entrance electrode. */
  struckByMap: number;
  /** Of `mapped`: ions the back-plate pre-test took as struck on the back plate. */
  struckBackByMap: number;
  /** Why the map was not used (for every species), or '' when it was used for some. */
  note: string;
  species: SpeciesMapReport[];
}


/** The nearest entrance aperture of a region: radius and far face (mesh z), or null. */
function entranceAperture(region: SolvedRegion): Aperture | null {
  let best: (Aperture & { zMin: number }) | null = null;
  const s = region.solids;
  for (let k = 0; k < s.length; k += 4) {
    if (s[k] > 0 && s[k + 2] >= region.entryZ_m && (best === null || s[k + 2] < best.zMin)) best = { radius_m: s[k], farZ_m: s[k + 3], zMin: s[k + 2], electrode: region.solidIndex[k / 4] };
  }
  return best && { radius_m: best.radius_m, farZ_m: best.farZ_m, electrode: best.electrode };
}

/** The face of electrode `electrode` nearest the entry plane (mesh z). */
function nearFace(region: SolvedRegion, electrode: number): number {
  let z = Infinity;
  const s = region.solids;
  for (let k = 0; k < s.length; k += 4) if (region.solidIndex[k / 4] === electrode) z = Math.min(z, s[k + 2]);
  return Number.isFinite(z) ? z : region.farZ_m;
}

/** An entrance aperture: bore radius, mirror-side face (mesh z) and electrode index. */
interface Aperture {
  radius_m: number;
  farZ_m: number;
  electrode: number;
}

/**
 * One polynomial map (time, exit position, exit direction) over an energy range of a species'
 * domain, in the local energy variable (e − eMid)/eHalf (the whole domain: eMid 0, eHalf 1, so
 * its input is e itself), with its own validation.
 */
class PolyFit {
  state: number = State.VALIDATING;
  eMid = 0;
  eHalf = 1;
  /** The energy variable of the exit position and direction (an energy piece shares one fit over the whole domain: 0, 1). */
  linMid = 0;
  linHalf = 1;
  timeCoef = new Float64Array(TIME_TERMS);
  posCoef = new Float64Array(2 * LINEAR_TERMS);
  dirCoef = new Float64Array(2 * LINEAR_TERMS);
  /** Sums of squared validation errors, the largest time error, and the rays they count. */
  sumTime2 = 0;
  maxTime = 0;
  sumPos2 = 0;
  sumDir2 = 0;
  rays = 0;
  note = '';
}

/** One species' map: training, validation, then use. */
class SpeciesMap {
  state: number = State.TRAINING;
  readonly rays: Ray[] = [];
  uMid = 0;
  uHalf = 1;
  virtualSource_m = 0;
  rMax = 1;
  dMax = 1;
  /** The map of the whole domain; used when it validates. */
  whole = new PolyFit();
  /** Where the whole map is refused: the candidate splits by energy (fitted after retraining), and the one in use (null: the whole map). */
  partitions: Partition[] = [];
  /** The normalised energies of the training rays inside the domain, once the pieces are fitted (the rays do not change while they are validated). */
  innerEs: number[] = [];
  chosen: Partition | null = null;
  /** Once in use: the estimated share of its later ions that the map leaves to the tracer (for balancing a split run's chunks). */
  tracedShare = 1;
  /** Traced ions of the species at which training ends (the first fit, then the pieces' fit). */
  trainUntil = TRAIN_RAYS;
  eLo = -1;
  eHi = 1;
  aHi = 1;
  cHi = 1;
  /** The strike pre-test's domain: the full range of every training ray, struck ones included. */
  readonly struckRays: StruckRay[] = [];
  strikeState: number = Strike.CHECKING;
  eLoStrike = -1;
  eHiStrike = 1;
  aHiStrike = 1;
  cHiStrike = 1;
  /** Normalised energy above which no fit reaches (the time's kink below the back plate; Infinity: none). */
  eCut = Infinity;
  /** A second, lower top for the energy pieces' candidates where there is a kink (KINK_LOWER; Infinity: none). */
  eCutLow = Infinity;
  /** The back-plate pre-test: the training rays that struck above every returned one, and its fit once made. */
  readonly backRays: StruckRay[] = [];
  back: BackFit | null = null;
  backState: number = Strike.CHECKING;
  readonly report: SpeciesMapReport;
  constructor(qOverM: number) {
    this.report = { qOverM_C_per_kg: qOverM, mapped: 0, traced: 0, validationRays: 0, validationTimeRms: null, validationDirectionRms: null, note: '', struckByMap: 0, strikeChecks: 0, strikeNote: '', struckBackByMap: 0, backChecks: 0, backNote: '', pieces: [] };
  }
}

/** The back-plate strike of a species: where it holds (normalised energy, invariants) and its time and point as polynomials. */
class BackFit {
  electrode = -1;
  faceZ_m = 0;
  eLo = 0;
  eHi = 0;
  aHi = 0;
  cHi = 0;
  /**
   * Its local energy variable: (w − eMid)/eHalf with w = sqrt(e − eTop), eTop the highest returned
   * training ray's normalised energy. Why the square root: an ion just past the last turning point
   * reaches the plate slowly, its speed there ∝ sqrt(U − U_turn), and the time and point to the
   * plate are smooth in that speed, not in U (in U the fit missed by 2.4e-2 rms on the demo at 5620 V).
   */
  eTop = 0;
  eMid = 0;
  eHalf = 1;
  timeCoef = new Float64Array(BACK_TIME_TERMS);
  pointCoef = new Float64Array(2 * BACK_POINT_TERMS);
}

/** The domain up to `top` (normalised energy) split by energy at `splits` (ascending) into pieces.length maps. */
class Partition {
  constructor(
    readonly splits: number[],
    readonly pieces: PolyFit[],
    readonly top: number,
  ) {}
  /** The piece holding the normalised energy e. */
  piece(e: number): PolyFit {
    let k = 0;
    while (k < this.splits.length && e >= this.splits[k]) k++;
    return this.pieces[k];
  }
}

/**
 * The map of one run's solved mirror: feed it every ion that reaches the mirror, in order. It
 * reads and writes the ion's transverse state in its IonState, as the traced kernel does, and
 * owns its scratch (nothing is shared between runs).
 */
export class SolvedMirrorMapper implements MirrorMap {
  private readonly ion = createSolvedIonState();
  private readonly sample = createFieldSample();
  private readonly inp: MapInput = { eg: 0, e: 0, a: 0, b: 0, c: 0, px: 0, py: 0, dx: 0, dy: 0 };
  private readonly timeRow = new Float64Array(TIME_TERMS);
  /** The linear basis at the current input, and the map's exit position and direction there (set by inDomain). */
  private readonly linRow = new Float64Array(LINEAR_TERMS);
  private readonly out2 = new Float64Array(2);
  private readonly dir2 = new Float64Array(2);
  private readonly maps: SpeciesMap[] = [];
  private current: SpeciesMap | null = null;
  readonly report: MirrorMapReport = { mapped: 0, traced: 0, struckByMap: 0, struckBackByMap: 0, note: '', species: [] };
  /** The strike pre-test's prediction at the current input (set by predictsStrike): scaled time of the strike and its point. */
  private strikeScaledTime = 0;
  private readonly strike2 = new Float64Array(2);
  /** The back-plate pre-test's prediction at the current input (set by predictsBackStrike), and its basis rows. */
  private backScaledTime = 0;
  private readonly back2 = new Float64Array(2);
  private readonly backTimeRow = new Float64Array(BACK_TIME_TERMS);
  private readonly backPointRow = new Float64Array(BACK_POINT_TERMS);
  private readonly trainRays = TRAIN_RAYS;
  /** Restored from a snapshot: knows only the snapshot's species, each settled. */
  private restored = false;
  private readonly aperture: Aperture | null;

  /**
   * `tracer`: the run's tracer, for the ions the map does not carry (its counters get their
   * effort). `returnLength_m`: the field-free return path after the mirror, over which an energy
   * piece's exit direction error is validated as a flight-time error (0: not checked).
   */
  constructor(
    private readonly mirror: SolvedMirrorModel,
    private readonly tracer: SolvedFieldTracer = new SolvedFieldTracer(null),
    private readonly returnLength_m = 0,
  ) {
    this.aperture = entranceAperture(mirror.region);
  }

  /**
   * Of a settled species' later ions, the share expected to be traced (1 when its map is refused):
   * the share of its ions so far that the decided map would not carry (strike pre-test not counted).
   */
  tracedShare(qOverM_C_per_kg: number): number {
    const m = this.maps.find((s) => s.report.qOverM_C_per_kg === qOverM_C_per_kg);
    return m === undefined || m.state !== State.MAPPED ? 1 : m.tracedShare;
  }

  /** True once the species' map is decided (in use, or refused): every later ion's crossing depends on that ion alone. */
  settled(qOverM_C_per_kg: number): boolean {
    const m = this.maps.find((s) => s.report.qOverM_C_per_kg === qOverM_C_per_kg);
    return m !== undefined && (m.state === State.MAPPED || m.state === State.DIRECT);
  }

  /**
   * The settled species' maps as plain arrays (SNAPSHOT_STRIDE numbers per species) and their
   * reports: what a worker that did not fit the map needs to carry the later ions exactly as this one would.
   */
  snapshot(): MirrorMapSnapshot {
    const settled = this.maps.filter((m) => m.state === State.MAPPED || m.state === State.DIRECT);
    const values = new Float64Array(settled.length * SNAPSHOT_STRIDE);
    settled.forEach((m, i) => {
      const o = i * SNAPSHOT_STRIDE;
      values.set([m.report.qOverM_C_per_kg, m.state, m.strikeState, m.uMid, m.uHalf, m.virtualSource_m, m.rMax, m.dMax, m.eLo, m.eHi, m.aHi, m.cHi, m.eLoStrike, m.eHiStrike, m.aHiStrike, m.cHiStrike, m.chosen === null ? 0 : m.chosen.pieces.length], o);
      m.chosen?.splits.forEach((e, k) => (values[o + SNAPSHOT_HEAD + k] = e));
      const fits = o + SNAPSHOT_HEAD + MAX_PIECES - 1;
      putFit(values, fits, m.whole);
      for (let k = 0; k < MAX_PIECES; k++) putFit(values, fits + (1 + k) * FIT_STRIDE, m.chosen?.pieces[k]);
      const b = o + BACK_AT;
      values[b] = m.backState;
      const f = m.back;
      if (f !== null) {
        values.set([f.electrode, f.faceZ_m, f.eLo, f.eHi, f.aHi, f.cHi, f.eTop, f.eMid, f.eHalf], b + 1);
        values.set(f.timeCoef, b + BACK_HEAD);
        values.set(f.pointCoef, b + BACK_HEAD + BACK_TIME_TERMS);
      }
    });
    return { values, species: settled.map((m) => ({ ...m.report, pieces: m.report.pieces.map((p) => ({ ...p })) })) };
  }

  /**
   * A map restored from `snapshot` (another worker's fit), its counts zero (the snapshot's species
   * reports keep the fitting worker's); its ions' crossings equal the fitting worker's bit for bit.
   */
  static restore(mirror: SolvedMirrorModel, snapshot: MirrorMapSnapshot, tracer?: SolvedFieldTracer): SolvedMirrorMapper {
    const mapper = new SolvedMirrorMapper(mirror, tracer);
    const v = snapshot.values;
    if (v.length !== snapshot.species.length * SNAPSHOT_STRIDE) throw new Error(`a transfer-map snapshot of ${snapshot.species.length} species needs ${snapshot.species.length * SNAPSHOT_STRIDE} values, not ${v.length}`);
    snapshot.species.forEach((r, i) => {
      const o = i * SNAPSHOT_STRIDE;
      if (v[o] !== r.qOverM_C_per_kg || !(v[o + 1] === State.MAPPED || v[o + 1] === State.DIRECT)) throw new Error('a transfer-map snapshot holds a species that is not settled');
      const m = new SpeciesMap(v[o]);
      Object.assign(m.report, r, { mapped: 0, traced: 0, struckByMap: 0, struckBackByMap: 0, pieces: r.pieces.map((p) => ({ ...p })) });
      m.state = v[o + 1];
      m.strikeState = v[o + 2];
      [m.uMid, m.uHalf, m.virtualSource_m, m.rMax, m.dMax, m.eLo, m.eHi, m.aHi, m.cHi, m.eLoStrike, m.eHiStrike, m.aHiStrike, m.cHiStrike] = v.subarray(o + 3, o + SNAPSHOT_HEAD - 1);
      const count = v[o + SNAPSHOT_HEAD - 1];
      const fits = o + SNAPSHOT_HEAD + MAX_PIECES - 1;
      m.whole = getFit(v, fits);
      const b = o + BACK_AT;
      m.backState = v[b];
      if (m.backState === Strike.USED) {
        const f = new BackFit();
        [f.electrode, f.faceZ_m, f.eLo, f.eHi, f.aHi, f.cHi, f.eTop, f.eMid, f.eHalf] = v.subarray(b + 1, b + BACK_HEAD);
        f.timeCoef = v.slice(b + BACK_HEAD, b + BACK_HEAD + BACK_TIME_TERMS);
        f.pointCoef = v.slice(b + BACK_HEAD + BACK_TIME_TERMS, b + BACK_STRIDE);
        m.back = f;
      }
      if (count > 0) m.chosen = new Partition(Array.from(v.subarray(o + SNAPSHOT_HEAD, o + SNAPSHOT_HEAD + count - 1)), Array.from({ length: count }, (_, k) => getFit(v, fits + (1 + k) * FIT_STRIDE)), m.eHi);
      mapper.maps.push(m);
      mapper.report.species.push(m.report);
    });
    mapper.restored = true;
    return mapper;
  }

  private speciesMap(k: number): SpeciesMap {
    if (this.current !== null && this.current.report.qOverM_C_per_kg === k) return this.current;
    let m = this.maps.find((s) => s.report.qOverM_C_per_kg === k);
    if (!m) {
      if (this.restored) throw new Error(`the restored transfer map has no species of q/m ${k} C/kg: its ions must be traced by the worker that fitted it`);
      m = new SpeciesMap(k);
      this.maps.push(m);
      this.report.species.push(m.report);
    }
    this.current = m;
    return m;
  }

  /**
   * Through the mirror from its entry plane (st: time, speed v > 0 and the transverse state), by
   * the map where it holds; false with the fate set when the ion does not come back out.
   */
  passIon(st: IonState, plan: FlightPlan, tLimit_s: number): boolean {
    const region = this.mirror.region;
    const ion = this.ion;
    ion.t = st.t;
    ion.x = transverseXAt(st, st.t);
    ion.y = transverseYAt(st, st.t);
    ion.z = region.entryZ_m;
    ion.vx = st.vxRef;
    ion.vy = st.vyRef;
    ion.vz = st.v;
    ion.struckElectrode = -1;
    const k = plan.qOverM;
    const m = this.speciesMap(k);
    const speed = Math.sqrt(ion.vx * ion.vx + ion.vy * ion.vy + ion.vz * ion.vz);
    const U = (speed * speed) / (2 * k);
    const x0 = ion.x;
    const y0 = ion.y;
    const dx0 = ion.vx / speed;
    const dy0 = ion.vy / speed;
    const usable = k > 0 && st.v > 0;
    // Past every turning point: the back-plate pre-test (checked from its fit until the map is decided, used after).
    const backTest = usable && m.back !== null && m.backState !== Strike.REFUSED && this.predictsBackStrike(m, x0, y0, dx0, dy0, U);
    if (backTest && m.backState === Strike.USED) {
      m.report.mapped++;
      m.report.struckBackByMap++;
      this.report.mapped++;
      this.report.struckBackByMap++;
      return this.applyBackStrike(st, k);
    }
    // The map that would carry this ion (or be validated on it), and whether the ion is inside its domain.
    const fit = usable && (m.state === State.MAPPED || m.state === State.VALIDATING) && this.setInput(m, x0, y0, dx0, dy0, U) ? this.fitFor(m) : null;
    const inside = fit !== null && this.inDomain(m, fit, x0, y0, dx0, dy0);
    if (fit !== null && fit.state === State.MAPPED && inside) {
      m.report.mapped++;
      this.report.mapped++;
      return this.applyMap(fit, st, k, speed, tLimit_s);
    }
    // Checked while the map is validated (decided with it), used once it is.
    const strikeTest = usable && !inside && ((m.state === State.MAPPED && m.strikeState === Strike.USED) || (m.state === State.VALIDATING && m.strikeState === Strike.CHECKING)) && this.predictsStrike(m, x0, y0, dx0, dy0, U);
    if (strikeTest && m.state === State.MAPPED) {
      m.report.mapped++;
      m.report.struckByMap++;
      this.report.mapped++;
      this.report.struckByMap++;
      return this.applyStrike(st, k, speed);
    }
    const training = m.state === State.TRAINING;
    const validating = m.state === State.VALIDATING && inside;
    const t0 = ion.t;
    const exit = this.tracer.trace(ion, region, k, tLimit_s, validating ? SolvedPrecision.FINE : SolvedPrecision.NORMAL);
    m.report.traced++;
    this.report.traced++;
    if (strikeTest) this.checkStrike(m, exit === Fate.STRUCK_ELECTRODE, (ion.t - t0) * Math.sqrt(k), this.strikeScaledTime);
    if (backTest) this.checkBack(m, exit === Fate.STRUCK_ELECTRODE ? ion.struckElectrode : null, (ion.t - t0) * Math.sqrt(k), ion.x, ion.y);
    if (training && usable) {
      // A training ray that does not come back (a strike) is not fitted; it checks the strike pre-test after the fit.
      if (exit === Exit.ENTRY) m.rays.push({ x: x0, y: y0, dx: dx0, dy: dy0, U, scaledTime: (ion.t - t0) * Math.sqrt(k), xOut: ion.x, yOut: ion.y, dxOut: ion.vx / speed, dyOut: ion.vy / speed });
      else if (exit === Fate.STRUCK_ELECTRODE) m.struckRays.push({ x: x0, y: y0, dx: dx0, dy: dy0, U, scaledTime: (ion.t - t0) * Math.sqrt(k), xs: ion.x, ys: ion.y, electrode: ion.struckElectrode });
      if (m.report.traced >= m.trainUntil) this.fit(m);
    } else if (validating && fit !== null) {
      m.report.validationRays++;
      const scaled = (ion.t - t0) * Math.sqrt(k);
      const dxOut = ion.vx / speed;
      const dyOut = ion.vy / speed;
      if (fit === m.whole) {
        if (exit !== Exit.ENTRY) this.refuseFit(fit, 'a validation ray inside the fitted domain did not come back out of the mirror');
        else {
          this.validate(fit, scaled, ion.x, ion.y, dxOut, dyOut, U);
          // A FINE ray that came back is a training ray too, should the pieces be needed.
          m.rays.push({ x: x0, y: y0, dx: dx0, dy: dy0, U, scaledTime: scaled, xOut: ion.x, yOut: ion.y, dxOut, dyOut });
        }
      } else {
        // One FINE ray validates the piece it falls in of every candidate split.
        this.setInput(m, x0, y0, dx0, dy0, U);
        for (const part of m.partitions) {
          if (this.inp.eg > part.top) continue;
          const f = part.piece(this.inp.eg);
          if (f.state !== State.VALIDATING || !this.inDomain(m, f, x0, y0, dx0, dy0)) continue;
          if (exit !== Exit.ENTRY) this.refuseFit(f, 'a validation ray inside the fitted domain did not come back out of the mirror');
          else this.validate(f, scaled, ion.x, ion.y, dxOut, dyOut, U);
        }
      }
      this.decide(m);
    }
    return finish(st, ion, exit);
  }

  /**
   * The strike pre-test at an entry outside the map's domain: inside the range of all training
   * rays (struck ones included), entering clear of the aperture's edge, and the predicted exit line
   * meets the entrance electrode's mirror-side face at STRIKE_RADIUS of the aperture radius or
   * more. Leaves the predicted strike (scaled time, point) in strikeScaledTime and strike2.
   */
  private predictsStrike(m: SpeciesMap, x: number, y: number, dx: number, dy: number, U: number): boolean {
    const ap = this.aperture;
    if (ap === null) return false;
    this.setInput(m, x, y, dx, dy, U);
    const inp = this.inp;
    if (!(inp.eg >= m.eLoStrike && inp.eg <= m.eHiStrike && inp.a <= m.aHiStrike && inp.c <= m.cHiStrike)) return false;
    const depth = ap.farZ_m - this.mirror.region.entryZ_m;
    const sIn = depth / Math.sqrt(Math.max(1 - dx * dx - dy * dy, 1e-12));
    const limitIn = APERTURE_MARGIN * ap.radius_m;
    if (!((x + dx * sIn) ** 2 + (y + dy * sIn) ** 2 <= limitIn * limitIn)) return false;
    basis(LINEAR_BASIS, inp, this.linRow);
    const out2 = this.out2;
    const dir2 = this.dir2;
    this.transverseOut(m.whole.posCoef, out2);
    this.transverseOut(m.whole.dirCoef, dir2);
    const cosOut = Math.sqrt(Math.max(1 - dir2[0] * dir2[0] - dir2[1] * dir2[1], 1e-12));
    const sOut = depth / cosOut;
    const xs = out2[0] - dir2[0] * sOut;
    const ys = out2[1] - dir2[1] * sOut;
    const limit = STRIKE_RADIUS * ap.radius_m;
    if (!(xs * xs + ys * ys >= limit * limit)) return false;
    this.strike2[0] = xs;
    this.strike2[1] = ys;
    // The map's time to the entry plane less the straight path back from the face at the entry speed
    // (the field between the face and the entry plane is weak: the drift potential's side of the aperture).
    this.strikeScaledTime = this.scaledTime(m.whole) - sOut / Math.sqrt(2 * U); // scaled: time × sqrt(q/m), speed sqrt(2U·q/m)
    return true;
  }

  /**
   * The entrance strike pre-test once the whole map is refused and pieces are fitted: it predicts the
   * exit line by the pieces' shared exit position and direction (`lin`, fitted on the retrained rays
   * and validated with every piece) and the strike time by the whole map's time (its misses, ~1e-5,
   * are far inside STRIKE_TIME_TOL), so the checks start again: the training rays that came back
   * must not be predicted struck, the struck ones (held out: never fitted) predicted so are checks,
   * and the traced ions during the pieces' validation check it on. Why: on the demo at 5620 V the
   * heavier species' entrance strikes, all traced, cost ~20 % of the run's field evaluations.
   */
  private restartStrikes(m: SpeciesMap, lin: PolyFit): void {
    if (m.strikeState !== Strike.CHECKING) return;
    m.report.strikeChecks = 0;
    m.whole.posCoef = lin.posCoef;
    m.whole.dirCoef = lin.dirCoef;
    for (const r of m.rays) if (this.predictsStrike(m, r.x, r.y, r.dx, r.dy, r.U)) return this.refuseStrikes(m, 'a training ray predicted to strike the entrance electrode came back out');
    for (const r of m.struckRays) if (this.predictsStrike(m, r.x, r.y, r.dx, r.dy, r.U)) this.checkStrike(m, true, r.scaledTime, this.strikeScaledTime);
  }

  /** A traced ion the strike pre-test predicted struck: a check of the prediction (strike, and its time). */
  private checkStrike(m: SpeciesMap, struck: boolean, scaledTime: number, predicted: number): void {
    if (m.strikeState === Strike.REFUSED) return;
    if (!struck) return this.refuseStrikes(m, 'an ion predicted to strike the entrance electrode came back out');
    const rel = Math.abs(predicted - scaledTime) / scaledTime;
    if (!(rel <= STRIKE_TIME_TOL)) return this.refuseStrikes(m, `a predicted strike time was off by ${rel.toExponential(1)} relative`);
    m.report.strikeChecks++;
  }

  private refuseStrikes(m: SpeciesMap, note: string): void {
    m.strikeState = Strike.REFUSED;
    m.report.strikeNote = note;
  }

  /** The strike predicted by predictsStrike: the ion ends on the entrance electrode's face. */
  private applyStrike(st: IonState, k: number, speed: number): boolean {
    const ion = this.ion;
    const ap = this.aperture;
    ion.t = st.t + this.strikeScaledTime / Math.sqrt(k);
    ion.x = this.strike2[0];
    ion.y = this.strike2[1];
    ion.z = ap === null ? ion.z : ap.farZ_m;
    ion.vx = speed * this.dir2[0];
    ion.vy = speed * this.dir2[1];
    ion.vz = -Math.sqrt(Math.max(speed * speed - ion.vx * ion.vx - ion.vy * ion.vy, 0));
    ion.struckElectrode = ap === null ? -1 : ap.electrode;
    return finish(st, ion, Fate.STRUCK_ELECTRODE);
  }

  /**
   * The training rays that struck above the energy of every one that came back out (moved from
   * struckRays to backRays): the back-plate pre-test's training rays. The rest stay in struckRays.
   */
  private sortStruck(m: SpeciesMap): void {
    let uTop = -Infinity;
    for (const r of m.rays) uTop = Math.max(uTop, r.U);
    // Not the entrance electrode's: those are the entrance pre-test's, whatever their energy.
    const past = (r: StruckRay) => r.U > uTop && r.electrode !== this.aperture?.electrode;
    const rest = m.struckRays.filter((r) => !past(r));
    for (const r of m.struckRays) if (past(r)) m.backRays.push(r);
    m.struckRays.length = 0;
    m.struckRays.push(...rest);
  }

  /**
   * The back-plate pre-test fitted to backRays (once, when there are enough of them): its domain
   * starts BACK_MARGIN above every returned training ray's energy; strike time and point are
   * least-squares polynomials of the entry invariants in their own energy variable.
   */
  private fitBack(m: SpeciesMap): void {
    if (m.back !== null || m.backState !== Strike.CHECKING || m.backRays.length === 0) return;
    const electrode = m.backRays[0].electrode;
    if (m.backRays.some((r) => r.electrode !== electrode)) return this.refuseBack(m, 'the training rays above every returned energy struck more than one electrode');
    let uTop = -Infinity;
    for (const r of m.rays) uTop = Math.max(uTop, r.U);
    const uLo = uTop * (1 + BACK_MARGIN);
    // Fitted to the rays inside its domain only: the ones just past the last turning point linger.
    const rays = m.backRays.filter((r) => r.U >= uLo);
    if (rays.length < 2 * BACK_TIME_TERMS) return;
    const f = new BackFit();
    f.electrode = electrode;
    f.faceZ_m = nearFace(this.mirror.region, electrode);
    const inp = this.inp;
    f.eTop = (uTop - m.uMid) / m.uHalf;
    f.eLo = (uLo - m.uMid) / m.uHalf;
    f.eHi = -Infinity;
    for (const r of rays) {
      this.setInput(m, r.x, r.y, r.dx, r.dy, r.U);
      f.eHi = Math.max(f.eHi, inp.eg);
      f.aHi = Math.max(f.aHi, inp.a);
      f.cHi = Math.max(f.cHi, inp.c);
    }
    const wLo = Math.sqrt(f.eLo - f.eTop);
    const wHi = Math.sqrt(f.eHi - f.eTop);
    f.eMid = 0.5 * (wLo + wHi);
    f.eHalf = wHi > wLo ? 0.5 * (wHi - wLo) : 1;
    const n = rays.length;
    const A = new Float64Array(n * BACK_TIME_TERMS);
    const rhs = new Float64Array(n);
    const A2 = new Float64Array(2 * n * 2 * BACK_POINT_TERMS);
    const pts = new Float64Array(2 * n);
    let timeScale = 0;
    for (const r of rays) timeScale += r.scaledTime / n;
    rays.forEach((r, i) => {
      this.setInput(m, r.x, r.y, r.dx, r.dy, r.U);
      inp.e = (Math.sqrt(inp.eg - f.eTop) - f.eMid) / f.eHalf;
      basis(BACK_TIME_BASIS, inp, this.backTimeRow);
      A.set(this.backTimeRow, i * BACK_TIME_TERMS);
      rhs[i] = r.scaledTime / timeScale - 1;
      basis(BACK_POINT_BASIS, inp, this.backPointRow);
      const row = this.backPointRow;
      const w = 2 * BACK_POINT_TERMS;
      for (let k = 0; k < BACK_POINT_TERMS; k++) {
        A2[2 * i * w + k] = inp.px * row[k];
        A2[2 * i * w + BACK_POINT_TERMS + k] = inp.dx * row[k];
        A2[(2 * i + 1) * w + k] = inp.py * row[k];
        A2[(2 * i + 1) * w + BACK_POINT_TERMS + k] = inp.dy * row[k];
      }
      pts[2 * i] = r.xs;
      pts[2 * i + 1] = r.ys;
    });
    const timeCoef = solveLeastSquares(A, n, BACK_TIME_TERMS, rhs, 1e-6);
    for (let k = 0; k < BACK_TIME_TERMS; k++) timeCoef[k] *= timeScale;
    timeCoef[0] += timeScale;
    f.timeCoef = timeCoef;
    f.pointCoef = solveLeastSquares(A2, 2 * n, 2 * BACK_POINT_TERMS, pts, 1e-6);
    m.back = f;
  }

  /** The back-plate pre-test at an entry: inside its domain; leaves the predicted strike (scaled time, point) in backScaledTime and back2. */
  private predictsBackStrike(m: SpeciesMap, x: number, y: number, dx: number, dy: number, U: number): boolean {
    const f = m.back;
    if (f === null) return false;
    this.setInput(m, x, y, dx, dy, U);
    const inp = this.inp;
    if (!(inp.eg >= f.eLo && inp.eg <= f.eHi && inp.a <= f.aHi && inp.c <= f.cHi)) return false;
    inp.e = (Math.sqrt(inp.eg - f.eTop) - f.eMid) / f.eHalf;
    const timeRow = this.backTimeRow;
    basis(BACK_TIME_BASIS, inp, timeRow);
    let t = 0;
    for (let k = 0; k < BACK_TIME_TERMS; k++) t += f.timeCoef[k] * timeRow[k];
    this.backScaledTime = t;
    const row = this.backPointRow;
    basis(BACK_POINT_BASIS, inp, row);
    let g = 0;
    let h = 0;
    for (let k = 0; k < BACK_POINT_TERMS; k++) {
      g += f.pointCoef[k] * row[k];
      h += f.pointCoef[BACK_POINT_TERMS + k] * row[k];
    }
    this.back2[0] = inp.px * g + inp.dx * h;
    this.back2[1] = inp.py * g + inp.dy * h;
    return true;
  }

  /** A traced ion the back-plate pre-test predicted struck (electrode: the one it struck, null when it did not strike): a check. */
  private checkBack(m: SpeciesMap, electrode: number | null, scaledTime: number, xs: number, ys: number): void {
    if (m.backState !== Strike.CHECKING) return;
    const f = m.back!;
    if (electrode !== f.electrode) return this.refuseBack(m, electrode === null ? 'an ion predicted to strike the back plate did not strike' : 'an ion predicted to strike the back plate struck another electrode');
    const rel = Math.abs(this.backScaledTime - scaledTime) / scaledTime;
    if (!(rel <= STRIKE_TIME_TOL)) return this.refuseBack(m, `a predicted back-plate strike time was off by ${rel.toExponential(1)} relative`);
    const miss = Math.hypot(this.back2[0] - xs, this.back2[1] - ys);
    if (!(miss <= BACK_POINT_TOL_M)) return this.refuseBack(m, `a predicted back-plate strike point was off by ${miss.toExponential(1)} m`);
    m.report.backChecks++;
  }

  private refuseBack(m: SpeciesMap, note: string): void {
    m.backState = Strike.REFUSED;
    m.report.backNote = note;
  }

  /** The back-plate pre-test decided with the species' map (in use or refused), so that every later ion's crossing depends on that ion alone. */
  private decideBack(m: SpeciesMap): void {
    if (m.backState !== Strike.CHECKING) return;
    if (m.back !== null && m.report.backChecks >= BACK_CHECKS_MIN) m.backState = Strike.USED;
    else if (m.back !== null) this.refuseBack(m, `too few checks (${m.report.backChecks} of ${BACK_CHECKS_MIN}) by the end of validation`);
    else this.refuseBack(m, m.backRays.length === 0 ? '' : `too few training rays struck the back plate (${m.backRays.length})`);
    m.backRays.length = 0;
  }

  /** The strike predicted by predictsBackStrike: the ion ends on the back plate's face (its velocity there is not recorded for a strike). */
  private applyBackStrike(st: IonState, k: number): boolean {
    const ion = this.ion;
    const f = this.current!.back!;
    ion.t = st.t + this.backScaledTime / Math.sqrt(k);
    ion.x = this.back2[0];
    ion.y = this.back2[1];
    ion.z = f.faceZ_m;
    ion.vx = 0;
    ion.vy = 0;
    ion.vz = 0;
    ion.struckElectrode = f.electrode;
    return finish(st, ion, Fate.STRUCK_ELECTRODE);
  }

  private giveUp(m: SpeciesMap, note: string): void {
    m.state = State.DIRECT;
    m.report.note = note;
    if (m.strikeState === Strike.CHECKING) this.refuseStrikes(m, 'the transfer map was refused');
    this.decideBack(m);
    this.report.note = this.maps.every((s) => s.state === State.DIRECT) ? note : '';
  }

  /**
   * The map that carries (or is validated on) an ion at the current input of a species in use or
   * in validation; null when none may. While pieces are validated: the first candidate split's
   * piece still in validation (the ion is then traced at FINE precision for all of them).
   */
  private fitFor(m: SpeciesMap): PolyFit | null {
    if (m.state === State.MAPPED) {
      if (m.chosen === null) return m.whole;
      const piece = m.chosen.piece(this.inp.eg);
      return piece.state === State.MAPPED ? piece : null;
    }
    if (m.whole.state === State.VALIDATING) return m.whole;
    for (const part of m.partitions) {
      if (this.inp.eg > part.top) continue;
      const piece = part.piece(this.inp.eg);
      if (piece.state === State.VALIDATING) return piece;
    }
    return null;
  }

  private refuseFit(f: PolyFit, note: string): void {
    f.state = State.DIRECT;
    f.note = note;
  }

  /** The map `f` at the current input (set by inDomain) against one FINE-traced ray. */
  private validate(f: PolyFit, scaledTime: number, xOut: number, yOut: number, dxOut: number, dyOut: number, U: number): void {
    const time = this.scaledTime(f);
    const out2 = this.out2;
    const dir2 = this.dir2;
    // An energy piece's time error is judged at the end of the return path (its exit direction
    // changes the return leg's length through 1/cos θ), relative to the time inside, as a run's
    // flight time is measured; the whole map keeps the mirror's time alone.
    const leg = f === this.current?.whole || this.returnLength_m === 0 ? 0 : this.returnLength_m / Math.sqrt(2 * U); // scaled: speed sqrt(2U·q/m)
    const cosMap = Math.sqrt(Math.max(1 - dir2[0] * dir2[0] - dir2[1] * dir2[1], 1e-12));
    const cosRay = Math.sqrt(Math.max(1 - dxOut * dxOut - dyOut * dyOut, 1e-12));
    const rel = Math.abs(time + leg / cosMap - (scaledTime + leg / cosRay)) / scaledTime;
    const pos2 = (out2[0] - xOut) ** 2 + (out2[1] - yOut) ** 2;
    const d2 = (dir2[0] - dxOut) ** 2 + (dir2[1] - dyOut) ** 2;
    f.sumTime2 += rel * rel;
    f.maxTime = Math.max(f.maxTime, rel);
    f.sumPos2 += pos2;
    f.sumDir2 += d2;
    const n = ++f.rays;
    if (!(rel <= TIME_TOL_MAX)) return this.refuseFit(f, `validation ray outside tolerance (time ${rel.toExponential(1)} relative)`);
    if (n < VALIDATE_RAYS) {
      // Refused as soon as the rays so far put the rms over a limit whatever the rest bring (the same
      // decision as at VALIDATE_RAYS rays, with fewer FINE traces).
      const bound = (sum: number) => Math.sqrt(sum / VALIDATE_RAYS);
      if (bound(f.sumTime2) > TIME_TOL_RMS || bound(f.sumPos2) > POSITION_TOL_RMS_M || bound(f.sumDir2) > DIRECTION_TOL_RMS)
        this.refuseFit(f, `validation outside tolerance after ${n} of ${VALIDATE_RAYS} rays (rms over all of them at least: time ${bound(f.sumTime2).toExponential(1)} relative, exit position ${bound(f.sumPos2).toExponential(1)} m, direction ${bound(f.sumDir2).toExponential(1)})`);
      return;
    }
    const timeRms = Math.sqrt(f.sumTime2 / n);
    const posRms = Math.sqrt(f.sumPos2 / n);
    const dirRms = Math.sqrt(f.sumDir2 / n);
    if (timeRms <= TIME_TOL_RMS && posRms <= POSITION_TOL_RMS_M && dirRms <= DIRECTION_TOL_RMS) f.state = State.MAPPED;
    else this.refuseFit(f, `validation outside tolerance (rms time ${timeRms.toExponential(1)} relative, exit position ${posRms.toExponential(1)} m, direction ${dirRms.toExponential(1)})`);
  }

  /**
   * The species' map decided: the whole map once it validated; once it is refused, the species
   * trains on RETRAIN_RAYS more ions and fits the candidate splits (fit), and once every piece of
   * every candidate is decided, the split whose validated pieces hold the most training rays is
   * used (none validated: every ion traced). The strike pre-test predicts by the whole map's time
   * and, once pieces are fitted, by their shared exit position and direction (restartStrikes).
   */
  private decide(m: SpeciesMap): void {
    const w = m.whole;
    if (w.state === State.VALIDATING) return;
    if (w.state === State.MAPPED) {
      m.report.validationTimeRms = Math.sqrt(w.sumTime2 / w.rays);
      m.report.validationDirectionRms = Math.sqrt(w.sumDir2 / w.rays);
      return this.inUse(m);
    }
    if (m.partitions.length === 0) {
      // The whole map was just refused: train on, then fit the pieces (the strike pre-test restarts with them).
      m.state = State.TRAINING;
      m.trainUntil = m.report.traced + RETRAIN_RAYS;
      return;
    }
    const es = m.innerEs;
    const held = (part: Partition) => es.filter((e) => e <= part.top && part.piece(e).state === State.MAPPED).length;
    if (m.partitions.some((part) => part.pieces.some((p) => p.state === State.VALIDATING))) {
      // Decided early when the choice made once every piece is decided is already known: a candidate
      // whose pieces are all decided holds what it will hold; it is the choice once every earlier
      // candidate can hold fewer at best (its rays in pieces not refused) and every later one no more.
      const reachable = (part: Partition) => es.filter((e) => e <= part.top && part.piece(e).state !== State.DIRECT).length;
      const decided = (part: Partition) => part.pieces.every((p) => p.state !== State.VALIDATING);
      const parts = m.partitions;
      const known = parts.findIndex((part, j) => decided(part) && held(part) > 0 && parts.every((other, i) => i === j || (i < j ? reachable(other) < held(part) : reachable(other) <= held(part))));
      if (known < 0) return;
    }
    let best: Partition | null = null;
    for (const part of m.partitions) if (held(part) > (best === null ? 0 : held(best))) best = part;
    const shown = best ?? m.partitions[0];
    m.report.pieces = shown.pieces.map((p, k) => ({
      uFrom_V: m.uMid + m.uHalf * (k === 0 ? m.eLo : shown.splits[k - 1]),
      uTo_V: m.uMid + m.uHalf * (k === shown.splits.length ? shown.top : shown.splits[k]),
      validationRays: p.rays,
      validationTimeRms: p.rays > 0 ? Math.sqrt(p.sumTime2 / p.rays) : null,
      note: p.note,
    }));
    if (best === null) {
      m.rays.length = 0;
      return this.giveUp(m, `${w.note}; no energy piece validated`);
    }
    const used = best.pieces.filter((p) => p.state === State.MAPPED);
    const n = used.reduce((sum, p) => sum + p.rays, 0);
    m.report.validationTimeRms = Math.sqrt(used.reduce((sum, p) => sum + p.sumTime2, 0) / n);
    m.report.validationDirectionRms = Math.sqrt(used.reduce((sum, p) => sum + p.sumDir2, 0) / n);
    m.chosen = best;
    m.eHi = best.top; // the domain ends where the chosen candidate does
    this.inUse(m);
  }

  private inUse(m: SpeciesMap): void {
    m.state = State.MAPPED;
    this.report.note = '';
    // The share of the species' ions so far (all traced) that the map would carry: how much tracing the rest will need.
    let carried = 0;
    for (const r of m.rays) {
      if (!this.setInput(m, r.x, r.y, r.dx, r.dy, r.U)) continue;
      const f = this.fitFor(m);
      if (f !== null && this.inDomain(m, f, r.x, r.y, r.dx, r.dy)) carried++;
    }
    let backCarried = m.report.backChecks;
    for (const r of m.backRays) if (this.predictsBackStrike(m, r.x, r.y, r.dx, r.dy, r.U)) backCarried++;
    this.decideBack(m);
    if (m.backState === Strike.USED) carried += backCarried;
    m.tracedShare = 1 - carried / Math.max(m.report.traced, 1);
    m.rays.length = 0;
    // The strike pre-test is decided with the map, so that from here on every ion's crossing depends on that ion alone.
    if (m.strikeState === Strike.CHECKING) {
      if (m.report.strikeChecks >= STRIKE_CHECKS_MIN) m.strikeState = Strike.USED;
      else this.refuseStrikes(m, `too few checks (${m.report.strikeChecks} of ${STRIKE_CHECKS_MIN}) by the end of validation`);
    }
  }

  /** Set the normalised map input (the energy for the whole map); false when the entry lies outside the species' domain. */
  private setInput(m: SpeciesMap, x: number, y: number, dx: number, dy: number, U: number): boolean {
    const inp = this.inp;
    inp.eg = (U - m.uMid) / m.uHalf;
    inp.e = inp.eg;
    inp.px = (x - m.virtualSource_m * dx) / m.rMax;
    inp.py = (y - m.virtualSource_m * dy) / m.rMax;
    inp.dx = dx / m.dMax;
    inp.dy = dy / m.dMax;
    inp.a = inp.px * inp.px + inp.py * inp.py;
    inp.b = inp.px * inp.dx + inp.py * inp.dy;
    inp.c = inp.dx * inp.dx + inp.dy * inp.dy;
    return inp.eg >= m.eLo && inp.eg <= m.eHi && inp.a <= m.aHi && inp.c <= m.cHi;
  }

  /** The energy variable of map `f`'s time at the current input (the whole map's is e itself: (e − 0)/1). */
  private localizeTime(f: PolyFit): void {
    this.inp.e = (this.inp.eg - f.eMid) / f.eHalf;
  }

  /** The energy variable of map `f`'s exit position and direction. */
  private localizeLinear(f: PolyFit): void {
    this.inp.e = (this.inp.eg - f.linMid) / f.linHalf;
  }

  /**
   * At the current input (set by setInput, inside the species' domain): clear of the entrance
   * aperture's edge on the way in and (predicted by `f`) out. Leaves f's exit position and
   * direction in out2 and dir2.
   */
  private inDomain(m: SpeciesMap, f: PolyFit, x: number, y: number, dx: number, dy: number): boolean {
    this.localizeLinear(f);
    basis(LINEAR_BASIS, this.inp, this.linRow);
    const out2 = this.out2;
    const dir2 = this.dir2;
    this.transverseOut(f.posCoef, out2);
    this.transverseOut(f.dirCoef, dir2);
    const ap = this.aperture;
    if (ap === null) return true;
    const limit = APERTURE_MARGIN * ap.radius_m;
    const depth = ap.farZ_m - this.mirror.region.entryZ_m;
    const sIn = depth / Math.sqrt(Math.max(1 - dx * dx - dy * dy, 1e-12));
    const xIn = x + dx * sIn;
    const yIn = y + dy * sIn;
    if (!(xIn * xIn + yIn * yIn <= limit * limit)) return false;
    const sOut = depth / Math.sqrt(Math.max(1 - dir2[0] * dir2[0] - dir2[1] * dir2[1], 1e-12));
    const xOut = out2[0] - dir2[0] * sOut;
    const yOut = out2[1] - dir2[1] * sOut;
    return xOut * xOut + yOut * yOut <= limit * limit;
  }

  private setDomain(m: SpeciesMap): void {
    const es: number[] = [];
    const as: number[] = [];
    const cs: number[] = [];
    const inp = this.inp;
    for (const r of m.rays) {
      this.setInput(m, r.x, r.y, r.dx, r.dy, r.U);
      es.push(inp.e);
      as.push(inp.a);
      cs.push(inp.c);
    }
    const byValue = (p: number, q: number) => p - q;
    es.sort(byValue);
    as.sort(byValue);
    cs.sort(byValue);
    const at = (xs: number[], q: number) => xs[Math.min(xs.length - 1, Math.max(0, Math.round(q * (xs.length - 1))))];
    m.eLo = at(es, DOMAIN_QUANTILE);
    m.eHi = Math.min(at(es, 1 - DOMAIN_QUANTILE), m.eCut);
    m.aHi = at(as, 1 - DOMAIN_QUANTILE);
    m.cHi = at(cs, 1 - DOMAIN_QUANTILE);
    // The strike pre-test's domain: the full range of every training ray, struck ones included.
    for (const r of m.struckRays) {
      this.setInput(m, r.x, r.y, r.dx, r.dy, r.U);
      es.push(inp.e);
      as.push(inp.a);
      cs.push(inp.c);
    }
    m.eLoStrike = Math.min(...es);
    m.eHiStrike = Math.min(Math.max(...es), m.eCut);
    m.aHiStrike = Math.max(...as);
    m.cHiStrike = Math.max(...cs);
  }

  private fit(m: SpeciesMap): void {
    if (m.whole.state === State.DIRECT) {
      // After retraining: the candidate splits by energy, in the first fit's normalisation and domain.
      this.sortStruck(m);
      this.fitBack(m);
      // One exit position and direction fit over the whole domain for every piece: on the rays clear
      // of the aperture it holds to ~1e-6 rad where the time needs pieces, and it saves nine fits.
      const lin = new PolyFit();
      this.fitPoly(m, lin, this.belowCut(m, m.rays), 'linear');
      this.restartStrikes(m, lin);
      m.struckRays.length = 0;
      const tops = m.eCutLow < m.eHi ? [m.eHi, m.eCutLow] : [m.eHi];
      m.partitions = tops.flatMap((top) => PIECE_COUNTS.map((count) => this.fitPartition(m, count, lin, top))).filter((part) => part !== null);
      m.innerEs = m.rays.map((r) => (this.setInput(m, r.x, r.y, r.dx, r.dy, r.U), this.inp.eg)).filter((e) => e >= m.eLo && e <= m.eHi);
      if (m.partitions.length === 0) {
        m.rays.length = 0;
        return this.giveUp(m, `${m.whole.note}; too few training rays for energy pieces`);
      }
      m.state = State.VALIDATING;
      return;
    }
    const rays = m.rays;
    const n = rays.length;
    if (n < 2 * TIME_TERMS) {
      m.rays.length = 0;
      return this.giveUp(m, `too few training rays came back out of the mirror (${n})`);
    }
    let uLo = Infinity;
    let uHi = -Infinity;
    let pd = 0;
    let dd = 0;
    for (const r of rays) {
      uLo = Math.min(uLo, r.U);
      uHi = Math.max(uHi, r.U);
      pd += r.x * r.dx + r.y * r.dy;
      dd += r.dx * r.dx + r.dy * r.dy;
    }
    m.virtualSource_m = dd > 0 ? pd / dd : 0;
    let r2 = 0;
    let d2 = 0;
    for (const r of rays) {
      r2 = Math.max(r2, (r.x - m.virtualSource_m * r.dx) ** 2 + (r.y - m.virtualSource_m * r.dy) ** 2);
      d2 = Math.max(d2, r.dx * r.dx + r.dy * r.dy);
    }
    m.uMid = 0.5 * (uLo + uHi);
    m.uHalf = uHi > uLo ? 0.5 * (uHi - uLo) : Math.max(1e-9 * Math.abs(m.uMid), 1e-12);
    m.rMax = r2 > 0 ? Math.sqrt(r2) : 1e-9;
    m.dMax = d2 > 0 ? Math.sqrt(d2) : 1e-12;
    // The time's kink below the back plate (KINK_MIN): the longest time well below the highest energy.
    let tPeak = -Infinity;
    let uPeak = uHi;
    for (const r of rays) {
      if (r.scaledTime > tPeak) {
        tPeak = r.scaledTime;
        uPeak = r.U;
      }
    }
    if (uHi - uPeak > KINK_MIN * (uHi - uLo)) {
      m.eCut = (uPeak - (uHi - uPeak) - m.uMid) / m.uHalf;
      m.eCutLow = (uPeak - KINK_LOWER * (uHi - uPeak) - m.uMid) / m.uHalf;
    }
    this.sortStruck(m);
    this.fitBack(m);
    const fitRays = this.belowCut(m, rays);
    if (fitRays.length < 2 * TIME_TERMS) {
      m.rays.length = 0;
      return this.giveUp(m, `too few training rays came back out of the mirror below the time's kink (${fitRays.length})`);
    }
    this.fitPoly(m, m.whole, fitRays);
    this.setDomain(m);
    m.state = State.VALIDATING;
    // The pre-test against the training rays: none that came back may be predicted struck (a check
    // on rays the fit saw), and each struck one predicted struck is a held-out check.
    for (const r of m.rays) if (this.predictsStrike(m, r.x, r.y, r.dx, r.dy, r.U)) this.refuseStrikes(m, 'a training ray predicted to strike the entrance electrode came back out');
    for (const r of m.struckRays) if (this.predictsStrike(m, r.x, r.y, r.dx, r.dy, r.U)) this.checkStrike(m, true, r.scaledTime, this.strikeScaledTime);
    m.struckRays.length = 0; // the rays that came back stay, for the pieces should the whole map be refused
  }

  /** The rays below the species' energy cut (all of them where it has none). */
  private belowCut(m: SpeciesMap, rays: readonly Ray[]): Ray[] {
    if (m.eCut === Infinity) return rays.slice();
    return rays.filter((r) => (r.U - m.uMid) / m.uHalf <= m.eCut);
  }

  /** Map `f` fitted (least squares) to `rays`, in its local energy variable. */
  private fitPoly(m: SpeciesMap, f: PolyFit, rays: readonly Ray[], parts: 'both' | 'time' | 'linear' = 'both'): void {
    const n = rays.length;
    const A = new Float64Array(n * TIME_TERMS);
    const rhs = new Float64Array(n);
    // Exit position and direction from the rays clear of the aperture's edge only (where the map
    // is used): the few that graze it bend steeply and, fitted with the rest, spoiled the exit
    // direction everywhere (FINE rays of the demo at 5620 V: 5e-5 rms against 1.5e-6).
    const clear = rays.filter((r) => this.clearOfAperture(r));
    const nc = clear.length >= 2 * LINEAR_TERMS ? clear.length : 0;
    const linRays = nc > 0 ? clear : rays;
    const nl = linRays.length;
    const A2 = new Float64Array(2 * nl * 2 * LINEAR_TERMS);
    const pos = new Float64Array(2 * nl);
    const dir = new Float64Array(2 * nl);
    let timeScale = 0;
    for (const r of rays) timeScale += r.scaledTime / n;
    const inp = this.inp;
    const timeRow = this.timeRow;
    const linRow = this.linRow;
    if (parts !== 'linear') {
      rays.forEach((r, i) => {
        this.setInput(m, r.x, r.y, r.dx, r.dy, r.U);
        this.localizeTime(f);
        basis(TIME_BASIS, inp, timeRow);
        A.set(timeRow, i * TIME_TERMS);
        rhs[i] = r.scaledTime / timeScale - 1; // fit the variation about the mean, for precision
      });
      const timeCoef = solveLeastSquares(A, n, TIME_TERMS, rhs, 1e-6);
      for (let k = 0; k < TIME_TERMS; k++) timeCoef[k] *= timeScale;
      timeCoef[0] += timeScale; // the basis' first term is the constant 1
      f.timeCoef = timeCoef;
    }
    if (parts === 'time') return;
    linRays.forEach((r, i) => {
      this.setInput(m, r.x, r.y, r.dx, r.dy, r.U);
      this.localizeLinear(f);
      basis(LINEAR_BASIS, inp, linRow);
      // Exit (x, y) = A·g + B·h: two rows per ray, g's coefficients then h's.
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
    [f.posCoef, f.dirCoef] = solveLeastSquaresMany(A2, 2 * nl, 2 * LINEAR_TERMS, [pos, dir], 1e-6);
  }

  /** A traced ray whose entry line and exit line both pass the entrance aperture within APERTURE_MARGIN of its radius (any ray without an aperture). */
  private clearOfAperture(r: Ray): boolean {
    const ap = this.aperture;
    if (ap === null) return true;
    const limit = APERTURE_MARGIN * ap.radius_m;
    const depth = ap.farZ_m - this.mirror.region.entryZ_m;
    const sIn = depth / Math.sqrt(Math.max(1 - r.dx * r.dx - r.dy * r.dy, 1e-12));
    const sOut = depth / Math.sqrt(Math.max(1 - r.dxOut * r.dxOut - r.dyOut * r.dyOut, 1e-12));
    return (r.x + r.dx * sIn) ** 2 + (r.y + r.dy * sIn) ** 2 <= limit * limit && (r.xOut - r.dxOut * sOut) ** 2 + (r.yOut - r.dyOut * sOut) ** 2 <= limit * limit;
  }

  /**
   * `count` pieces split at the training rays' energy quantiles inside the domain, each fitted to
   * the training rays within it and PIECE_OVERLAP of its width beyond; null when a piece would
   * have fewer than twice the time basis' terms.
   */
  private fitPartition(m: SpeciesMap, count: number, lin: PolyFit, top: number): Partition | null {
    const inp = this.inp;
    const es = m.rays.map((r) => (this.setInput(m, r.x, r.y, r.dx, r.dy, r.U), inp.eg));
    const inner = es.filter((e) => e >= m.eLo && e <= top).sort((p, q) => p - q);
    if (inner.length === 0) return null;
    const splits = Array.from({ length: count - 1 }, (_, k) => inner[Math.round(((k + 1) * (inner.length - 1)) / count)]);
    const edges = [m.eLo, ...splits, top];
    const pieces: PolyFit[] = [];
    for (let k = 0; k < count; k++) {
      const width = edges[k + 1] - edges[k];
      const lo = edges[k] - PIECE_OVERLAP * width;
      const hi = edges[k + 1] + PIECE_OVERLAP * width;
      const rays = m.rays.filter((_, i) => es[i] >= lo && es[i] <= hi && es[i] <= (top < m.eHi ? top : m.eCut));
      if (!(width > 0) || rays.length < 2 * TIME_TERMS) return null;
      const f = new PolyFit();
      f.eMid = 0.5 * (lo + hi);
      f.eHalf = 0.5 * (hi - lo);
      this.fitPoly(m, f, rays, 'time');
      f.posCoef = lin.posCoef;
      f.dirCoef = lin.dirCoef;
      pieces.push(f);
    }
    return new Partition(splits, pieces, top);
  }

  /** Scaled time of map `f` at the current input (localised to f by inDomain). */
  private scaledTime(f: PolyFit): number {
    this.localizeTime(f);
    const timeRow = this.timeRow;
    basis(TIME_BASIS, this.inp, timeRow);
    let t = 0;
    for (let k = 0; k < TIME_TERMS; k++) t += f.timeCoef[k] * timeRow[k];
    return t;
  }

  /** A·g + B·h at the current input (linear basis in linRow), in metres (positions) or direction cosines, into `out`. */
  private transverseOut(coef: Float64Array, out: Float64Array): void {
    const linRow = this.linRow;
    const inp = this.inp;
    let g = 0;
    let h = 0;
    for (let k = 0; k < LINEAR_TERMS; k++) {
      g += coef[k] * linRow[k];
      h += coef[LINEAR_TERMS + k] * linRow[k];
    }
    out[0] = inp.px * g + inp.dx * h;
    out[1] = inp.py * g + inp.dy * h;
  }

  /** The map at the current input (set by inDomain, which also left the exit state in out2, dir2). */
  private applyMap(f: PolyFit, st: IonState, k: number, speed: number, tLimit_s: number): boolean {
    const region = this.mirror.region;
    const ion = this.ion;
    const sample = this.sample;
    const out2 = this.out2;
    const dir2 = this.dir2;
    const x = ion.x;
    const y = ion.y;
    ion.t = st.t + this.scaledTime(f) / Math.sqrt(k);
    const xOut = out2[0];
    const yOut = out2[1];
    // Exit speed from energy conservation between the entry and exit points on the entry plane.
    sampleField(region.map, Math.sqrt(x * x + y * y), region.entryZ_m, sample);
    const phiIn = sample.potential_V;
    sampleField(region.map, Math.sqrt(xOut * xOut + yOut * yOut), region.entryZ_m, sample);
    const speedOut = Math.sqrt(speed * speed + 2 * k * (phiIn - sample.potential_V));
    ion.x = xOut;
    ion.y = yOut;
    ion.z = region.entryZ_m;
    ion.vx = speedOut * dir2[0];
    ion.vy = speedOut * dir2[1];
    ion.vz = -Math.sqrt(Math.max(speedOut * speedOut - ion.vx * ion.vx - ion.vy * ion.vy, 0));
    return finish(st, ion, ion.t <= tLimit_s ? Exit.ENTRY : Exit.PAUSED);
  }
}

/** The ion left the mirror (or did not), as the traced kernel (solvedKernels.crossSolvedMirror) reports it. */
function finish(st: IonState, ion: SolvedIonState, exit: RegionExit): boolean {
  st.t = ion.t;
  leftSolvedRegion(st, ion);
  switch (exit) {
    case Exit.ENTRY:
      st.v = -ion.vz;
      return true;
    case Fate.STRUCK_ELECTRODE:
      st.fate = Fate.STRUCK_ELECTRODE;
      return false;
    case Exit.FAR:
      st.fate = Fate.PASSED_THROUGH_MIRROR;
      return false;
    case Fate.INTEGRATION_FAILED:
      st.fate = Fate.INTEGRATION_FAILED;
      return false;
    default:
      st.fate = Fate.TIMED_OUT;
      return false;
  }
}

/** One line per species for the text report: how its ions crossed the solved mirror. */
export function formatMirrorMap(report: MirrorMapReport): string {
  const lines = report.species.map((s) => {
    // A species whose ions ran out before its map was decided (training or validation) has no note and no validation figures.
    const how = s.note !== '' ? `traced directly: ${s.note}` : s.validationTimeRms === null ? 'traced directly: too few ions to decide the transfer map' : s.pieces.length > 0 ? 'transfer map validated on energy pieces' : 'transfer map validated';
    const rms = s.validationTimeRms === null ? '' : `, validation rms time ${s.validationTimeRms.toExponential(1)}`;
    const strikes = s.struckByMap > 0 ? `; ${s.struckByMap} of the mapped taken as struck on the entrance electrode by the strike pre-test, ${s.strikeChecks} traced checks` : s.strikeNote !== '' ? `; strike pre-test not used: ${s.strikeNote}` : '';
    const pieces = s.pieces.length === 0 ? '' : `; the whole-domain map refused, by energy: ${s.pieces.map((p) => `${p.uFrom_V.toFixed(0)}–${p.uTo_V.toFixed(0)} V ${p.note === '' ? 'mapped' : `traced (${p.note})`}`).join(', ')}`;
    const back = s.struckBackByMap > 0 ? `; ${s.struckBackByMap} of the mapped taken as struck on the back plate by its pre-test, ${s.backChecks} traced checks` : s.backNote !== '' ? `; back-plate pre-test not used: ${s.backNote}` : '';
    return `  q/m ${s.qOverM_C_per_kg.toPrecision(6)} C/kg: ${s.mapped} ions mapped, ${s.traced} traced (${how}${rms}${pieces}${strikes}${back})`;
  });
  const struck =
    (report.struckByMap > 0 ? ` (${report.struckByMap} of them taken as struck on the entrance electrode by its strike pre-test)` : '') +
    (report.struckBackByMap > 0 ? ` (${report.struckBackByMap} of them taken as struck on the back plate by its pre-test)` : '');
  return `Solved mirror: ${report.mapped} ions by the transfer map${struck}, ${report.traced} traced through the field\n${lines.join('\n')}\n`;
}
