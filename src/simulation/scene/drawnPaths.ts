/**
 * The ions drawn in the 3D view, computed in the worker as part of a run: a small sample of the
 * setup's population (same seed as the run, equal numbers per species), each traced twice:
 *
 * - with the run's own engine (closed form, or the mixed tracer with integration and solved fields,
 *   the same choice as `simulate`, then the detector plane), which gives each drawn ion its fate and
 *   flight time;
 * - with the exact path recorder (src/physics/trajectory.ts) on the drawable model
 *   (./drawableModel.ts), which gives the drawn segments. Where the run integrates a region, the
 *   drawable model is a close uniform-field stand-in and the legend says so.
 */
import type { CompiledPreset } from '../../presets/compile';
import { allocateTraceResult } from '../../ions/ensemble';
import { samplePopulation } from '../../ions/population';
import { needsIntegrator, type AnalyserModel } from '../../physics/analyser';
import { applyDetectorPlane, createExactPlan, prepareExactPlan, traceExact } from '../../physics/exactEngine';
import { Fate } from '../../physics/fates';
import { traceMixed } from '../../physics/tracer';
import { createTrajectory, MAX_SEGMENTS, pathEnd_s, traceTrajectory } from '../../physics/trajectory';
import { MAX_DRAWN_SPECIES, MAX_PATH_SEGMENTS, PACKET_IONS_PER_SPECIES, PATHS_PER_SPECIES, type DrawnPaths, type SceneRequest } from './sceneData';

if (MAX_SEGMENTS > MAX_PATH_SEGMENTS) throw new Error('the drawn-path format holds fewer segments per ion than the path recorder writes');

const plan = createExactPlan();
const trajectory = createTrajectory();

/**
 * Sample and trace the drawn ions of a setup. `drawable` is the model the segments are recorded on
 * (compiled.model itself when the exact recorder can follow every region).
 */
export function traceDrawnPaths(compiled: CompiledPreset, drawable: AnalyserModel, request: SceneRequest = {}): DrawnPaths {
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

  // The run's engine, chosen as in simulate(): fates and flight times of the drawn ions.
  const engine = allocateTraceResult(n);
  if (needsIntegrator(compiled.model)) traceMixed(compiled.model, ens, engine);
  else traceExact(compiled.model, ens, engine);
  applyDetectorPlane(compiled.model, ens, engine);

  const speciesOf = new Uint16Array(n);
  const sourceExit_s = new Float64Array(n);
  const driftSpeed = new Float64Array(n);
  const drawPath = new Uint8Array(n);
  const segmentStart = new Int32Array(n + 1);
  const cap = n * MAX_SEGMENTS;
  const region = new Uint8Array(cap);
  const t0 = new Float64Array(cap);
  const dt = new Float64Array(cap);
  const x0 = new Float64Array(cap);
  const v0 = new Float64Array(cap);
  const a = new Float64Array(cap);
  let seg = 0;
  let end = 0;
  let lastPathEnd = 0;
  for (let s = 0; s < ens.species.length; s++) {
    prepareExactPlan(plan, drawable, ens.species[s].mz);
    for (let i = ens.speciesStart[s], k = 0; i < ens.speciesStart[s + 1]; i++, k++) {
      const tr = traceTrajectory(trajectory, plan, ens.z0_m[i], ens.vz0_m_per_s[i]);
      speciesOf[i] = s;
      sourceExit_s[i] = tr.sourceExit_s;
      driftSpeed[i] = tr.driftSpeed_m_per_s;
      drawPath[i] = k < pathsPerSpecies ? 1 : 0;
      segmentStart[i] = seg;
      region.set(tr.region.subarray(0, tr.count), seg);
      t0.set(tr.t0_s.subarray(0, tr.count), seg);
      dt.set(tr.dt_s.subarray(0, tr.count), seg);
      x0.set(tr.x0_m.subarray(0, tr.count), seg);
      v0.set(tr.v0_m_per_s.subarray(0, tr.count), seg);
      a.set(tr.a_m_per_s2.subarray(0, tr.count), seg);
      seg += tr.count;
      lastPathEnd = Math.max(lastPathEnd, pathEnd_s(tr));
      if (engine.fate[i] === Fate.DETECTED) end = Math.max(end, engine.flightTime_s[i]);
    }
  }
  segmentStart[n] = seg;
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
  return {
    count: n,
    speciesCount: species.length,
    speciesMz: species.map((s) => s.mz),
    species: speciesOf,
    fate: engine.fate.slice(),
    flightTime_s: engine.flightTime_s.slice(),
    sourceExit_s,
    driftSpeed_m_per_s: driftSpeed,
    y0_mm,
    z0_mm,
    vy_mm_per_s: vy,
    vz_mm_per_s: vz,
    drawPath,
    segmentStart,
    // Trimmed copies, so that only the segments in use cross to the page.
    region: region.slice(0, seg),
    t0_s: t0.slice(0, seg),
    dt_s: dt.slice(0, seg),
    x0_m: x0.slice(0, seg),
    v0_m_per_s: v0.slice(0, seg),
    a_m_per_s2: a.slice(0, seg),
    endTime_s: end > 0 ? end : Math.max(lastPathEnd, 1e-9),
  };
}
