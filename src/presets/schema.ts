/**
 * The preset contract: one JSON document describes an analyser, an ion population and a run.
 * Units sit in every key name; values are converted to SI only when the preset is compiled
 * (src/presets/compile.ts). Every object is strict, so unknown keys (including "__proto__")
 * are refused instead of being merged into application state.
 */
import { z } from 'zod';
import { rangeMessage } from './rangeWords';
import { methodRecordSchema } from './methodRecordSchema';
import { solvedMirrorSchema, solvedSourceSchema } from './fieldsSchema';
import { tolerancesSchema } from './toleranceSchema';
import { ionLoadSchema } from './ionLoadSchema';
import { behindMirrorDetectorSchema, decaySchema } from './fragmentSchema';

// Zod compiles validators with `new Function` unless told not to; the app runs under a CSP without eval.
z.config({ jitless: true });

export const CURRENT_FORMAT_VERSION = 1;

/** Allowed ranges, shared by the validator, the CLI messages and the parameter panel. */
export const LIMITS = {
  potential_V: { min: -50_000, max: 50_000 },
  sourceGap_mm: { min: 0.01, max: 500 },
  driftLength_mm: { min: 1, max: 50_000 },
  mirrorStage_mm: { min: 0.1, max: 5_000 },
  postAccelerationGap_mm: { min: 0.01, max: 200 },
  delay_ns: { min: 0, max: 1_000_000 },
  mz: { min: 0.5, max: 10_000_000 },
  charge: { min: 1, max: 500 },
  abundance: { min: 0, max: 1e12 },
  position_mm: { min: 0, max: 500 },
  positionSd_mm: { min: 0, max: 100 },
  velocity_m_per_s: { min: -100_000, max: 100_000 },
  velocitySd_m_per_s: { min: 0, max: 100_000 },
  energy_eV: { min: 0, max: 10_000 },
  energySd_eV: { min: 0, max: 10_000 },
  ions: { min: 1, max: 20_000_000 },
  seed: { min: 0, max: 4_294_967_295 },
  transmission: { min: 0, max: 1 },
  temperature_K: { min: 0, max: 5_000 },
  angle_mrad: { min: 0, max: 500 },
  spotRadius_mm: { min: 0, max: 50 },
  detectorDiameter_mm: { min: 0.01, max: 500 },
  detectorOffset_mm: { min: -1_000, max: 1_000 },
  pulseWidth_ns: { min: 0, max: 1_000 },
  jitter_ns: { min: 0, max: 1_000 },
  shots: { min: 1, max: 1_000_000 },
  sampleInterval_ns: { min: 0.001, max: 1_000 },
  record_us: { min: 0, max: 100_000 },
  timeOffset_ns: { min: -100_000, max: 100_000 },
} as const;

type Range = { min: number; max: number };

/** A finite number inside [min, max] (or (min, max] when `exclusiveMin`), with a message that states the range and unit. */
function ranged(range: Range, unit: string, exclusiveMin = false) {
  const text = rangeMessage({ ...range, exclusiveMin }, unit);
  const base = z.number({ error: text }); // zod 4 numbers refuse NaN and ±Infinity
  return (exclusiveMin ? base.gt(range.min, { error: text }) : base.gte(range.min, { error: text })).lte(range.max, { error: text });
}

function rangedInt(range: Range, what: string) {
  const text = rangeMessage({ ...range, integer: true }, what);
  return z.number({ error: text }).int({ error: text }).gte(range.min, { error: text }).lte(range.max, { error: text });
}

const potential = () => ranged(LIMITS.potential_V, 'V');

const electrodeSchema = z.strictObject({
  potential_V: potential(),
  /** Potential held during the extraction delay; defaults are set by the compiler (field-free first stage). */
  hold_V: potential().optional(),
});

/** Fraction of ions a grid lets through (open area); weights intensity, 1 when omitted. */
const transmission = () => ranged(LIMITS.transmission, '(fraction)', true).optional();

const gridSchema = z.strictObject({
  gap_mm: ranged(LIMITS.sourceGap_mm, 'mm', true),
  potential_V: potential(),
  hold_V: potential().optional(),
  transmission: transmission(),
});

const groundGridSchema = z.strictObject({
  gap_mm: ranged(LIMITS.sourceGap_mm, 'mm', true),
  transmission: transmission(),
});

/** A pasted waveform: [time_ns since ion formation, potential_V] pairs, times strictly increasing. */
const waveformTable = () =>
  z
    .array(z.tuple([ranged(LIMITS.delay_ns, 'ns'), potential()]))
    .min(2, { error: 'needs at least two [time_ns, potential_V] points' })
    .max(10_000)
    .refine((pts) => pts.every((p, i) => i === 0 || p[0] > pts[i - 1][0]), { error: 'times must increase strictly' });

