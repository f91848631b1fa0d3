/**
 * An ion ensemble as struct-of-arrays typed arrays, in SI units, grouped in contiguous blocks of
 * one species each (species s owns indices speciesStart[s] .. speciesStart[s+1]-1).
 */

export interface SpeciesInfo {
  readonly label: string;
  /** m/z in u per elementary charge (Th). */
  readonly mz: number;
  /** Charge state (magnitude); the sign comes from the analyser polarity. */
  readonly charge: number;
  /** Relative abundance as given (not normalised). */
  readonly abundance: number;
  /** Index of the preset species this block belongs to (isotopologue peaks of one species share it). */
  readonly parent?: number;
  /** For an isotopologue peak: extra neutrons (M+shift) and its fraction of the species. */
  readonly isotopeShift?: number;
  readonly isotopeFraction?: number;
}

export interface Ensemble {
  readonly count: number;
  readonly species: readonly SpeciesInfo[];
  /** Block boundaries, length species.length + 1. */
  readonly speciesStart: Int32Array;
  /** Start position along the flight axis, measured from the repeller (m). */
  readonly z0_m: Float64Array;
  /** Start velocity along the flight axis, positive away from the repeller (m/s). */
  readonly vz0_m_per_s: Float64Array;
  /** Transverse start position and velocity (m, m/s); zero unless the population sets them. */
  readonly x0_m: Float64Array;
  readonly y0_m: Float64Array;
  readonly vx0_m_per_s: Float64Array;
  readonly vy0_m_per_s: Float64Array;
}

export function allocateEnsemble(species: readonly SpeciesInfo[], counts: readonly number[]): Ensemble {
  const speciesStart = new Int32Array(species.length + 1);
  for (let s = 0; s < species.length; s++) speciesStart[s + 1] = speciesStart[s] + counts[s];
  const n = speciesStart[species.length];
  return {
    count: n,
    species,
    speciesStart,
    z0_m: new Float64Array(n),
    vz0_m_per_s: new Float64Array(n),
    x0_m: new Float64Array(n),
    y0_m: new Float64Array(n),
    vx0_m_per_s: new Float64Array(n),
    vy0_m_per_s: new Float64Array(n),
  };
}

/** Per-ion results of a trace, struct-of-arrays, same indexing as the ensemble. */
export interface TraceResult {
  /** Arrival time at the detector plane (s); for ions not detected, the time their fate was decided. */
  readonly flightTime_s: Float64Array;
  /** Fate code per ion (see src/physics/fates.ts). */
  readonly fate: Uint8Array;
  /** Axial speed at the detector plane (m/s); 0 when not detected. */
  readonly finalSpeed_m_per_s: Float64Array;
  /** Intensity weight: product of the transmissions of the grids the ion passed (1 = no loss). */
  readonly weight: Float64Array;
  /** Transverse position in the detector plane (m), flight-axis frame; meaningful for detected ions. */
  readonly detectorX_m: Float64Array;
  readonly detectorY_m: Float64Array;
}

export function allocateTraceResult(n: number): TraceResult {
  return {
    flightTime_s: new Float64Array(n),
    fate: new Uint8Array(n),
    finalSpeed_m_per_s: new Float64Array(n),
    weight: new Float64Array(n),
    detectorX_m: new Float64Array(n),
    detectorY_m: new Float64Array(n),
  };
}
