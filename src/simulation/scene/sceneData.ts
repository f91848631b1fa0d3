/**
 * What a run sends the 3D view (RunRequest.scene → RunOutput.scene): the electrode layout, the
 * equipotential lines of solved regions, and the drawn ions with their path segments, all computed
 * in the engine worker (src/simulation/scene/runScene.ts). Plain data and typed arrays only, with
 * no engine imports, so the page can read it without pulling physics into its bundle.
 */

export type ElectrodeKind = 'plate' | 'grid' | 'ring' | 'tube' | 'detector';

export interface ElectrodeShape {
  readonly kind: ElectrodeKind;
  /** Centre along the axis (mm); for rings and tubes the middle of their length. */
  readonly x_mm: number;
  /** Centre across the axis in the fold plane (mm). */
  readonly y_mm: number;
  /** Axial length for rings and tubes; thickness for plates (mm). */
  readonly length_mm: number;
  readonly radius_mm: number;
  /** Potential after extraction (V), for colouring; NaN for the detector. */
  readonly potential_V: number;
  readonly label: string;
}

export interface FrameBox {
  readonly centre: readonly [number, number, number];
  /** Half extents (mm). */
  readonly half: readonly [number, number, number];
}

export interface SceneLayout {
  readonly electrodes: readonly ElectrodeShape[];
  readonly reflectron: boolean;
  /** Lateral drift of a path per mm flown after the source (y = slope · v_drift · (t − t_exit)); 0 in linear mode. */
  readonly slope: number;
  readonly sourceDepth_mm: number;
  readonly mirrorEntrance_mm: number;
  readonly detector: { readonly x_mm: number; readonly y_mm: number; readonly radius_mm: number };
  /** Species lanes along z, so overlapping paths of different m/z stay visible (mm between lanes). */
  readonly laneSpacing_mm: number;
  readonly largestPotential_V: number;
  readonly frames: { readonly all: FrameBox; readonly source: FrameBox; readonly far: FrameBox };
}

/** Most rings drawn for a mirror (pool size in the scene). */
export const MAX_MIRROR_RINGS = 40;

/** Most contour segments drawn (each drawn twice, above and below the axis). */
export const MAX_EQUIPOTENTIAL_SEGMENTS = 40_000;
/** Lines per solved region, evenly spaced between its lowest and highest potential. */
export const EQUIPOTENTIAL_LEVELS = 24;

/** Codes of the analyser part a path segment lies in: the path recorder's own (src/physics/trajectory.ts Region; a test keeps them equal). */
export const PathRegion = {
  HOLD: 0,
  SOURCE: 1,
  DRIFT: 2,
  MIRROR_IN: 3,
  MIRROR_OUT: 4,
  RETURN: 5,
  POST: 6,
} as const;

/** Ions drawn per species as paths; more per species are animated as packets. */
export const PATHS_PER_SPECIES = 14;
export const PACKET_IONS_PER_SPECIES = 160;
/** Species beyond this many are not drawn (their ions are still simulated and charted). */
export const MAX_DRAWN_SPECIES = 16;
export const MAX_DRAWN_IONS = PACKET_IONS_PER_SPECIES * MAX_DRAWN_SPECIES;
/** Most path segments one drawn ion carries (the exact path recorder's own bound, checked by a test). */
export const MAX_PATH_SEGMENTS = 32;

/**
 * The drawn ions, struct-of-arrays. Per ion: species, the fate and flight time the run's engine gave
 * it, transverse start, and its segments [segmentStart[k], segmentStart[k+1]) of uniform
 * acceleration in the folded analyser frame: x(t) = x0 + v0·τ + a·τ²/2 with τ = t − t0.
 */
export interface DrawnPaths {
  readonly count: number;
  readonly speciesCount: number;
  /** m/z of each drawn species (for the colour ramp). */
  readonly speciesMz: readonly number[];
  readonly species: Uint16Array;
  /** Fate code and flight time (s) from the run's engine (closed form or integration, as the run). */
  readonly fate: Uint8Array;
  readonly flightTime_s: Float64Array;
  /** When the drawn path left the source (s; NaN when it never did) and its axial drift speed (m/s). */
  readonly sourceExit_s: Float64Array;
  readonly driftSpeed_m_per_s: Float64Array;
  /** Transverse start (mm) and velocity (mm/s) in scene y and z. */
  readonly y0_mm: Float64Array;
  readonly z0_mm: Float64Array;
  readonly vy_mm_per_s: Float64Array;
  readonly vz_mm_per_s: Float64Array;
  /** 1 for the few ions per species whose full path is drawn; the others are animated packets. */
  readonly drawPath: Uint8Array;
  /** Segment index range per ion, length count + 1. */
  readonly segmentStart: Int32Array;
  /** Analyser part of each segment (PathRegion codes). */
  readonly region: Uint8Array;
  readonly t0_s: Float64Array;
  readonly dt_s: Float64Array;
  readonly x0_m: Float64Array;
  readonly v0_m_per_s: Float64Array;
  readonly a_m_per_s2: Float64Array;
  /** Latest time any drawn ion is still flying (s). */
  readonly endTime_s: number;
}

/** How many ions the run draws (RunRequest.scene); defaults as the app has always drawn. */
export interface SceneRequest {
  readonly pathsPerSpecies?: number;
  readonly packetIonsPerSpecies?: number;
}

export interface RunScene {
  readonly layout: SceneLayout;
  /** Equipotential line segments of solved regions: vertex pairs, 3 floats (mm) per vertex. */
  readonly equipotentials: Float32Array;
  readonly paths: DrawnPaths;
  /** What the drawing replaced by a stand-in (for the legend); empty when the drawing is exact. */
  readonly approximations: readonly string[];
}

/** Buffers of a RunScene, for zero-copy transfer out of the worker. */
export function sceneTransferables(scene: RunScene): ArrayBuffer[] {
  const p = scene.paths;
  return [
    scene.equipotentials,
    p.species,
    p.fate,
    p.flightTime_s,
    p.sourceExit_s,
    p.driftSpeed_m_per_s,
    p.y0_mm,
    p.z0_mm,
    p.vy_mm_per_s,
    p.vz_mm_per_s,
    p.drawPath,
    p.segmentStart,
    p.region,
    p.t0_s,
    p.dt_s,
    p.x0_m,
    p.v0_m_per_s,
    p.a_m_per_s2,
  ].map((a) => a.buffer as ArrayBuffer);
}
