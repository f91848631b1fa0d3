/**
 * The ions drawn in the 3D view, computed in the worker as part of a run: a small sample of the
 * setup's population (same seed as the run, equal numbers per species), flown once by the region
 * driver with the run's own kernel choice (closed form, integration of rising pulses and shaped
 * mirrors, 3-D tracing of solved fields; `traceEnsemble` in src/physics/regions/driver.ts), then
 * the detector plane. The driver hands each ion's path to a segment observer as it flies it, so
 * the drawn segments, the fate and the flight time are one computation: closed-form segments
 * where the field has a closed form, one chord per integrated or solved crossing elsewhere (its
 * end points are the engine's; the page draws the parabola that joins them).
 */
import type { CompiledPreset } from '../../presets/compile';
import { allocateTraceResult, type Ensemble } from '../../ions/ensemble';
import { samplePopulation } from '../../ions/population';
import { applyDetectorPlane } from '../../physics/exactEngine';
import { Fate } from '../../physics/fates';
import { SegmentKind, type IonState, type SectionCode, type SegmentObserver } from '../../physics/regions/contract';
import { traceEnsemble } from '../../physics/regions/driver';
import { chargeToMassIn, createFlightPlan, prepareFlightPlan, type FlightPlan } from '../../physics/regions/plan';
import { createTrajectory, MAX_SEGMENTS, pathEnd_s, TrajectoryRecorder } from '../../physics/trajectory';
import { MAX_DRAWN_SPECIES, MAX_PATH_SEGMENTS, PACKET_IONS_PER_SPECIES, PATHS_PER_SPECIES, type DrawnPaths, type SceneRequest } from './sceneData';

if (MAX_SEGMENTS > MAX_PATH_SEGMENTS) throw new Error('the drawn-path format holds fewer segments per ion than the path recorder writes');

/** Note for the legend when some drawn crossing is a chord (a rising pulse, an integrated or a solved region). */
export const CHORD_NOTE = 'crossings of non-uniform or time-dependent fields drawn as one chord between their computed end points';

/**
 * Segment observer of the drawn ions: records each ion's path in the drawing frame (TrajectoryRecorder)
 * and copies it into the struct-of-arrays format the page reads when the ion's fate is decided.
 */
class DrawnPathCollector implements SegmentObserver {
  private readonly recorder = new TrajectoryRecorder(createTrajectory());
  private readonly plans: FlightPlan[];
  private readonly speciesStart: Int32Array | readonly number[];
  readonly segmentStart: Int32Array;
  readonly sourceExit_s: Float64Array;
  readonly driftSpeed_m_per_s: Float64Array;
  readonly region: Uint8Array;
  readonly t0_s: Float64Array;
  readonly dt_s: Float64Array;
  readonly x0_m: Float64Array;
  readonly v0_m_per_s: Float64Array;
  readonly a_m_per_s2: Float64Array;
  segments = 0;
  chords = 0;
  lastPathEnd_s = 0;

  constructor(compiled: CompiledPreset, ens: Ensemble) {
    // The per-species plans the driver prepares too (the recorder needs the plane positions).
    this.plans = ens.species.map((sp) => prepareFlightPlan(createFlightPlan(), compiled.model, chargeToMassIn(compiled.model, sp.mz)));
    this.speciesStart = ens.speciesStart;
    const n = ens.count;
    const cap = n * MAX_SEGMENTS;
    this.segmentStart = new Int32Array(n + 1);
    this.sourceExit_s = new Float64Array(n);
    this.driftSpeed_m_per_s = new Float64Array(n);
    this.region = new Uint8Array(cap);
    this.t0_s = new Float64Array(cap);
    this.dt_s = new Float64Array(cap);
    this.x0_m = new Float64Array(cap);
    this.v0_m_per_s = new Float64Array(cap);
    this.a_m_per_s2 = new Float64Array(cap);
  }

  begin(ion: number): void {
    let s = 0;
    while (ion >= this.speciesStart[s + 1]) s++;
    this.recorder.reset(this.plans[s]);
  }

  enter(section: SectionCode, st: Readonly<IonState>): void {
    this.recorder.enter(section, st);
  }

  segment(section: SectionCode, stage: number, t0: number, dt: number, z0: number, v0: number, a: number, kind: number): void {
    if (kind === SegmentKind.CHORD) this.chords++;
    this.recorder.segment(section, stage, t0, dt, z0, v0, a, kind);
  }

