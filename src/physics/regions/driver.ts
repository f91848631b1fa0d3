/**
 * The one ensemble driver and the kernel choice. `createFlight` picks one kernel per section of the
 * model (closed form where the field allows it; integration where it does not, or everywhere when
 * the model forces the integrator; 3-D tracing through solved fields, by the run's transfer map
 * where the model asks for one) and flies single ions from any section; `traceEnsemble` flies an
 * ensemble, over blocks of ions region by region (blockDriver.ts) when every region is closed-form
 * and no observer wants the paths, else ion by ion. All scratch (motion, integrator workspaces,
 * transfer map) belongs to the call.
 */
import type { Ensemble, TraceResult } from '../../ions/ensemble';
import { hasSolvedRegion, needsIntegrator, type AnalyserModel } from '../analyser';
import { Exit, Fate, type FateCode } from '../fates';
import { MAP_MIN_IONS, SolvedMirrorMapper, type MirrorMapReport } from '../solvedMirrorMap';
import { SOURCE_MAP_MIN_IONS, SolvedSourceMapper, type SourceMapReport } from '../solvedSourceMap';
import { AxialIntegrator } from './axialIntegrator';
import { createBlockScratch, traceSpeciesBlocks } from './blockDriver';
import {
  SECTION_COUNT,
  Section,
  createIonState,
  startIonState,
  transverseXAt,
  transverseYAt,
  type Flight,
  type FlightOptions,
  type IonState,
  type RegionKernel,
  type SectionCode,
  type SegmentObserver,
  type TraceEnsemble,
  type TraceOptions,
} from './contract';
import { chargeToMassIn, createFlightPlan, prepareFlightPlan, type FlightPlan } from './plan';
import { ProfileMirrorKernel } from './profileMirror';
import { NumericFieldFreeKernel, NumericPostGapKernel, NumericStageMirrorKernel } from './numericRegion';
import { SolvedMirrorKernel, SolvedSourceKernel, type MirrorMap, type SourceMap } from './solvedKernels';
import { SolvedFieldTracer } from './solvedTracer';
import { FieldFreeKernel, PostGapKernel, PulsedSourceKernel, StageMirrorKernel, StaticSourceKernel } from './uniformStages';

/** Options of createFlight beyond the contract's: whether a transfer map may be used (default: as the model asks). */
export interface FlightChoice extends FlightOptions {
  readonly transferMap?: boolean;
  /** A caller's own pass through the solved mirror in place of the run's map (a reference trace in tests and benchmarks). */
  readonly mirrorMap?: MirrorMap;
  /** Told, after an ensemble, how the run's transfer map crossed the solved mirror (ions mapped and traced, and why not). */
  readonly onMirrorMap?: (report: MirrorMapReport) => void;
  /** A caller's own crossing of the solved source in place of the run's map (a reference trace in tests and benchmarks). */
  readonly sourceMap?: SourceMap;
  /** Told, after an ensemble, how the run's transfer map crossed the solved source (ions mapped and traced, and why). */
  readonly onSourceMap?: (report: SourceMapReport) => void;
}

/** The run's transfer map of a solved source (src/physics/solvedSourceMap.ts), or null to trace every ion directly. */
function sourceMapFor(model: AnalyserModel, ions: number | undefined, allowed: boolean, tracer: SolvedFieldTracer): SolvedSourceMapper | null {
  const solved = model.source.solved;
  if (!allowed || !solved || model.forceIntegrator || model.mapSolvedSource === false || ions === undefined || ions < SOURCE_MAP_MIN_IONS) return null;
  return new SolvedSourceMapper(solved, tracer);
}

/** The run's transfer map of a solved mirror (tracing on the run's tracer where it does not hold), or null to trace every ion directly. */
function transferMapFor(model: AnalyserModel, ions: number | undefined, allowed: boolean, tracer: SolvedFieldTracer): SolvedMirrorMapper | null {
  const solved = model.mirror?.solved;
  if (!allowed || !solved || !usesTransferMap(model, ions)) return null;
  return new SolvedMirrorMapper(solved, tracer, model.mirror?.returnLength_m ?? 0);
}

/** True when a run of `ions` ions through `model` crosses its solved mirror by a transfer map (a run split over workers must then share one map). */
export function usesTransferMap(model: AnalyserModel, ions: number | undefined): boolean {
  return model.mirror?.solved !== undefined && !model.forceIntegrator && model.mapSolvedMirror !== false && ions !== undefined && ions >= MAP_MIN_IONS;
}

