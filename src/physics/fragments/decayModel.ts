/**
 * Metastable decay in SI units, compiled from a preset's per-species `decay` sections
 * (src/presets/compileFragments.ts): per ensemble block (one isotope peak of a species) the law, the
 * channels with both products, and the kinetic-energy release.
 */

/** The analyser regions a decay can happen in, in flight order (the unfolded path). */
export const Leg = {
  SOURCE: 0,
  DRIFT: 1,
  MIRROR: 2,
  RETURN: 3,
  POST: 4,
  /** Past the mirror's back plate, towards the linear detector behind it. */
  BEHIND: 5,
} as const;
export type LegCode = (typeof Leg)[keyof typeof Leg];
export const LEG_COUNT = 6;
export const LEG_KEYS = ['source', 'drift', 'mirror', 'returnDrift', 'postAcceleration', 'behindMirror'] as const;

export type DecayLaw =
  /** Exponential in the ion's own time since formation (mean lifetime). */
  | { readonly kind: 'lifetime'; readonly lifetime_s: number }
  /** This fraction of the precursors reaching `leg` decays there, uniformly over the time spent in it. */
  | { readonly kind: 'fraction'; readonly fraction: number; readonly leg: LegCode };

/** One product of a dissociation; charge 0 is a neutral. */
export interface DecayProduct {
  readonly label: string;
  /** Mass (u). */
  readonly mass_u: number;
  /** Charge state magnitude (sign from the analyser polarity); 0 for a neutral. */
  readonly charge: number;
  /** True m/z (Th), Infinity for a neutral. */
  readonly mz: number;
}

export interface DecayChannelModel {
  readonly label: string;
  /** Share of the precursor's decays going this way. */
  readonly branching: number;
  /** The fragment ion the channel is named after, then the other product (neutral or charged). */
  readonly fragment: DecayProduct;
  readonly complement: DecayProduct;
}

export interface BlockDecayModel {
  /** Preset species index and ensemble block this applies to. */
  readonly species: number;
  readonly block: number;
  readonly precursorMz: number;
  readonly precursorMass_u: number;
  readonly law: DecayLaw;
  readonly channels: readonly DecayChannelModel[];
  /** Kinetic energy released per decay (J), shared by the products; 0 for none. */
  readonly kineticEnergyRelease_J: number;
}

/** A linear detector behind the mirror, on the axis. */
export interface BehindMirrorDetectorModel {
  /** From the mirror entrance grid to the detector plane (m). */
  readonly distance_m: number;
  /** Active radius (m); Infinity when the whole plane counts. */
  readonly radius_m: number;
}

export interface FragmentModel {
  readonly blocks: readonly BlockDecayModel[];
  readonly behindMirror: BehindMirrorDetectorModel | null;
}
