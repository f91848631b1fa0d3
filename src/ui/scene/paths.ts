/**
 * The ions drawn in the 3D view, as the run's worker computed them (RunOutput.scene.paths,
 * src/simulation/scene/drawnPaths.ts), unpacked into a pool of path records allocated once, and
 * turned into scene positions (mm) at any time. Nothing here traces an ion; per-frame position
 * updates allocate nothing.
 */
import { Fate } from '../../physics/fates';
import type { Trajectory } from '../../physics/trajectory';
import { MAX_DRAWN_IONS, MAX_PATH_SEGMENTS, PathRegion, type DrawnPaths, type SceneLayout } from '../../simulation/scene/sceneData';
import { mzRampPositions, rampRgb } from '../colors';

export { MAX_DRAWN_IONS, MAX_DRAWN_SPECIES, PACKET_IONS_PER_SPECIES, PATHS_PER_SPECIES } from '../../simulation/scene/sceneData';

export interface DrawnIons {
  count: number;
  /** Species index of each drawn ion (into the setup's species list). */
  readonly species: Uint16Array;
  /** Path records; fate and flightTime_s are the run engine's. */
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

function createPathRecord(): Trajectory {
  return {
    count: 0,
    region: new Uint8Array(MAX_PATH_SEGMENTS),
    stage: new Uint8Array(MAX_PATH_SEGMENTS),
    t0_s: new Float64Array(MAX_PATH_SEGMENTS),
    dt_s: new Float64Array(MAX_PATH_SEGMENTS),
    x0_m: new Float64Array(MAX_PATH_SEGMENTS),
    v0_m_per_s: new Float64Array(MAX_PATH_SEGMENTS),
    a_m_per_s2: new Float64Array(MAX_PATH_SEGMENTS),
    fate: 0,
    flightTime_s: 0,
    sourceExit_s: NaN,
    driftSpeed_m_per_s: 0,
  };
}

export function createDrawnIons(): DrawnIons {
  const n = MAX_DRAWN_IONS;
  return {
    count: 0,
    species: new Uint16Array(n),
    pool: Array.from({ length: n }, createPathRecord),
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

const rgb: [number, number, number] = [0, 0, 0];

/** Copy the worker's drawn ions into `out` and colour them by m/z. */
export function unpackDrawnIons(out: DrawnIons, paths: DrawnPaths): DrawnIons {
  out.speciesRamp = mzRampPositions(paths.speciesMz.slice());
  out.speciesCount = paths.speciesCount;
  const n = Math.min(paths.count, MAX_DRAWN_IONS);
  for (let k = 0; k < n; k++) {
    const tr = out.pool[k];
    const first = paths.segmentStart[k];
    const count = Math.min(paths.segmentStart[k + 1] - first, MAX_PATH_SEGMENTS);
    tr.count = count;
    for (let j = 0; j < count; j++) {
      tr.region[j] = paths.region[first + j];
      tr.t0_s[j] = paths.t0_s[first + j];
      tr.dt_s[j] = paths.dt_s[first + j];
      tr.x0_m[j] = paths.x0_m[first + j];
      tr.v0_m_per_s[j] = paths.v0_m_per_s[first + j];
      tr.a_m_per_s2[j] = paths.a_m_per_s2[first + j];
    }
    tr.fate = paths.fate[k];
    tr.flightTime_s = paths.flightTime_s[k];
    tr.sourceExit_s = paths.sourceExit_s[k];
    tr.driftSpeed_m_per_s = paths.driftSpeed_m_per_s[k];
    const s = paths.species[k];
    out.species[k] = s;
    out.y0_mm[k] = paths.y0_mm[k];
    out.z0_mm[k] = paths.z0_mm[k];
    out.vy_mm_per_s[k] = paths.vy_mm_per_s[k];
    out.vz_mm_per_s[k] = paths.vz_mm_per_s[k];
    out.drawPath[k] = paths.drawPath[k];
    rampRgb(out.speciesRamp[s], rgb);
    out.colour[3 * k] = rgb[0];
    out.colour[3 * k + 1] = rgb[1];
    out.colour[3 * k + 2] = rgb[2];
  }
  out.count = n;
  out.endTime_s = paths.endTime_s;
  return out;
}

/** Index of the segment of `tr` covering time t (the last one past the end; −1 before the start or with none). */
function segmentAt(tr: Trajectory, t: number): number {
  if (tr.count === 0 || t < tr.t0_s[0]) return -1;
  let lo = 0;
  let hi = tr.count - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (tr.t0_s[mid] <= t) lo = mid;
    else hi = mid - 1;
  }
  return lo;
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
  if (region === PathRegion.DRIFT || region === PathRegion.RETURN) return 2;
  if (region === PathRegion.MIRROR_IN || region === PathRegion.MIRROR_OUT) return 14;
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
