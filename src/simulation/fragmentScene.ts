/**
 * Decay products in the 3D view (RunOutput.fragmentScene), computed in the worker: a small sample of
 * the setup's population (as the drawn precursors, src/simulation/scene/drawnPaths.ts) is traced by
 * the run's engine and decayed by the run's own decay model (traceFragments), and a few products per
 * channel are drawn from their decay point on: flown again by the closed-form kernels on the drawable
 * model, with a segment observer that turns each section's own frame into the folded drawing frame.
 * The result is line-segment vertex pairs (scene mm) with the precursor species and product kind per
 * vertex, so the page only copies them (and shifts linear-mode species into their display lanes).
 *
 * Display only, like the return leg's tilt: a product recorded on the analyser's detector is drawn
 * so that its tilted path ends on the detector (it turns earlier than its precursor, so the time-
 * proportional tilt alone would leave it short).
 */
import type { CompiledPreset } from '../presets/compile';
import { allocateTraceResult } from '../ions/ensemble';
import { samplePopulation } from '../ions/population';
import { needsIntegrator, type AnalyserModel } from '../physics/analyser';
import { applyDetectorPlane, traceExact } from '../physics/exactEngine';
import { Fate } from '../physics/fates';
import type { FragmentModel } from '../physics/fragments/decayModel';
import { Leg } from '../physics/fragments/decayModel';
import { traceFragments } from '../physics/fragments/traceFragments';
import { createIonState, Section, type RegionKernel, type SectionCode, type SegmentObserver } from '../physics/regions/contract';
import { flySections } from '../physics/regions/driver';
import { chargeToMassIn, createFlightPlan, prepareFlightPlan, type FlightPlan } from '../physics/regions/plan';
import { FieldFreeKernel, PostGapKernel, StageMirrorKernel, StaticSourceKernel } from '../physics/regions/uniformStages';
import { createTrajectory, traceTrajectory, type Trajectory } from '../physics/trajectory';
import { traceMixed } from '../physics/tracer';
import { drawableModel } from './scene/drawableModel';
import type { SceneLayout } from './scene/sceneData';
import { FragmentPathKind, type FragmentScene } from './fragmentSceneData';

/** Precursor ions sampled per species for the drawing, and products drawn per channel and role. */
const SAMPLE_PER_SPECIES = 60;
const DRAWN_PER_PRODUCT = 4;
const MAX_SEGMENTS = 40;
const MAX_VERTICES = 20_000;

/** Segments of a product's path in the folded drawing frame (x from the repeller; negative velocity on the way back). */
class FoldedPath implements SegmentObserver {
  count = 0;
  readonly t0 = new Float64Array(MAX_SEGMENTS);
  readonly dt = new Float64Array(MAX_SEGMENTS);
  readonly x0 = new Float64Array(MAX_SEGMENTS);
  readonly v0 = new Float64Array(MAX_SEGMENTS);
  readonly a = new Float64Array(MAX_SEGMENTS);
  private driftStart = 0;
  private entrance = 0;
  private postOrigin = 0;
  private postDirection = 1;

  reset(plan: FlightPlan): void {
    this.count = 0;
    this.driftStart = plan.sourcePlane_m[plan.sourceStageCount];
    this.entrance = this.driftStart + plan.driftLength_m;
    const mirrored = plan.mirrorStageCount > 0;
    this.postOrigin = mirrored && plan.returnLength_m > 0 ? this.entrance - plan.returnLength_m : this.entrance;
    this.postDirection = mirrored ? -1 : 1;
  }

  push(t0: number, dt: number, x0: number, v0: number, a: number): void {
    if (this.count >= MAX_SEGMENTS || !(dt > 0) || !Number.isFinite(dt)) return;
    const k = this.count++;
    this.t0[k] = t0;
    this.dt[k] = dt;
    this.x0[k] = x0;
    this.v0[k] = v0;
    this.a[k] = a;
  }

