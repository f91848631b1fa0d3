/**
 * The ions drawn in the 3D view: a small sample of the setup's population, each with its exact
 * trajectory (src/physics/trajectory.ts), turned into scene positions (mm) at any time. Trajectory
 * objects come from a pool allocated once; per-frame position updates allocate nothing.
 */
import type { CompiledPreset } from '../../presets/compile';
import { samplePopulation } from '../../ions/population';
import { createExactPlan, prepareExactPlan } from '../../physics/exactEngine';
import { Fate } from '../../physics/fates';
import { createTrajectory, pathEnd_s, Region, segmentAt, traceTrajectory, type Trajectory } from '../../physics/trajectory';
import { mzRampPositions, rampRgb } from '../colors';
import type { SceneLayout } from './layout';

/** Ions drawn per species as paths; more per species are animated as packets. */
export const PATHS_PER_SPECIES = 14;
export const PACKET_IONS_PER_SPECIES = 160;
/** Species beyond this many are not drawn (their ions are still simulated and charted). */
export const MAX_DRAWN_SPECIES = 16;
export const MAX_DRAWN_IONS = PACKET_IONS_PER_SPECIES * MAX_DRAWN_SPECIES;

export interface DrawnIons {
  count: number;
  /** Species index of each drawn ion (into the setup's species list). */
  readonly species: Uint16Array;
  readonly pool: Trajectory[];
  /** Transverse start (mm) and velocity (mm/s) in scene y and z. */
  readonly y0_mm: Float64Array;
  readonly z0_mm: Float64Array;
  readonly vy_mm_per_s: Float64Array;
  readonly vz_mm_per_s: Float64Array;
  /** Whether the ion is one of the few whose full path is drawn. */
  readonly drawPath: Uint8Array;
  /** RGB 0..1 per drawn ion. */
  readonly colour: Float32Array;
  /** Latest time any drawn ion is still flying (s). */
  endTime_s: number;
  speciesCount: number;
  /** Ramp positions of the drawn species (legend). */
  speciesRamp: number[];
}

export function createDrawnIons(): DrawnIons {
  const n = MAX_DRAWN_IONS;
  return {
    count: 0,
    species: new Uint16Array(n),
    pool: Array.from({ length: n }, createTrajectory),
    y0_mm: new Float64Array(n),
    z0_mm: new Float64Array(n),
    vy_mm_per_s: new Float64Array(n),
    vz_mm_per_s: new Float64Array(n),
    drawPath: new Uint8Array(n),
    colour: new Float32Array(3 * n),
    endTime_s: 0,
    speciesCount: 0,
    speciesRamp: [],
  };
}

const plan = createExactPlan();
const rgb: [number, number, number] = [0, 0, 0];

/** Sample and trace the drawn ions of a setup (same seed as the run, fewer ions). */
export function traceDrawnIons(out: DrawnIons, compiled: CompiledPreset): DrawnIons {
  const species = compiled.population.species.slice(0, MAX_DRAWN_SPECIES);
  const perSpecies = PACKET_IONS_PER_SPECIES;
  // Equal numbers per species (abundance would hide minor species in the picture).
  const ens = samplePopulation({
    ...compiled.population,
    species: species.map((s) => ({ ...s, abundance: 1 })),
    totalIons: perSpecies * species.length,
  });
  out.speciesRamp = mzRampPositions(species.map((s) => s.mz));
  out.speciesCount = species.length;
  let k = 0;
  let end = 0;
  for (let s = 0; s < species.length; s++) {
    prepareExactPlan(plan, compiled.model, species[s].mz);
    rampRgb(out.speciesRamp[s], rgb);
    for (let i = ens.speciesStart[s], n = 0; i < ens.speciesStart[s + 1] && k < MAX_DRAWN_IONS; i++, n++, k++) {
      const tr = traceTrajectory(out.pool[k], plan, ens.z0_m[i], ens.vz0_m_per_s[i]);
      out.species[k] = s;
      out.y0_mm[k] = ens.y0_m[i] * 1e3;
      out.z0_mm[k] = ens.x0_m[i] * 1e3;
      out.vy_mm_per_s[k] = ens.vy0_m_per_s[i] * 1e3;
      out.vz_mm_per_s[k] = ens.vx0_m_per_s[i] * 1e3;
      out.drawPath[k] = n < PATHS_PER_SPECIES ? 1 : 0;
      out.colour[3 * k] = rgb[0];
      out.colour[3 * k + 1] = rgb[1];
      out.colour[3 * k + 2] = rgb[2];
      if (tr.fate === Fate.DETECTED) end = Math.max(end, tr.flightTime_s);
    }
  }
  out.count = k;
  out.endTime_s = end > 0 ? end : Math.max(...out.pool.slice(0, k).map(pathEnd_s), 1e-9);
  return out;
}

