/**
 * Region crossings by numerical integration along the axis, for fields without a closed form:
 * source stages whose potentials change while the ions cross them, non-uniform (polynomial)
 * mirrors, and, on request, every other region as a cross-check of the closed forms. One adaptive
 * DOP853 solve per region visit, with the region's two bounding planes as terminal events located
 * on the dense output. Each `AxialIntegrator` owns its force, workspace and result (the driver
 * creates one per call), so the per-ion loop allocates nothing and no state is shared between calls.
 */
import type { PolynomialProfile, SourceModel } from '../analyser';
import { Exit, Fate, type RegionExit } from '../fates';
import {
  AXIAL_HIGH,
  AXIAL_TURN,
  DOP853,
  createResult,
  createRootReport,
  createSolveOptions,
  createWorkspace,
  evaluateDenseOutput,
  findRootBrent,
  solveAxial,
  type AxialForce,
  type RungeKuttaWorkspace,
  type ScalarFunction,
  type SolveOptions,
} from '../integrator';
import { planePotential_V } from '../waveforms';
import type { TraceCounters } from './contract';

/** Which force law the right-hand side applies. */
const Law = {
  /** Constant acceleration `a`. */
  Uniform: 0,
  /** Uniform field between two source planes whose potentials depend on time. */
  SourceStage: 1,
  /** Field −dV/dx of a polynomial mirror profile. */
  Polynomial: 2,
} as const;
type Law = (typeof Law)[keyof typeof Law];

const RISE_STEP = 0;
const RISE_LINEAR = 1;
const RISE_EXPONENTIAL = 2;
const RISE_TABLE = 3;

/** The force of the region being crossed; one instance per integrator, reconfigured per crossing. */
class RegionForce implements AxialForce {
  law: Law = Law.Uniform;
  /** For source stages with a ramp or exponential rise: acceleration held, after the rise, and the rise shape. */
  aHold = 0;
  aFinal = 0;
  delay_s = 0;
  /**
   * The crossing started before the switch, so it ends at it (nextBreakpoint_s): every evaluation,
   * including a Runge–Kutta stage placed exactly at the switch time, takes the hold value (the left
   * limit of a step), never the value after the step.
   */
  beforeSwitch = false;
  riseKind = RISE_STEP;
  riseTime_s = 1;
  /** 1/riseTime_s, so the exponential multiplies instead of dividing. */
  inverseRiseTime_per_s = 1;
  /** Signed charge-to-mass ratio (C/kg). */
  qOverM = 0;
  a = 0;
  source: SourceModel | null = null;
  stage = 0;
  gap_m = 1;
  profile: PolynomialProfile | null = null;
  lo = 0;
  hi = 1;

  get uniformInSpace(): boolean {
    return this.law !== Law.Polynomial;
  }

  acceleration(t: number, x: number): number {
    switch (this.law) {
      case Law.Uniform:
        return this.a;
      case Law.SourceStage:
        return this.sourceStage(t);
      default:
        return this.polynomial(x);
    }
  }

  private sourceStage(t: number): number {
    // The stage field is uniform, so only the potential difference matters: for the analytic rises
    // the acceleration itself follows the rise shape (one exponential per evaluation, not two).
    if ((t < this.delay_s || this.beforeSwitch) && this.riseKind !== RISE_TABLE) return this.aHold;
    switch (this.riseKind) {
      case RISE_STEP:
        return this.aFinal;
      case RISE_LINEAR: {
        const s = t - this.delay_s;
        return s >= this.riseTime_s ? this.aFinal : this.aHold + ((this.aFinal - this.aHold) * s) / this.riseTime_s;
      }
      case RISE_EXPONENTIAL:
        // 1 − e^{−s/τ} with exp rather than expm1: faster, and its absolute error (~1e-16·Δa) is negligible.
        return this.aFinal - (this.aFinal - this.aHold) * Math.exp((this.delay_s - t) * this.inverseRiseTime_per_s);
      default: {
        const src = this.source!;
        return (this.qOverM * (planePotential_V(src, this.stage, t) - planePotential_V(src, this.stage + 1, t))) / this.gap_m;
      }
    }
  }