  segment(section: SectionCode, _stage: number, t0: number, dt: number, z0: number, v0: number, a: number): void {
    switch (section) {
      case Section.SOURCE:
        return this.push(t0, dt, z0, v0, a);
      case Section.DRIFT:
        return this.push(t0, dt, this.driftStart + z0, v0, 0);
      case Section.MIRROR:
        // The mirror kernels report depth below the entrance grid and velocity into the mirror.
        return this.push(t0, dt, this.entrance + z0, v0, a);
      case Section.RETURN:
        return this.push(t0, dt, this.entrance - z0, -v0, 0);
      case Section.POST:
        return this.push(t0, dt, this.postOrigin + this.postDirection * z0, this.postDirection * v0, this.postDirection * a);
    }
  }

  end_s(): number {
    const k = this.count - 1;
    return k < 0 ? 0 : this.t0[k] + this.dt[k];
  }
}

function kernelsFor(plan: FlightPlan): (RegionKernel | null)[] {
  const mirror = plan.mirrorStageCount > 0;
  return [new StaticSourceKernel(), new FieldFreeKernel(Section.DRIFT), mirror ? new StageMirrorKernel() : null, mirror ? new FieldFreeKernel(Section.RETURN) : null, new PostGapKernel()];
}

function xAt(tr: Trajectory, t: number): { x: number; v: number } | null {
  for (let k = 0; k < tr.count; k++) {
    if (t < tr.t0_s[k] || t > tr.t0_s[k] + tr.dt_s[k]) continue;
    const tau = t - tr.t0_s[k];
    return { x: tr.x0_m[k] + tr.v0_m_per_s[k] * tau + 0.5 * tr.a_m_per_s2[k] * tau * tau, v: tr.v0_m_per_s[k] + tr.a_m_per_s2[k] * tau };
  }
  return null;
}

/**
 * The drawn decay products of a setup whose species decay (`fragments` from compileFragments on the
 * run's species); `layout` is the run scene's own. Seeded as the run.
 */
