/**
 * Preset pieces for solved-field regions (axisymmetric electrodes whose field is computed by the
 * Laplace solver instead of assumed ideal). Self-contained (no import from schema.ts, which imports
 * this module), units in every key (mm, V).
 *
 * The gridless ring-stack mirror ("type": "solved"): in the flight direction,
 *   entry plane (where drift.length_mm ends) → leadIn_mm of field-free path → entrance electrode
 *   (a plate with a round aperture, at the drift potential) → firstGap_mm → ring stack on a
 *   resistor divider (entrance electrode → R0 → ring 0 → … → ring N−1 → R_N → back plate) →
 *   backGap_mm → solid back plate.
 * Everything sits inside a grounded housing of radius mesh.wallRadius_mm at the drift potential,
 * closed at both ends; the entry end of the housing is a plane at the drift potential (the
 * field-free drift region continues there).
 */
import { z } from 'zod';
import { rangeMessage } from './rangeWords';

/** Allowed ranges of the solved-field keys. */
export const FIELD_LIMITS = {
  length_mm: { min: 0.05, max: 2_000 },
  radius_mm: { min: 0.05, max: 500 },
  potential_V: { min: -50_000, max: 50_000 },
  ringCount: { min: 1, max: 500 },
  resistorRatio: { min: 1e-6, max: 1e6 },
  /** Mesh spacing: the solver needs a few nodes across every electrode and gap. */
  meshSpacing_mm: { min: 0.01, max: 50 },
  returnLength_mm: { min: 1, max: 50_000 },
} as const;

type Range = { readonly min: number; readonly max: number };

function ranged(range: Range, unit: string) {
  const text = rangeMessage(range, unit);
  return z.number({ error: text }).gte(range.min, { error: text }).lte(range.max, { error: text });
}

const length = () => ranged(FIELD_LIMITS.length_mm, 'mm');
const radius = () => ranged(FIELD_LIMITS.radius_mm, 'mm');

export const solvedMeshSchema = z.strictObject({
  /** Node spacing of the (r, z) mesh; node counts are rounded up to 2^k + 1 for multigrid. */
  spacing_mm: ranged(FIELD_LIMITS.meshSpacing_mm, 'mm'),
  /** Radius of the grounded housing (at the drift potential) that closes the solution domain. */
  wallRadius_mm: radius(),
});

export const solvedMirrorSchema = z.strictObject({
  type: z.literal('solved'),
  /** Field-free path inside the solved region from its entry plane to the entrance electrode. */
  leadIn_mm: length(),
  entrance: z.strictObject({
    apertureRadius_mm: radius(),
    thickness_mm: length(),
  }),
  rings: z.strictObject({
    count: z
      .number()
      .int({ error: rangeMessage({ ...FIELD_LIMITS.ringCount, integer: true }, '') })
      .gte(FIELD_LIMITS.ringCount.min)
      .lte(FIELD_LIMITS.ringCount.max),
    /** From the entrance electrode's downstream face to ring 0's upstream face. */
    firstGap_mm: length(),
    pitch_mm: length(),
    thickness_mm: length(),
    innerRadius_mm: radius(),
    outerRadius_mm: radius(),
    /** count + 1 ratios: entrance → ring 0, ring 0 → ring 1, …, ring N−1 → back plate (only ratios matter). */
    resistorRatios: z.array(ranged(FIELD_LIMITS.resistorRatio, '(ratio)')).min(2).max(FIELD_LIMITS.ringCount.max + 1),
  }),
  backPlate: z.strictObject({
    /** From the last ring's downstream face to the back plate. */
    gap_mm: length(),
    thickness_mm: length(),
    potential_V: ranged(FIELD_LIMITS.potential_V, 'V'),
  }),
  mesh: solvedMeshSchema,
  /** Field-free path from the entry plane back to the detector (or post-acceleration gap). */
  returnLength_mm: ranged(FIELD_LIMITS.returnLength_mm, 'mm'),
});

export type SolvedMirrorSettings = z.output<typeof solvedMirrorSchema>;

/**
 * Solved source ("source.solved"): the repeller, the extraction electrode and the ground electrode
 * are plates (the last two with round apertures) instead of ideal grids; their potentials, the
 * delayed-extraction waveform and the gaps (upstream face to upstream face: source.extractionGrid.gap_mm
 * from the repeller face to the extraction plate, source.groundGrid.gap_mm from the extraction plate's
 * downstream face to the ground plate) come from the rest of "source". Needs a two-stage source.
 * The solved region ends exitLength_mm behind the ground plate; drift.length_mm counts from there.
 */
export const solvedSourceSchema = z.strictObject({
  repellerThickness_mm: length(),
  extractionAperture_mm: radius(),
  extractionThickness_mm: length(),
  groundAperture_mm: radius(),
  groundThickness_mm: length(),
  /** Outer radius of the three plates. */
  plateRadius_mm: radius(),
  exitLength_mm: length(),
  mesh: solvedMeshSchema,
});

export type SolvedSourceSettings = z.output<typeof solvedSourceSchema>;
