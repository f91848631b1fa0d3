/**
 * Entry points of the closed-form ("exact") engine under their earlier names: flight times through
 * an analyser of ideal grids with uniform static fields in each stage (the source field may switch
 * once, as an ideal step, at the extraction delay), each stage crossing in closed form
 * (src/physics/uniformField.ts), exact to rounding. The engine itself is the region model
 * (src/physics/regions/): the single-crossing functions below are the closed-form crossings one
 * at a time, the entry points of the space-charge engine (which moves ions between crossings
 * itself) and of the source-side checks; `traceExact` is kept only for the solved-field tests and
 * benchmark that still call it (the run, the scene and the other benchmarks call the driver).
 */
import type { AnalyserModel } from './analyser';
import { hasSolvedRegion } from './analyser';
import { Fate } from './fates';
import { extract, fieldFree, holdUntil, postGap, stageMirror } from './regions/closedForm';
import { createIonState as createRegionIonState, type AxialState, type IonState as RegionIonState } from './regions/contract';
import { traceEnsemble } from './regions/driver';
import { legacyTally } from './regions/legacyTally';
import { createFlightPlan, preparePlanForMz, type FlightPlan } from './regions/plan';
import { createMotion } from './uniformField';
import type { Ensemble, TraceResult } from '../ions/ensemble';

/** The axial state the closed-form crossings read and write (the region model's IonState adds the transverse state). */
export type IonState = AxialState;

/** A full region-model ion state (usable wherever an IonState is asked for). */
export function createIonState(): RegionIonState {
  return createRegionIonState();
}

/** Per-species constants: the region model's FlightPlan. */
export type ExactPlan = FlightPlan;

export function createExactPlan(): ExactPlan {
  return createFlightPlan();
}

/** Fill `plan` for ions of the given m/z in `model`. */
export function prepareExactPlan(plan: ExactPlan, model: AnalyserModel, mz: number): ExactPlan {
  return preparePlanForMz(plan, model, mz);
}

// Scratch of the single-crossing wrappers below (no state survives a call).
const motion = createMotion();

/** Hold phase of delayed extraction until the delay ends (src/physics/regions/closedForm.ts holdUntil). */
export function holdExact(st: IonState, plan: ExactPlan): boolean {
  return holdUntil(st, plan, plan.delay_s, motion, null);
}

/** The hold phase up to time `until` (s since ion formation), in the static hold fields. */
export function holdExactUntil(st: IonState, plan: ExactPlan, until: number): boolean {
  return holdUntil(st, plan, until, motion, null);
}

/** From the ion's current position (any source stage, static extraction fields) through the remaining stages to the ground grid. */
export function extractExact(st: IonState, plan: ExactPlan): boolean {
  return extract(st, plan, motion, null);
}

/** Field-free flight over `length` (m), from the start of it. */
export function driftExact(st: IonState, length: number): boolean {
  const z = st.z;
  st.z = 0;
  const ok = fieldFree(st, length, 1, null);
  st.z = z + (ok ? length : 0);
  return ok;
}

/** Gridded mirror of uniform stages, entered at its entrance grid: in, turned, and out with the entry speed. */
export function mirrorExact(st: IonState, plan: ExactPlan): boolean {
  return stageMirror(st, plan, motion, null);
}

/** Optional post-acceleration gap in front of the detector. */
export function postAccelerateExact(st: IonState, plan: ExactPlan): boolean {
  const z = st.z;
  st.z = 0;
  const ok = postGap(st, plan, motion, null);
  st.z = z;
  return ok;
}

/** Trace every ion of `ens` with the closed form (the region model's driver, no transfer map), writing into `out`. */
export function traceExact(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  traceEnsemble(model, ens, out, { counters: legacyTally, transferMap: false });
}

/**
 * Transverse motion and the detector's active area. Ideal grids have fields along the axis only, so
 * the transverse velocity never changes: the position in the detector plane is x0 + vx·t (in the
 * unfolded flight frame). Detected ions outside the active area become "missed detector".
 */
export function applyDetectorPlane(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  const aperture = model.detectorAperture;
  const r2 = aperture ? aperture.radius_m * aperture.radius_m : Infinity;
  const cx = aperture ? aperture.centreX_m : 0;
  const cy = aperture ? aperture.centreY_m : 0;
  // Solved-field regions change the transverse velocity: there the tracer has filled the positions.
  const filledByTracer = hasSolvedRegion(model);
  for (let i = 0; i < ens.count; i++) {
    const t = out.flightTime_s[i];
    const x = filledByTracer ? out.detectorX_m[i] : ens.x0_m[i] + ens.vx0_m_per_s[i] * t;
    const y = filledByTracer ? out.detectorY_m[i] : ens.y0_m[i] + ens.vy0_m_per_s[i] * t;
    out.detectorX_m[i] = x;
    out.detectorY_m[i] = y;
    if (out.fate[i] === Fate.DETECTED && (x - cx) * (x - cx) + (y - cy) * (y - cy) > r2) out.fate[i] = Fate.MISSED_DETECTOR;
  }
}