/** How the switched potentials go from their hold values to their extraction values after the delay. */
const riseSchema = z.discriminatedUnion('shape', [
  z.strictObject({ shape: z.literal('step') }),
  z.strictObject({ shape: z.literal('linear'), riseTime_ns: ranged(LIMITS.delay_ns, 'ns', true) }),
  z.strictObject({ shape: z.literal('exponential'), timeConstant_ns: ranged(LIMITS.delay_ns, 'ns', true) }),
  /** Tabulated potentials (linear between points, held outside them); an electrode without a table steps at the delay. */
  z.strictObject({ shape: z.literal('table'), repeller: waveformTable().optional(), extractionGrid: waveformTable().optional() }),
]);

const extractionSchema = z.discriminatedUnion('mode', [
  z.strictObject({ mode: z.literal('static') }),
  z.strictObject({ mode: z.literal('delayed'), delay_ns: ranged(LIMITS.delay_ns, 'ns'), rise: riseSchema.optional() }),
]);

const sourceSchema = z.strictObject({
  repeller: electrodeSchema,
  /** Present for a two-stage source; absent for a single-stage source (repeller straight to the ground grid). */
  extractionGrid: gridSchema.optional(),
  /** The source's last grid; it sits at the drift-tube potential. */
  groundGrid: groundGridSchema,
  extraction: extractionSchema,
  /** Plates with apertures instead of ideal grids, field solved (src/presets/fieldsSchema.ts). */
  solved: solvedSourceSchema.optional(),
});

const driftSchema = z.strictObject({
  /** Linear mode: source exit to detector. Reflectron: source exit to the mirror entrance grid. */
  length_mm: ranged(LIMITS.driftLength_mm, 'mm', true),
  /** Potential of the drift tube (and of the ground grid and mirror entrance grid); 0 for a grounded tube. */
  potential_V: potential().default(0),
});

const axialProfileSchema = z.discriminatedUnion('kind', [
  /** Ideal harmonic mirror: V = V_drift + (V_back − V_drift)·(x/depth)². */
  z.strictObject({ kind: z.literal('harmonic'), backPlate_V: potential() }),
  /** V = V_drift + Σ c_k·(x/depth)^k for k = 1, 2, … (coefficients_V[0] multiplies x/depth). */
  z.strictObject({ kind: z.literal('polynomial'), coefficients_V: z.array(potential()).min(1).max(12) }),
  /** Piecewise-linear [depth_mm, potential_V] points from the entrance grid (depth 0, drift potential) inwards. */
  z.strictObject({
    kind: z.literal('table'),
    points: z
      .array(z.tuple([ranged({ min: 0, max: LIMITS.mirrorStage_mm.max }, 'mm'), potential()]))
      .min(2)
      .max(256, { error: 'at most 256 points (each segment is traced as a uniform stage)' })
      .refine((pts) => pts.every((p, i) => i === 0 || p[0] > pts[i - 1][0]), { error: 'depths must increase strictly' }),
  }),
]);

const mirrorSchema = z.discriminatedUnion('type', [
  z.strictObject({ type: z.literal('none') }),
  z.strictObject({
    type: z.literal('single'),
    depth_mm: ranged(LIMITS.mirrorStage_mm, 'mm', true),
    backPlate_V: potential(),
    returnLength_mm: ranged(LIMITS.driftLength_mm, 'mm', true),
    entranceGridTransmission: transmission(),
  }),
  z.strictObject({
    type: z.literal('dual'),
    deceleratingLength_mm: ranged(LIMITS.mirrorStage_mm, 'mm', true),
    intermediateGrid_V: potential(),
    reflectingLength_mm: ranged(LIMITS.mirrorStage_mm, 'mm', true),
    backPlate_V: potential(),
    returnLength_mm: ranged(LIMITS.driftLength_mm, 'mm', true),
    entranceGridTransmission: transmission(),
    intermediateGridTransmission: transmission(),
  }),
  /** Gridded entrance, then a non-uniform axial potential V(x) over the mirror depth (x from the entrance grid). */
  z.strictObject({
    type: z.literal('profile'),
    depth_mm: ranged(LIMITS.mirrorStage_mm, 'mm', true),
    profile: axialProfileSchema,
    returnLength_mm: ranged(LIMITS.driftLength_mm, 'mm', true),
    entranceGridTransmission: transmission(),
  }),
  /** Gridless ring-stack mirror with a solved field (src/presets/fieldsSchema.ts). */
  solvedMirrorSchema,
]);