export function traceFragmentScene(compiled: CompiledPreset, fragments: FragmentModel, layout: SceneLayout): FragmentScene {
  const model = compiled.model;
  const drawable: AnalyserModel = drawableModel(model).model;
  const species = compiled.population.species;
  // The same species list (so the decay model's block numbers hold), equal numbers per species.
  const ens = samplePopulation({ ...compiled.population, species: species.map((s) => ({ ...s, abundance: 1 })), totalIons: SAMPLE_PER_SPECIES * species.length });
  const trace = allocateTraceResult(ens.count);
  if (needsIntegrator(model)) traceMixed(model, ens, trace);
  else traceExact(model, ens, trace);
  applyDetectorPlane(model, ens, trace);
  const products = traceFragments(model, fragments, ens, trace, compiled.population.seed).products;

  const positions = new Float32Array(3 * MAX_VERTICES);
  const speciesOf = new Uint16Array(MAX_VERTICES);
  const kind = new Uint8Array(MAX_VERTICES);
  const recorded = new Uint8Array(MAX_VERTICES);
  let v = 0;
  const precursorPlan = createFlightPlan();
  const productPlan = createFlightPlan();
  const precursorPath = createTrajectory();
  const path = new FoldedPath();
  const ion = createIonState();
  const laneCount = Math.min(species.length, 16);
  for (const block of products) {
    const dm = fragments.blocks[block.decayBlock];
    const s = dm.species;
    prepareFlightPlan(precursorPlan, drawable, chargeToMassIn(drawable, dm.precursorMz));
    const neutral = block.product.charge === 0;
    prepareFlightPlan(productPlan, drawable, neutral ? 0 : chargeToMassIn(drawable, block.product.mz));
    const kernels = kernelsFor(productPlan);
    let drawn = 0;
    for (let m = 0; m < block.precursor.length && drawn < DRAWN_PER_PRODUCT; m++) {
      const leg = block.decayLeg[m];
      if (leg === Leg.BEHIND || leg === Leg.POST) continue; // behind the back plate or in the last gap: nothing worth drawing
      const i = block.precursor[m];
      const tDecay = block.decayTime_s[m];
      traceTrajectory(precursorPath, precursorPlan, ens.z0_m[i], ens.vz0_m_per_s[i]);
      const at = xAt(precursorPath, tDecay);
      if (!at) continue;
      // The product from its decay state, in the decay leg's own frame, on the closed-form kernels.
      path.reset(productPlan);
      ion.t = tDecay;
      ion.z = block.start_z_m[m];
      ion.v = block.start_v_m_per_s[m];
      ion.w = 1;
      ion.fate = Fate.UNSET;
      ion.tRef = ion.xRef = ion.yRef = ion.vxRef = ion.vyRef = 0;
      ion.struckElectrode = -1;
      const fate = flySections(kernels, ion, productPlan, leg as SectionCode, productPlan.maxFlightTime_s, path);
      const tEnd = Math.min(block.trace.flightTime_s[m], tDecay + productPlan.maxFlightTime_s);
      if (fate === Fate.PASSED_THROUGH_MIRROR && tEnd > path.end_s()) {
        // Through the back plate: straight on until the run's own end time of this product.
        const k = path.count - 1;
        const t1 = path.end_s();
        const xEnd = k >= 0 ? path.x0[k] + path.v0[k] * path.dt[k] + 0.5 * path.a[k] * path.dt[k] * path.dt[k] : at.x;
        const vEnd = k >= 0 ? path.v0[k] + path.a[k] * path.dt[k] : at.v;
        path.push(t1, tEnd - t1, xEnd, vEnd, 0);
      }
      if (path.count === 0) continue;
      const runFate = block.trace.fate[m];
      const atDetector = runFate === Fate.DETECTED && layout.reflectron;
      const onDetector = runFate === Fate.DETECTED || runFate === Fate.DETECTED_BEHIND_MIRROR ? 1 : 0;
      const vy = ens.vy0_m_per_s[i] * 1e3;
      const vz = ens.vx0_m_per_s[i] * 1e3;
      const y0 = ens.y0_m[i] * 1e3;
      const z0 = ens.x0_m[i] * 1e3 + (s - (laneCount - 1) / 2) * layout.laneSpacing_mm;
      const exit = precursorPath.sourceExit_s;
      const tilt = layout.slope * precursorPath.driftSpeed_m_per_s * 1e3; // mm/s along the scene's y
      const yDecay = y0 + vy * tDecay + (Number.isNaN(exit) ? 0 : tilt * Math.max(0, tDecay - exit));
      const tArrive = path.end_s();
      const yArrive = layout.detector.y_mm + y0 + vy * tArrive;
      const yAt = (t: number): number => (atDetector && tArrive > tDecay ? yDecay + ((yArrive - yDecay) * (t - tDecay)) / (tArrive - tDecay) : yDecay + (vy + tilt) * (t - tDecay));
      for (let k = 0; k < path.count; k++) {
        const n = path.a[k] === 0 ? 2 : 8;
        for (let p = 0; p < n - 1; p++) {
          if (v + 2 > MAX_VERTICES) break;
          for (let e = 0; e < 2; e++) {
            const tau = (path.dt[k] * (p + e)) / (n - 1);
            const t = path.t0[k] + tau;
            positions[3 * v] = (path.x0[k] + path.v0[k] * tau + 0.5 * path.a[k] * tau * tau) * 1e3;
            positions[3 * v + 1] = yAt(t);
            positions[3 * v + 2] = z0 + vz * t;
            speciesOf[v] = s;
            kind[v] = neutral ? FragmentPathKind.NEUTRAL : FragmentPathKind.FRAGMENT_ION;
            recorded[v] = onDetector;
            v++;
          }
        }
      }
      drawn++;
    }
  }
  return { positions: positions.slice(0, 3 * v), species: speciesOf.slice(0, v), kind: kind.slice(0, v), recorded: recorded.slice(0, v), vertices: v };
}