  end(ion: number, st: Readonly<IonState>): void {
    this.recorder.end(ion, st);
    const tr = this.recorder.tr;
    const seg = this.segments;
    this.segmentStart[ion] = seg;
    this.sourceExit_s[ion] = tr.sourceExit_s;
    this.driftSpeed_m_per_s[ion] = tr.driftSpeed_m_per_s;
    this.region.set(tr.region.subarray(0, tr.count), seg);
    this.t0_s.set(tr.t0_s.subarray(0, tr.count), seg);
    this.dt_s.set(tr.dt_s.subarray(0, tr.count), seg);
    this.x0_m.set(tr.x0_m.subarray(0, tr.count), seg);
    this.v0_m_per_s.set(tr.v0_m_per_s.subarray(0, tr.count), seg);
    this.a_m_per_s2.set(tr.a_m_per_s2.subarray(0, tr.count), seg);
    this.segments = seg + tr.count;
    this.segmentStart[ion + 1] = this.segments;
    this.lastPathEnd_s = Math.max(this.lastPathEnd_s, pathEnd_s(tr));
  }
}

/** The drawn ions of a setup with their paths, and whether any crossing is drawn as a chord. */
export interface TracedDrawnPaths {
  readonly paths: DrawnPaths;
  readonly chords: boolean;
}

/** Sample the drawn ions of a setup and fly them with the run's kernel choice, recording their paths. */
export function traceDrawnIons(compiled: CompiledPreset, request: SceneRequest = {}): TracedDrawnPaths {
  const species = compiled.population.species.slice(0, MAX_DRAWN_SPECIES);
  const perSpecies = request.packetIonsPerSpecies ?? PACKET_IONS_PER_SPECIES;
  const pathsPerSpecies = request.pathsPerSpecies ?? PATHS_PER_SPECIES;
  if (!(Number.isInteger(perSpecies) && perSpecies >= 1 && perSpecies <= PACKET_IONS_PER_SPECIES)) {
    throw new RangeError(`scene.packetIonsPerSpecies must be an integer from 1 to ${PACKET_IONS_PER_SPECIES} (got ${perSpecies})`);
  }
  if (!(Number.isInteger(pathsPerSpecies) && pathsPerSpecies >= 0 && pathsPerSpecies <= perSpecies)) {
    throw new RangeError(`scene.pathsPerSpecies must be an integer from 0 to packetIonsPerSpecies = ${perSpecies} (got ${pathsPerSpecies})`);
  }
  // Equal numbers per species (abundance would hide minor species in the picture).
  const ens = samplePopulation({
    ...compiled.population,
    species: species.map((s) => ({ ...s, abundance: 1 })),
    totalIons: perSpecies * species.length,
  });
  const n = ens.count;

  // One flight: the driver's kernel choice for the model (as the run's), the paths observed on the way.
  const engine = allocateTraceResult(n);
  const collector = new DrawnPathCollector(compiled, ens);
  traceEnsemble(compiled.model, ens, engine, { observer: collector });
  applyDetectorPlane(compiled.model, ens, engine);
  const speciesOf = new Uint16Array(n);
  const drawPath = new Uint8Array(n);
  let end = 0;
  for (let s = 0; s < ens.species.length; s++) {
    for (let i = ens.speciesStart[s], k = 0; i < ens.speciesStart[s + 1]; i++, k++) {
      speciesOf[i] = s;
      drawPath[i] = k < pathsPerSpecies ? 1 : 0;
      if (engine.fate[i] === Fate.DETECTED) end = Math.max(end, engine.flightTime_s[i]);
    }
  }
  const seg = collector.segments;
  const y0_mm = new Float64Array(n);
  const z0_mm = new Float64Array(n);
  const vy = new Float64Array(n);
  const vz = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    y0_mm[i] = ens.y0_m[i] * 1e3;
    z0_mm[i] = ens.x0_m[i] * 1e3;
    vy[i] = ens.vy0_m_per_s[i] * 1e3;
    vz[i] = ens.vx0_m_per_s[i] * 1e3;
  }
  const paths: DrawnPaths = {
    count: n,
    speciesCount: species.length,
    speciesMz: species.map((s) => s.mz),
    species: speciesOf,
    fate: engine.fate.slice(),
    flightTime_s: engine.flightTime_s.slice(),
    sourceExit_s: collector.sourceExit_s,
    driftSpeed_m_per_s: collector.driftSpeed_m_per_s,
    y0_mm,
    z0_mm,
    vy_mm_per_s: vy,
    vz_mm_per_s: vz,
    drawPath,
    segmentStart: collector.segmentStart,
    // Trimmed copies, so that only the segments in use cross to the page.
    region: collector.region.slice(0, seg),
    t0_s: collector.t0_s.slice(0, seg),
    dt_s: collector.dt_s.slice(0, seg),
    x0_m: collector.x0_m.slice(0, seg),
    v0_m_per_s: collector.v0_m_per_s.slice(0, seg),
    a_m_per_s2: collector.a_m_per_s2.slice(0, seg),
    endTime_s: end > 0 ? end : Math.max(collector.lastPathEnd_s, 1e-9),
  };
  return { paths, chords: collector.chords > 0 };
}

/** The drawn ions of a setup (traceDrawnIons without the legend note). */
export function traceDrawnPaths(compiled: CompiledPreset, request: SceneRequest = {}): DrawnPaths {
  return traceDrawnIons(compiled, request).paths;
}