const detectorSchema = z.strictObject({
  postAcceleration: z
    .strictObject({
      gap_mm: ranged(LIMITS.postAccelerationGap_mm, 'mm', true),
      potential_V: potential(),
      gridTransmission: transmission(),
    })
    .optional(),
  /** Active area diameter; omitted = every ion reaching the detector plane counts. */
  activeDiameter_mm: ranged(LIMITS.detectorDiameter_mm, 'mm', true).optional(),
  /** Centre of the active area relative to the flight axis (x is the orthogonal-injection direction). */
  offsetX_mm: ranged(LIMITS.detectorOffset_mm, 'mm').default(0),
  offsetY_mm: ranged(LIMITS.detectorOffset_mm, 'mm').default(0),
  /** Reflectron mode: a linear detector behind the mirror for what passes the back plate (src/presets/fragmentSchema.ts). */
  behindMirror: behindMirrorDetectorSchema.optional(),
});

/**
 * A species by m/z, or by chemistry: an elemental formula of the neutral molecule with an ionising
 * adduct (e.g. "protonated", "[M+Na]+", "[M-H]-"); then m/z is computed (and any given mz replaced)
 * and its isotope envelope is traced. The polarity of the preset gives the charge its sign.
 */
const speciesSchema = z
  .strictObject({
    label: z.string().max(80).optional(),
    mz: ranged(LIMITS.mz, 'Th (m/z)').optional(),
    formula: z.string().min(1).max(500).optional(),
    adduct: z.string().min(1).max(40).optional(),
    /** With a formula: trace the whole isotope envelope (default) or the monoisotopic peak alone. */
    isotopes: z.enum(['envelope', 'monoisotopic']).optional(),
    charge: rangedInt(LIMITS.charge, '(charge state, sign from polarity)'),
    abundance: ranged(LIMITS.abundance, '(relative)').default(1),
    /** Metastable decay in flight: law and channels (src/presets/fragmentSchema.ts). */
    decay: decaySchema.optional(),
  })
  .transform((s, ctx) => {
    if (s.formula === undefined) {
      if (s.adduct !== undefined) ctx.addIssue({ code: 'custom', path: ['formula'], message: 'is required with an adduct' });
      if (s.mz === undefined) ctx.addIssue({ code: 'custom', path: ['mz'], message: 'give either mz or a formula with an adduct' });
      if (s.isotopes !== undefined) ctx.addIssue({ code: 'custom', path: ['isotopes'], message: 'applies to a species given by formula' });
    }
    // One key order whatever the input's, so that a preset saved and read back gives the same text;
    // a formula species' mz is filled in from its chemistry when the preset is loaded.
    return {
      ...(s.label === undefined ? {} : { label: s.label }),
      mz: s.mz ?? 0,
      ...(s.formula === undefined ? {} : { formula: s.formula, adduct: s.adduct ?? 'protonated' }),
      ...(s.isotopes === undefined ? {} : { isotopes: s.isotopes }),
      charge: s.charge,
      abundance: s.abundance,
      ...(s.decay === undefined ? {} : { decay: s.decay }),
    };
  });

const startPositionSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('surface'), position_mm: ranged(LIMITS.position_mm, 'mm') }),
  z.strictObject({
    kind: z.literal('uniform'),
    from_mm: ranged(LIMITS.position_mm, 'mm'),
    to_mm: ranged(LIMITS.position_mm, 'mm'),
  }),
  z.strictObject({
    kind: z.literal('gaussian'),
    mean_mm: ranged(LIMITS.position_mm, 'mm'),
    sd_mm: ranged(LIMITS.positionSd_mm, 'mm'),
  }),
]);

const startVelocitySchema = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('normal'),
    mean_m_per_s: ranged(LIMITS.velocity_m_per_s, 'm/s'),
    sd_m_per_s: ranged(LIMITS.velocitySd_m_per_s, 'm/s'),
    /** Values below this are redrawn (a truncated normal); omit for no truncation. */
    minimum_m_per_s: ranged(LIMITS.velocity_m_per_s, 'm/s').optional(),
  }),
  z.strictObject({
    kind: z.literal('energy'),
    mean_eV: ranged(LIMITS.energy_eV, 'eV'),
    sd_eV: ranged(LIMITS.energySd_eV, 'eV'),
  }),
  /** Gas-phase ions: Maxwell–Boltzmann axial velocity (normal, mean 0, sd sqrt(kT/m)) at a temperature. */
  z.strictObject({ kind: z.literal('thermal'), temperature_K: ranged(LIMITS.temperature_K, 'K') }),
]);

const transverseVelocitySchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('none') }),
  /** Isotropic normal spread of each transverse velocity component. */
  z.strictObject({ kind: z.literal('normal'), sd_m_per_s: ranged(LIMITS.velocitySd_m_per_s, 'm/s') }),
  /** Angular spread about the axis: each component's angle normal with this sd, v⊥ = v_axial·tan(angle). */
  z.strictObject({ kind: z.literal('angular'), sd_mrad: ranged(LIMITS.angle_mrad, 'mrad') }),
  /** Maxwell–Boltzmann components at a temperature (gas-phase slab). */
  z.strictObject({ kind: z.literal('thermal'), temperature_K: ranged(LIMITS.temperature_K, 'K') }),
]);

const transverseSchema = z.strictObject({
  /** Start positions uniform over a disc of this radius about the axis. */
  spotRadius_mm: ranged(LIMITS.spotRadius_mm, 'mm').default(0),
  velocity: transverseVelocitySchema.default({ kind: 'none' }),
  /** Orthogonal injection: a beam along +x with this kinetic energy per ion (0 = none). */
  beamEnergy_eV: ranged(LIMITS.energy_eV, 'eV').default(0),
  beamEnergySd_eV: ranged(LIMITS.energySd_eV, 'eV').default(0),
});

const ionsSchema = z.strictObject({
  species: z.array(speciesSchema).min(1, { error: 'needs at least one species' }).max(200),
  startPosition: startPositionSchema,
  startVelocity: startVelocitySchema,
  transverse: transverseSchema.optional(),
});

/** Detector response and digitizer; absent = report ion statistics only, no simulated spectrum. */
const acquisitionSchema = z.strictObject({
  /** FWHM of the detector's single-ion pulse (gaussian). */
  pulseWidth_ns: ranged(LIMITS.pulseWidth_ns, 'ns').default(0),
  /** Per-ion timing jitter of the detector (sd). */
  detectorJitter_ns: ranged(LIMITS.jitter_ns, 'ns').default(0),
  /** Start (trigger) jitter, one offset per shot (sd). */
  triggerJitter_ns: ranged(LIMITS.jitter_ns, 'ns').default(0),
  /** The ions are spread over this many shots (laser or pusher pulses) summed into one spectrum. */
  shots: rangedInt(LIMITS.shots, 'shots').default(1),
  sampleInterval_ns: ranged(LIMITS.sampleInterval_ns, 'ns', true),
  /** Record window; omitted = from just before the first to just after the last detected ion. */
  recordStart_us: ranged(LIMITS.record_us, 'µs').optional(),
  recordLength_us: ranged(LIMITS.record_us, 'µs', true).optional(),
  /** Constant delay of cables and electronics added to every recorded time (a fitted instrument's offset); 0 when omitted. */
  timeOffset_ns: ranged(LIMITS.timeOffset_ns, 'ns').optional(),
});

const analysisSchema = z.strictObject({
  /** Species (by m/z) used as calibrants for t = t0 + a·sqrt(m/z) [+ b·m/z]; the others are unknowns. */
  calibrantMz: z.array(ranged(LIMITS.mz, 'Th (m/z)')).max(50).optional(),
  quadraticCalibration: z.boolean().default(false),
  /** Species (by m/z) whose reference ion is used for the focus analysis; the first species by default. */
  focusReferenceMz: ranged(LIMITS.mz, 'Th (m/z)').optional(),
});

const runSchema = z.strictObject({
  ions: rangedInt(LIMITS.ions, 'ions'),
  seed: rangedInt(LIMITS.seed, ''),
  /** 'auto': closed form wherever the field allows it; 'integrator': integrate every region (a cross-check). */
  engine: z.enum(['auto', 'integrator']).default('auto'),
});

export const presetSchema = z.strictObject({
  formatVersion: z.literal(CURRENT_FORMAT_VERSION, { error: `must be ${CURRENT_FORMAT_VERSION}` }),
  name: z.string().min(1).max(120),
  description: z.string().max(4000).optional(),
  polarity: z.enum(['positive', 'negative']),
  source: sourceSchema,
  drift: driftSchema,
  mirror: mirrorSchema,
  detector: detectorSchema.prefault({}),
  ions: ionsSchema,
  acquisition: acquisitionSchema.optional(),
  analysis: analysisSchema.optional(),
  /** Instrument stability for the tolerance analysis (src/presets/toleranceSchema.ts). */
  tolerances: tolerancesSchema.optional(),
  /** Ions per shot, detector mode, detection yield and space charge (src/presets/ionLoadSchema.ts). */
  ionLoad: ionLoadSchema.optional(),
  run: runSchema,
  /** How the settings were found: one entry per applied scan or tune. */
  method: methodRecordSchema.optional(),
});

/** A validated preset, with defaults filled in. */
export type Preset = z.output<typeof presetSchema>;
/** What a preset file may contain before defaults are applied. */
export type PresetInput = z.input<typeof presetSchema>;
export type MirrorSettings = Preset['mirror'];
export type SpeciesSettings = Preset['ions']['species'][number];
