/**
 * The optional `tolerances` section of a preset: how stable the instrument is, as the tolerance
 * analysis (src/tolerance/) reads it. Every value is a standard uncertainty (one standard deviation
 * of a normal distribution, ≥ 0): slow terms (supply drift, delay offset, temperature, positions,
 * tilt) differ between acquisitions and move the peaks; shot-to-shot terms (supply ripple, delay and
 * trigger jitter) differ between the shots summed into one spectrum and broaden the peaks.
 * Self-contained (schema.ts imports it); units in every key.
 */
import { z } from 'zod';
import { rangedNumber } from './rangedNumber';
import { MATERIAL_NAMES } from '../tolerance/materials';

export const TOLERANCE_LIMITS = {
  ppm: { min: 0, max: 100_000 },
  ns: { min: 0, max: 10_000 },
  temperature_K: { min: 0, max: 200 },
  expansion_per_K: { min: 0, max: 1e-3 },
  position_um: { min: 0, max: 10_000 },
  tilt_mrad: { min: 0, max: 100 },
  massAccuracy_ppm: { min: 0.001, max: 100_000 },
  mz: { min: 0.5, max: 10_000_000 },
} as const;

const ranged = rangedNumber;

const supplySchema = z.strictObject({
  /** Slow drift of the supply's output between acquisitions (1 sd, ppm of its setting). */
  drift_ppm: ranged(TOLERANCE_LIMITS.ppm, 'ppm').default(0),
  /** Shot-to-shot ripple and noise (rms, ppm of its setting). */
  ripple_ppm: ranged(TOLERANCE_LIMITS.ppm, 'ppm rms').default(0),
});

const position = () => ranged(TOLERANCE_LIMITS.position_um, 'µm').default(0);
const material = () => z.enum(MATERIAL_NAMES as [string, ...string[]], { error: `must be one of ${MATERIAL_NAMES.join(', ')}` });

export const tolerancesSchema = z.strictObject({
  /** Per electrode supply; an absent supply is perfectly stable. */
  supplies: z
    .strictObject({
      repeller: supplySchema.optional(),
      extractionGrid: supplySchema.optional(),
      driftTube: supplySchema.optional(),
      mirrorIntermediateGrid: supplySchema.optional(),
      /** The mirror's back plate (for a profile or solved mirror, the supply its divider or profile hangs from). */
      mirrorBackPlate: supplySchema.optional(),
      postAcceleration: supplySchema.optional(),
    })
    .prefault({}),
  timing: z
    .strictObject({
      /** Uncertainty of the extraction delay's setting (between acquisitions). */
      delayOffset_ns: ranged(TOLERANCE_LIMITS.ns, 'ns').default(0),
      /** Shot-to-shot jitter of the extraction delay (rms). */
      delayJitter_ns: ranged(TOLERANCE_LIMITS.ns, 'ns rms').default(0),
      /** Shot-to-shot start (trigger) jitter (rms), in addition to acquisition.triggerJitter_ns. */
      triggerJitter_ns: ranged(TOLERANCE_LIMITS.ns, 'ns rms').default(0),
    })
    .prefault({}),
  temperature: z
    .strictObject({
      /** Temperature change of the flight tube (drift and return lengths). */
      flightTube_K: ranged(TOLERANCE_LIMITS.temperature_K, 'K').default(0),
      /** Temperature change of the mirror's electrode stack (its stage lengths). */
      mirror_K: ranged(TOLERANCE_LIMITS.temperature_K, 'K').default(0),
      tubeMaterial: material().default('stainless-304'),
      mirrorMaterial: material().default('stainless-304'),
      /** Linear expansion coefficients that replace the materials' values. */
      tubeExpansion_per_K: ranged(TOLERANCE_LIMITS.expansion_per_K, '1/K').optional(),
      mirrorExpansion_per_K: ranged(TOLERANCE_LIMITS.expansion_per_K, '1/K').optional(),
    })
    .prefault({}),
  /** Axial position errors of the grids and the detector plane. */
  positions: z
    .strictObject({
      extractionGrid_um: position(),
      groundGrid_um: position(),
      mirrorEntranceGrid_um: position(),
      mirrorIntermediateGrid_um: position(),
      detector_um: position(),
    })
    .prefault({}),
  /** Tilt of the detector plane about the y axis (ions off axis in x arrive early or late). */
  detectorTilt_mrad: ranged(TOLERANCE_LIMITS.tilt_mrad, 'mrad').default(0),
  /** What the method needs: the mass accuracy (1 sd, ppm) over an m/z range (all species by default). */
  target: z
    .strictObject({
      massAccuracy_ppm: ranged(TOLERANCE_LIMITS.massAccuracy_ppm, 'ppm', true),
      fromMz: ranged(TOLERANCE_LIMITS.mz, 'Th (m/z)').optional(),
      toMz: ranged(TOLERANCE_LIMITS.mz, 'Th (m/z)').optional(),
    })
    .optional(),
});

export type ToleranceSettings = z.output<typeof tolerancesSchema>;
export type ToleranceInput = z.input<typeof tolerancesSchema>;
