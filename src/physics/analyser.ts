/**
 * The analyser model in SI units: an ordered stack of regions along the flight axis, bounded by
 * ideal planar grids (fully transparent, no field penetration). Compiled from a preset by
 * src/presets/compile.ts; read by the engines. Positions along the axis are measured from the
 * repeller; the mirror is unfolded, so "path" lengths after the source add up along the flight.
 */
import type { SolvedMirrorModel, SolvedSourceModel } from './regions/solvedKernels';

/** Potential of one electrode plane: `hold_V` until `switch_s`, then `final_V` (an ideal step). */
export interface ElectrodeDrive {
  readonly hold_V: number;
  readonly final_V: number;
}

/** A tabulated potential waveform (time since ion formation), linear between points, held outside. */
export interface WaveformTable {
  readonly time_s: Float64Array;
  readonly potential_V: Float64Array;
}

/** How switched electrodes go from hold to final potential after the delay. */
export type RiseModel =
  | { readonly kind: 'step' }
  | { readonly kind: 'linear'; readonly riseTime_s: number }
  | { readonly kind: 'exponential'; readonly timeConstant_s: number }
  /** Per plane (as `SourceModel.planes`): a table replaces that electrode's drive; null = step at the delay. */
  | { readonly kind: 'table'; readonly tables: readonly (WaveformTable | null)[] };

export interface SourceModel {
  /** Gap lengths of the source stages, repeller side first (one or two stages). */
  readonly stageLengths_m: readonly number[];
  /**
   * Drives of the planes bounding the stages: [repeller, extraction grid?, ground grid].
   * The ground grid is at the drift-tube potential and never switches.
   */
  readonly planes: readonly ElectrodeDrive[];
  /** Extraction delay after ion formation at t = 0; 0 for a static source. */
  readonly delay_s: number;
  /** Transmission of each plane (index as `planes`; the repeller's entry is unused), 1 = fully open. */
  readonly planeTransmission: readonly number[];
  readonly rise: RiseModel;
  /** Plates with apertures and a solved field instead of the ideal grids (src/physics/regions/solvedKernels.ts). */
  readonly solved?: SolvedSourceModel | null;
}

export interface MirrorStage {
  readonly length_m: number;
  /** Potential of the grid (or back plate) that closes this stage. */
  readonly exitPotential_V: number;
}

/** Non-uniform mirror potential V(x) = V_drift + Σ_k c_k·(x/depth)^k, x measured from the entrance grid. */
export interface PolynomialProfile {
  readonly depth_m: number;
  /** c_1 … c_n (V); c_0 is the drift potential. */
  readonly coefficients_V: Float64Array;
}

export interface MirrorModel {
  /** Stages from the entrance grid inwards; the entrance grid is at the drift-tube potential. Empty for a profile mirror. */
  readonly stages: readonly MirrorStage[];
  /** Non-uniform (no closed form) mirror behind the entrance grid; null for a gridded stage mirror. */
  readonly profile: PolynomialProfile | null;
  /** Field-free path from the mirror entrance grid back to the detector (or post-acceleration gap). */
  readonly returnLength_m: number;
  /** Transmission of the grid closing each stage except the last (the back plate), then of the entrance grid. */
  readonly entranceGridTransmission: number;
  readonly innerGridTransmission: readonly number[];
  /** Gridless mirror with a solved field (src/physics/regions/solvedKernels.ts); stages and profile are then unused. */
  readonly solved?: SolvedMirrorModel | null;
}

export interface PostAccelerationModel {
  readonly gap_m: number;
  readonly potential_V: number;
  readonly gridTransmission: number;
}

/** Active area of the detector in its plane; null = every ion reaching the plane counts. */
export interface DetectorAperture {
  readonly radius_m: number;
  readonly centreX_m: number;
  readonly centreY_m: number;
}

export interface AnalyserModel {
  /** +1 for positive ions, −1 for negative ions. */
  readonly polarity: 1 | -1;
  readonly source: SourceModel;
  readonly drift: { readonly length_m: number; readonly potential_V: number };
  /** null in linear mode. */
  readonly mirror: MirrorModel | null;
  readonly postAcceleration: PostAccelerationModel | null;
  readonly detectorAperture: DetectorAperture | null;
  /** Flight times beyond this are reported as timed out rather than as infinities. */
  readonly maxFlightTime_s: number;
  /** Integrate every region numerically, even where a closed form exists (a cross-check). */
  readonly forceIntegrator: boolean;
  /**
   * Integrate source stages whose potentials change in time (at the pulse tolerance) instead of
   * using their closed form, the rest staying closed-form: how the benchmark keeps an integrated figure.
   */
  readonly integratePulse?: boolean;
  /** false: trace every ion through a solved mirror; otherwise the run's fitted transfer map carries the ions where it validates (src/physics/solvedMirrorMap.ts). */
  readonly mapSolvedMirror?: boolean;
  /** false: trace every ion through a solved source; otherwise the run's transfer map carries the ions where it validates (src/physics/solvedSourceMap.ts). */
  readonly mapSolvedSource?: boolean;
}

/** True when some region has no closed form and must be integrated. */
export function needsIntegrator(model: AnalyserModel): boolean {
  return model.forceIntegrator || model.source.rise.kind !== 'step' || (model.mirror?.profile ?? null) !== null || hasSolvedRegion(model);
}

/** True when some region's field is solved: ions are traced in 3-D there and the tracer fills the detector-plane position. */
export function hasSolvedRegion(model: AnalyserModel): boolean {
  return (model.mirror?.solved ?? null) !== null || (model.source.solved ?? null) !== null;
}

/** Total source depth (repeller to ground grid). */
export function sourceDepth_m(source: SourceModel): number {
  let depth = 0;
  for (const gap of source.stageLengths_m) depth += gap;
  return depth;
}

/** Potential at axial position z inside the source after the extraction switch (uniform fields between grids). */
export function sourcePotentialAt_V(source: SourceModel, z_m: number, which: 'hold' | 'final' = 'final'): number {
  let start = 0;
  for (let i = 0; i < source.stageLengths_m.length; i++) {
    const gap = source.stageLengths_m[i];
    if (z_m <= start + gap || i === source.stageLengths_m.length - 1) {
      const a = which === 'hold' ? source.planes[i].hold_V : source.planes[i].final_V;
      const b = which === 'hold' ? source.planes[i + 1].hold_V : source.planes[i + 1].final_V;
      return a + ((b - a) * (z_m - start)) / gap;
    }
    start += gap;
  }
  return source.planes[source.planes.length - 1].final_V;
}