/** One kernel per section present in the model. */
function chooseKernels(model: AnalyserModel, integrator: AxialIntegrator, tracer: SolvedFieldTracer, map: MirrorMap | null, sourceMap: SourceMap | null = null): (RegionKernel | null)[] {
  const kernels: (RegionKernel | null)[] = new Array<RegionKernel | null>(SECTION_COUNT).fill(null);
  const forced = model.forceIntegrator;
  const tLimit = model.maxFlightTime_s;
  const src = model.source;
  if (src.solved) kernels[Section.SOURCE] = new SolvedSourceKernel(src.solved, tLimit, tracer, sourceMap);
  else if (forced || src.rise.kind !== 'step') kernels[Section.SOURCE] = new PulsedSourceKernel(model, integrator);
  else kernels[Section.SOURCE] = new StaticSourceKernel();
  kernels[Section.DRIFT] = forced ? new NumericFieldFreeKernel(Section.DRIFT, integrator, tLimit) : new FieldFreeKernel(Section.DRIFT);
  const mirror = model.mirror;
  if (mirror) {
    if (mirror.solved) kernels[Section.MIRROR] = new SolvedMirrorKernel(mirror.solved, tLimit, tracer, map);
    else if (mirror.profile) kernels[Section.MIRROR] = new ProfileMirrorKernel(mirror.profile, mirror.entranceGridTransmission, integrator, tLimit);
    else kernels[Section.MIRROR] = forced ? new NumericStageMirrorKernel(integrator, tLimit) : new StageMirrorKernel();
    kernels[Section.RETURN] = forced ? new NumericFieldFreeKernel(Section.RETURN, integrator, tLimit) : new FieldFreeKernel(Section.RETURN);
  }
  if (model.postAcceleration) kernels[Section.POST] = forced ? new NumericPostGapKernel(integrator, tLimit) : new PostGapKernel();
  return kernels;
}

export class ModelFlight implements Flight {
  readonly plan = createFlightPlan();
  readonly kernels: readonly (RegionKernel | null)[];
  /** The run's transfer map, when one is used. */
  readonly map: SolvedMirrorMapper | null;
  /** The run's transfer map of a solved source, when one is used (the driver hands it each species' ions). */
  readonly sourceMap: SolvedSourceMapper | null;
  private readonly integrator: AxialIntegrator;
  private qOverM = NaN;

  constructor(
    readonly model: AnalyserModel,
    options: FlightChoice,
  ) {
    const counters = options.counters ?? null;
    const integrator = new AxialIntegrator(counters);
    const tracer = new SolvedFieldTracer(counters);
    this.integrator = integrator;
    this.map = options.mirrorMap ? null : transferMapFor(model, options.ions, options.transferMap !== false, tracer);
    this.sourceMap = options.sourceMap ? null : sourceMapFor(model, options.ions, options.transferMap !== false, tracer);
    this.kernels = chooseKernels(model, integrator, tracer, options.mirrorMap ?? this.map, options.sourceMap ?? this.sourceMap);
  }

  /** Forget the integrator's first steps, so the next ion's numbers depend on it alone. */
  forgetFirstSteps(): void {
    this.integrator.forgetFirstSteps();
  }

  setChargeToMass(qOverM_C_per_kg: number): void {
    if (qOverM_C_per_kg === this.qOverM) return;
    prepareFlightPlan(this.plan, this.model, qOverM_C_per_kg);
    this.qOverM = qOverM_C_per_kg;
  }

  setMz(mz: number): void {
    this.setChargeToMass(chargeToMassIn(this.model, mz));
  }

  fly(st: IonState, start: SectionCode = Section.SOURCE, observer: SegmentObserver | null = null): FateCode {
    return flySections(this.kernels, st, this.plan, start, this.model.maxFlightTime_s, observer);
  }
}

/**
 * The walk of one ion through the sections from `start`: each present section's kernel in flight
 * order (z = 0 at each section entered), then the fate: detected when it got through them all;
 * a time beyond the limit is "timed out" at the limit.
 */
export function flySections(
  kernels: readonly (RegionKernel | null)[],
  st: IonState,
  plan: FlightPlan,
  start: SectionCode,
  tLimit_s: number,
  observer: SegmentObserver | null,
): FateCode {
  // One call site per section (not one in a loop), with the kernels in locals: each site then sees
  // one or two kernel classes and the JIT inlines the crossing; a loop over the array measured ~35 %
  // slower ion by ion on an all-closed-form model.
  const source = kernels[0];
  const drift = kernels[1];
  const mirror = kernels[2];
  const returnLeg = kernels[3];
  const post = kernels[4];
  let alive = true;
  if (start === 0 && source !== null) {
    if (observer !== null) enterSection(observer, 0, st);
    alive = source.cross(st, plan, observer) === FAR;
  }
  if (alive && start <= 1 && drift !== null) {
    if (start !== 1) st.z = 0;
    if (observer !== null) enterSection(observer, 1, st);
    alive = drift.cross(st, plan, observer) === FAR;
  }
  if (alive && start <= 2 && mirror !== null) {
    if (start !== 2) st.z = 0;
    if (observer !== null) enterSection(observer, 2, st);
    alive = mirror.cross(st, plan, observer) === FAR;
  }
  if (alive && start <= 3 && returnLeg !== null) {
    if (start !== 3) st.z = 0;
    if (observer !== null) enterSection(observer, 3, st);
    alive = returnLeg.cross(st, plan, observer) === FAR;
  }
  if (alive && post !== null) {
    if (start !== 4) st.z = 0;
    if (observer !== null) enterSection(observer, 4, st);
    alive = post.cross(st, plan, observer) === FAR;
  }
  if (alive) st.fate = DETECTED;
  if (st.fate === TIMED_OUT || !(st.t <= tLimit_s)) {
    st.fate = TIMED_OUT;
    st.t = tLimit_s;
  }
  if (!Number.isFinite(st.v)) st.v = 0;
  return st.fate as FateCode;
}