  private polynomial(x: number): number {
    // dV/dx = Σ k·c_k·x^(k−1)/depth^k, Horner in u = x/depth.
    const p = this.profile!;
    const coeffs = p.coefficients_V;
    const u = x / p.depth_m;
    let dV = 0;
    for (let k = coeffs.length; k >= 1; k--) dV = dV * u + k * coeffs[k - 1];
    return (-this.qOverM * dV) / p.depth_m;
  }
}

/** Position along the last step's interpolant minus a plane, for locating a crossing missed inside a step. */
class PlaneOnInterpolant implements ScalarFunction {
  plane = 0;
  readonly y = new Float64Array(2);
  constructor(private readonly workspace: RungeKuttaWorkspace) {}
  evaluate(t: number): number {
    return evaluateDenseOutput(this.workspace, t, this.y)[0] - this.plane;
  }
}

/** Ion state read before and written after a crossing. */
export interface NumericState {
  t: number;
  z: number;
  v: number;
}

/**
 * Tolerances, measured: `precise` (relative 1e-10) keeps the integrated crossings of static regions
 * within ~1e-13 of the closed form on the shipped presets (the forced-integrator cross-check) and is
 * used for non-uniform mirrors; `pulse` (relative 1e-7) is used for source stages whose potentials
 * rise while the ions cross them, where it keeps benchmark B2's flight times within 8e-12 of the
 * independent reference (1e-8 gives 1.3e-12 at ~35 % more cost).
 */
function preciseOptions(): SolveOptions {
  return createSolveOptions({ rtol: 1e-10, atol: Float64Array.of(1e-16, 1e-11), maxSteps: 200_000 });
}
function pulseOptions(): SolveOptions {
  return createSolveOptions({ rtol: 1e-7, atol: Float64Array.of(1e-16, 1e-11), maxSteps: 200_000 });
}

/** Number of force laws: the length of the first-step memory. */
const FORCE_LAWS = 3;

export class AxialIntegrator {
  private readonly force = new RegionForce();
  // Made on first use: a flight builds an integrator whether or not an ion needs one, and single-ion
  // callers (the focus analysis) build many flights of all-closed-form models.
  private workspaceMade: RungeKuttaWorkspace | null = null;
  private probeMade: PlaneOnInterpolant | null = null;
  private readonly result = createResult(2, 4);
  private readonly precise = preciseOptions();
  private readonly pulse = pulseOptions();
  private options = this.precise;
  private readonly rootReport = createRootReport();

  /**
   * First step of the previous solve of each force law: successive ions are alike, so it is a good
   * start for the next one. It belongs to this integrator (one per driver call), so a run's
   * numbers do not depend on what the process traced before.
   */
  private readonly lastFirstStep = new Float64Array(FORCE_LAWS);

  private get workspace(): RungeKuttaWorkspace {
    return (this.workspaceMade ??= createWorkspace(DOP853, 2));
  }

  private get planeProbe(): PlaneOnInterpolant {
    return (this.probeMade ??= new PlaneOnInterpolant(this.workspace));
  }

  /** @param counters where the effort is summed (none when null) */
  constructor(public counters: TraceCounters | null = null) {}

  /** Start without a first-step memory, as a fresh integrator does (for single ions traced one by one). */
  forgetFirstSteps(): void {
    this.lastFirstStep.fill(0);
  }

