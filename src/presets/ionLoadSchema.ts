/**
 * Preset section `ionLoad`: how many ions a shot holds, how the detector answers them (analog or
 * counting, with a velocity-dependent detection yield) and whether they repel each other on the way
 * (space charge, the charged-sheet model). Absent = today's behaviour: every ion alone, every ion
 * reaching the active area gives the same pulse. Self-contained (schema.ts imports it).
 */
import { z } from 'zod';
import { rangedNumber } from './rangedNumber';
import {
  DEFAULT_OPEN_AREA_FRACTION,
  DEFAULT_THRESHOLD_SPEED_KM_PER_S,
  DEFAULT_YIELD_SLOPE_PER_KM_PER_S,
} from '../analysis/acquisition/detectionYield';

export const ION_LOAD_LIMITS = {
  ionsPerShot: { min: 0.01, max: 100_000 },
  gainRelativeSd: { min: 0, max: 3 },
  saturation_ions: { min: 0.01, max: 1e9 },
  baselineNoise_ions: { min: 0, max: 1e6 },
  deadTime_ns: { min: 0, max: 100_000 },
  channels: { min: 1, max: 4096 },
  speed_km_per_s: { min: 0, max: 10_000 },
  yieldSlope_per_km_per_s: { min: 0, max: 1_000 },
  openAreaFraction: { min: 0, max: 1 },
  beamRadius_mm: { min: 0.001, max: 100 },
  sweepPoints: { min: 1, max: 16 },
} as const;

const ranged = rangedNumber;

const L = ION_LOAD_LIMITS;

const analogSchema = z.strictObject({
  mode: z.literal('analog'),
  /** Pulse-height distribution: Pólya (gamma) law of mean 1 with this relative sd (1 = exponential); 0.5 by default (from memory, a saturated chevron plate is of this order). */
  gainRelativeSd: ranged(L.gainRelativeSd, '(sd/mean)').default(0.5),
  /** Output saturates at the height of this many coincident single-ion pulses; omitted = never. */
  saturation_ions: ranged(L.saturation_ions, 'single-ion pulse heights').optional(),
  /** Baseline noise sd per sample and shot, in single-ion pulse heights. */
  baselineNoise_ions: ranged(L.baselineNoise_ions, 'single-ion pulse heights').default(0),
});

const countingSchema = z.strictObject({
  mode: z.literal('counting'),
  /** Non-paralysable dead time of each channel. */
  deadTime_ns: ranged(L.deadTime_ns, 'ns'),
  /** Independent channels (anode segments), an ion striking one at random. */
  channels: z
    .number()
    .int({ error: `must be an integer from ${L.channels.min} to ${L.channels.max}` })
    .gte(L.channels.min, { error: `must be an integer from ${L.channels.min} to ${L.channels.max}` })
    .lte(L.channels.max, { error: `must be an integer from ${L.channels.min} to ${L.channels.max}` })
    .default(1),
  /** Apply the Poisson dead-time correction to the accumulated histogram and report how well it restores each peak. */
  deadTimeCorrection: z.boolean().default(true),
});

const yieldSchema = z.strictObject({
  /** Secondary-electron yield γ = slope·(v − v_threshold), detection probability openArea·(1 − e^(−γ)); see src/analysis/acquisition/detectionYield.ts. */
  law: z.literal('kineticEmission').default('kineticEmission'),
  thresholdSpeed_km_per_s: ranged(L.speed_km_per_s, 'km/s').default(DEFAULT_THRESHOLD_SPEED_KM_PER_S),
  yieldSlope_per_km_per_s: ranged(L.yieldSlope_per_km_per_s, 'electrons per km/s').default(DEFAULT_YIELD_SLOPE_PER_KM_PER_S),
  openAreaFraction: ranged(L.openAreaFraction, '(fraction)', true).default(DEFAULT_OPEN_AREA_FRACTION),
});

const spaceChargeSchema = z.strictObject({
  /** Radius of the (uniform, round) beam cross-section the ions' charge is spread over. */
  beamRadius_mm: ranged(L.beamRadius_mm, 'mm'),
});

export const ionLoadSchema = z.strictObject({
  /** Mean ions per shot over all species; each species' count per shot is Poisson with its share of this mean. */
  ionsPerShot: ranged(L.ionsPerShot, 'ions', true),
  /** 'poisson' (a real source) or 'fixed' (exactly ionsPerShot ions in every shot, for checks). */
  countLaw: z.enum(['poisson', 'fixed']).default('poisson'),
  /** Detector mode; needs the "acquisition" section (its sample interval is the counting bin). */
  detection: z.discriminatedUnion('mode', [analogSchema, countingSchema]).optional(),
  detectionYield: yieldSchema.optional(),
  /** Ions of a shot repel each other in the source and the drift (charged-sheet model); omitted = no space charge. */
  spaceCharge: spaceChargeSchema.optional(),
  /** Further ions-per-shot values for the R-versus-load curve (space charge only). */
  sweepIonsPerShot: z.array(ranged(L.ionsPerShot, 'ions', true)).min(L.sweepPoints.min).max(L.sweepPoints.max).optional(),
});

export type IonLoadSettings = z.output<typeof ionLoadSchema>;