// The codes flySections compares with, as plain constants (the section codes are written as
// numbers there: SOURCE 0, DRIFT 1, MIRROR 2, RETURN 3, POST 4).
const FAR = Exit.FAR;
const DETECTED = Fate.DETECTED;
const TIMED_OUT = Fate.TIMED_OUT;

function enterSection(observer: SegmentObserver, section: SectionCode, st: IonState): void {
  if (observer.enter) observer.enter(section, st);
}

export function createFlight(model: AnalyserModel, options: FlightChoice = {}): ModelFlight {
  return new ModelFlight(model, options);
}

/** Reset the axial state only (the transverse reference stays zero: no solved region reads it). */
function startAxial(st: IonState, z0: number, v0: number): void {
  st.t = 0;
  st.z = z0;
  st.v = v0;
  st.fate = Fate.UNSET;
  st.w = 1;
}

/** True when the driver takes the block path: every region closed-form, no solved field, no observer. */
function blockPath(model: AnalyserModel, options: TraceOptions): boolean {
  return (options.engine ?? 'auto') === 'auto' && !needsIntegrator(model) && !hasSolvedRegion(model) && (options.observer ?? null) === null;
}

/**
 * The one ensemble driver (signature in contract.ts): ions [from, to) of `ensemble` through `model`
 * into `out`.
 */
export function traceEnsemble(model: AnalyserModel, ensemble: Ensemble, out: TraceResult, options: TraceOptions & FlightChoice = {}): void {
  const from = options.from ?? 0;
  const to = options.to ?? ensemble.count;
  if (blockPath(model, options)) {
    const plan = createFlightPlan();
    const scratch = createBlockScratch();
    for (let s = 0; s < ensemble.species.length; s++) {
      const a = Math.max(from, ensemble.speciesStart[s]);
      const b = Math.min(to, ensemble.speciesStart[s + 1]);
      if (a >= b) continue;
      prepareFlightPlan(plan, model, chargeToMassIn(model, ensemble.species[s].mz));
      traceSpeciesBlocks(plan, ensemble, out, a, b, scratch);
    }
    return;
  }
  const flight = createFlight(model, { ...options, ions: options.ions ?? to - from });
  const kernels = flight.kernels;
  const plan = flight.plan;
  const tLimit = model.maxFlightTime_s;
  const observer = options.observer ?? null;
  const st = createIonState();
  // Solved regions bend transverse paths: the detector-plane position comes from where the ion left them.
  const solved = hasSolvedRegion(model);
  for (let s = 0; s < ensemble.species.length; s++) {
    const a = Math.max(from, ensemble.speciesStart[s]);
    const b = Math.min(to, ensemble.speciesStart[s + 1]);
    if (a >= b) continue;
    flight.setMz(ensemble.species[s].mz);
    if (flight.sourceMap !== null) flight.sourceMap.beginSpecies(ensemble, a, b, flight.plan.qOverM);
    for (let i = a; i < b; i++) {
      // Only solved regions read the transverse state (elsewhere applyDetectorPlane uses the ensemble's).
      if (solved) startIonState(st, ensemble.z0_m[i], ensemble.vz0_m_per_s[i], ensemble.x0_m[i], ensemble.y0_m[i], ensemble.vx0_m_per_s[i], ensemble.vy0_m_per_s[i]);
      else startAxial(st, ensemble.z0_m[i], ensemble.vz0_m_per_s[i]);
      if (observer !== null && observer.begin) observer.begin(i);
      flySections(kernels, st, plan, Section.SOURCE, tLimit, observer);
      if (observer !== null && observer.end) observer.end(i, st);
      if (solved) {
        out.detectorX_m[i] = transverseXAt(st, st.t);
        out.detectorY_m[i] = transverseYAt(st, st.t);
      }
      out.flightTime_s[i] = st.t;
      out.fate[i] = st.fate;
      out.finalSpeed_m_per_s[i] = st.fate === Fate.DETECTED ? Math.abs(st.v) : 0;
      out.weight[i] = st.w;
    }
  }
  if (flight.map !== null && options.onMirrorMap) options.onMirrorMap({ ...flight.map.report });
  if (flight.sourceMap !== null && options.onSourceMap) options.onSourceMap({ ...flight.sourceMap.report });
}

/** traceEnsemble keeps the contract's signature. */
const _keepsContract: TraceEnsemble = traceEnsemble;
void _keepsContract;