  private run(st: NumericState, tEnd: number): RegionExit {
    const ctx = this.force;
    const options = this.options;
    const result = this.result;
    while (true) {
      options.firstStep = Math.min(this.lastFirstStep[ctx.law], Math.abs(tEnd - st.t));
      solveAxial(this.workspace, ctx, st.t, st.z, st.v, tEnd, ctx.lo, ctx.hi, options, result);
      if (result.firstStep > 0) this.lastFirstStep[ctx.law] = result.firstStep;
      const counters = this.counters;
      if (counters !== null) {
        counters.axialSteps += result.steps;
        counters.axialEvaluations += result.rhsEvaluations;
      }
      st.t = result.t;
      st.z = result.y[0];
      st.v = result.y[1];
      if (result.status === 'failed') {
        if (counters !== null) counters.lastMessage = result.message;
        return Fate.INTEGRATION_FAILED;
      }
      if (result.status !== 'event') return Exit.PAUSED;
      if (result.terminalEvent === AXIAL_TURN) {
        if (st.z > ctx.hi) return this.crossingInLastStep(st, ctx.hi, Exit.FAR);
        if (st.z < ctx.lo) return this.crossingInLastStep(st, ctx.lo, Exit.ENTRY);
        st.v = 0; // exactly at rest at the turning point, so the restart does not see the same turn again
        continue;
      }
      // Snap onto the plane it crossed so that rounding never leaves it a hair inside.
      const high = result.terminalEvent === AXIAL_HIGH;
      st.z = high ? ctx.hi : ctx.lo;
      return high ? Exit.FAR : Exit.ENTRY;
    }
  }

  /** The ion passed `plane` and turned back within the last step: locate the first passage on its interpolant. */
  private crossingInLastStep(st: NumericState, plane: number, exit: RegionExit): RegionExit {
    const probe = this.planeProbe;
    probe.plane = plane;
    const tOld = this.workspace.tOld;
    const gOld = probe.evaluate(tOld);
    const gTurn = st.z - plane;
    const root = findRootBrent(probe, tOld, st.t, gOld, gTurn, Number.EPSILON * Math.abs(st.t - tOld), 100, this.rootReport);
    evaluateDenseOutput(this.workspace, root, probe.y);
    st.t = root;
    st.z = plane;
    st.v = probe.y[1];
    return exit;
  }

  /** Cross [lo, hi] with constant acceleration a (used when the integrator is forced everywhere). */
  crossUniform(st: NumericState, a: number, lo: number, hi: number, tEnd: number): RegionExit {
    this.options = this.precise;
    const ctx = this.force;
    ctx.law = Law.Uniform;
    ctx.a = a;
    ctx.lo = lo;
    ctx.hi = hi;
    return this.run(st, tEnd);
  }

  /** Cross source stage `stage` (absolute z between its planes) under time-dependent potentials. */
  crossSourceStage(st: NumericState, source: SourceModel, qOverM: number, stage: number, lo: number, hi: number, tEnd: number, crossCheck: boolean): RegionExit {
    this.options = crossCheck ? this.precise : this.pulse;
    const ctx = this.force;
    ctx.law = Law.SourceStage;
    ctx.qOverM = qOverM;
    ctx.source = source;
    ctx.stage = stage;
    ctx.gap_m = hi - lo;
    const near = source.planes[stage];
    const far = source.planes[stage + 1];
    ctx.aHold = (qOverM * (near.hold_V - far.hold_V)) / ctx.gap_m;
    ctx.aFinal = (qOverM * (near.final_V - far.final_V)) / ctx.gap_m;
    ctx.delay_s = source.delay_s;
    ctx.beforeSwitch = st.t < source.delay_s;
    const rise = source.rise;
    ctx.riseKind = rise.kind === 'step' ? RISE_STEP : rise.kind === 'linear' ? RISE_LINEAR : rise.kind === 'exponential' ? RISE_EXPONENTIAL : RISE_TABLE;
    ctx.riseTime_s = rise.kind === 'linear' ? rise.riseTime_s : rise.kind === 'exponential' ? rise.timeConstant_s : 1;
    ctx.inverseRiseTime_per_s = 1 / ctx.riseTime_s;
    ctx.lo = lo;
    ctx.hi = hi;
    return this.run(st, tEnd);
  }

  /** Inside a polynomial-profile mirror: x from the entrance grid (0) to the back plate (depth). */
  crossProfile(st: NumericState, profile: PolynomialProfile, qOverM: number, tEnd: number): RegionExit {
    this.options = this.precise;
    const ctx = this.force;
    ctx.law = Law.Polynomial;
    ctx.qOverM = qOverM;
    ctx.profile = profile;
    ctx.lo = 0;
    ctx.hi = profile.depth_m;
    return this.run(st, tEnd);
  }
}