/** Scene position (mm) of drawn ion k at time t, written into out[offset..offset+2]. Held at the path ends. */
export function positionAt(ions: DrawnIons, layout: SceneLayout, k: number, t: number, out: Float32Array, offset: number): void {
  const tr = ions.pool[k];
  const seg = segmentAt(tr, t);
  let x: number;
  let tc: number;
  if (seg < 0) {
    x = tr.count ? tr.x0_m[0] : 0;
    tc = 0;
  } else {
    const tau = Math.min(Math.max(t - tr.t0_s[seg], 0), tr.dt_s[seg]);
    tc = tr.t0_s[seg] + tau;
    x = tr.x0_m[seg] + tr.v0_m_per_s[seg] * tau + 0.5 * tr.a_m_per_s2[seg] * tau * tau;
  }
  const lane = (ions.species[k] - (ions.speciesCount - 1) / 2) * layout.laneSpacing_mm;
  const sinceExit = Number.isNaN(tr.sourceExit_s) ? 0 : Math.max(0, tc - tr.sourceExit_s);
  out[offset] = x * 1e3;
  out[offset + 1] = ions.y0_mm[k] + ions.vy_mm_per_s[k] * tc + layout.slope * tr.driftSpeed_m_per_s * 1e3 * sinceExit;
  out[offset + 2] = lane + ions.z0_mm[k] + ions.vz_mm_per_s[k] * tc;
}

/** Points per segment: straight field-free legs need two, curved ones more. */
function samplesFor(region: number): number {
  if (region === Region.DRIFT || region === Region.RETURN) return 2;
  if (region === Region.MIRROR_IN || region === Region.MIRROR_OUT) return 14;
  return 6;
}

/** Largest number of line-segment vertices `fillPaths` can write for `ions`. */
export function pathVertexBudget(ions: DrawnIons): number {
  let n = 0;
  for (let k = 0; k < ions.count; k++) {
    if (!ions.drawPath[k]) continue;
    const tr = ions.pool[k];
    for (let s = 0; s < tr.count; s++) n += 2 * (samplesFor(tr.region[s]) - 1);
  }
  return n;
}

const scratch = new Float32Array(3);

/**
 * Write the drawn paths as line-segment vertex pairs into positions/colours (3 floats per vertex),
 * stopping at `maxVertices`. Returns the number of vertices written.
 */
export function fillPaths(ions: DrawnIons, layout: SceneLayout, positions: Float32Array, colours: Float32Array, maxVertices: number): number {
  let v = 0;
  for (let k = 0; k < ions.count; k++) {
    if (!ions.drawPath[k]) continue;
    const tr = ions.pool[k];
    const lost = tr.fate !== Fate.DETECTED;
    for (let s = 0; s < tr.count; s++) {
      const n = samplesFor(tr.region[s]);
      for (let p = 0; p < n - 1; p++) {
        if (v + 2 > maxVertices) return v;
        for (let e = 0; e < 2; e++) {
          const t = tr.t0_s[s] + (tr.dt_s[s] * (p + e)) / (n - 1);
          positionAt(ions, layout, k, t, scratch, 0);
          positions[3 * v] = scratch[0];
          positions[3 * v + 1] = scratch[1];
          positions[3 * v + 2] = scratch[2];
          const dim = lost ? 0.45 : 1;
          colours[3 * v] = ions.colour[3 * k] * dim;
          colours[3 * v + 1] = ions.colour[3 * k + 1] * dim;
          colours[3 * v + 2] = ions.colour[3 * k + 2] * dim;
          v++;
        }
      }
    }
  }
  return v;
}
