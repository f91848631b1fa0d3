/**
 * Preset sections for metastable decay: per species an optional `decay` (how and when the precursor
 * falls apart, into which channels) and, in `detector`, an optional linear detector behind the mirror
 * that neutral fragments (and anything else passing the back plate) reach. Self-contained (schema.ts
 * imports it); the checks spanning several fields are in ./fragmentChecks.ts.
 */
import { z } from 'zod';
import { rangeMessage } from './rangeWords';

export const FRAGMENT_LIMITS = {
  lifetime_us: { min: 0, max: 1e6 },
  fraction: { min: 0, max: 1 },
  branching: { min: 0, max: 1 },
  kineticEnergyRelease_meV: { min: 0, max: 10_000 },
  mz: { min: 0.5, max: 10_000_000 },
  charge: { min: 1, max: 500 },
  behindMirrorDistance_mm: { min: 0.1, max: 50_000 },
  detectorDiameter_mm: { min: 0.01, max: 500 },
} as const;

type Range = { readonly min: number; readonly max: number };

function ranged(range: Range, unit: string, exclusiveMin = false) {
  const text = rangeMessage({ ...range, exclusiveMin }, unit);
  const base = z.number({ error: text });
  return (exclusiveMin ? base.gt(range.min, { error: text }) : base.gte(range.min, { error: text })).lte(range.max, { error: text });
}

const L = FRAGMENT_LIMITS;

/** Where a fixed fraction of the precursors decays (uniformly over the time each spends there). */
export const DECAY_REGIONS = ['source', 'drift', 'mirror', 'returnDrift'] as const;
export type DecayRegion = (typeof DECAY_REGIONS)[number];

const decayLawSchema = z.discriminatedUnion('kind', [
  /** Unimolecular decay: exponential in the ion's (proper) time since formation, mean lifetime τ. */
  z.strictObject({ kind: z.literal('lifetime'), lifetime_us: ranged(L.lifetime_us, 'µs', true) }),
  /** A fixed fraction of the precursors decays in one region, uniformly over the time spent there. */
  z.strictObject({ kind: z.literal('fraction'), fraction: ranged(L.fraction, '(fraction of precursors)'), region: z.enum(DECAY_REGIONS) }),
]);

/**
 * One dissociation channel: the charged fragment by its m/z and charge, or by a neutral loss given as
 * an elemental formula (the fragment then keeps the precursor's charge, its m/z computed from the
 * masses). The other product (mass and charge by conservation) is traced too: a neutral when the
 * fragment carries all the charge.
 */
const channelSchema = z
  .strictObject({
    label: z.string().max(80).optional(),
    mz: ranged(L.mz, 'Th (m/z)').optional(),
    charge: z
      .number()
      .int({ error: rangeMessage({ ...L.charge, integer: true }, '(charge state of the fragment)') })
      .gte(L.charge.min, { error: rangeMessage({ ...L.charge, integer: true }, '(charge state of the fragment)') })
      .lte(L.charge.max, { error: rangeMessage({ ...L.charge, integer: true }, '(charge state of the fragment)') })
      .optional(),
    neutralLoss: z.string().min(1).max(200).optional(),
    /** Share of this precursor's decays that go this way; the channels of a species sum to 1. */
    branching: ranged(L.branching, '(fraction of decays)', true),
  })
  .superRefine((c, ctx) => {
    if ((c.mz === undefined) === (c.neutralLoss === undefined)) {
      ctx.addIssue({ code: 'custom', path: ['mz'], message: 'give either mz (with charge) or neutralLoss (a formula), not both' });
    }
    if (c.neutralLoss !== undefined && c.charge !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['charge'], message: 'a neutral-loss fragment keeps the precursor charge; leave charge out' });
    }
  });

export const decaySchema = z.strictObject({
  law: decayLawSchema,
  channels: z.array(channelSchema).min(1, { error: 'needs at least one channel' }).max(20),
  /** Kinetic energy released in the decay, shared by the two products, isotropic in the precursor's frame. */
  kineticEnergyRelease_meV: ranged(L.kineticEnergyRelease_meV, 'meV').optional(),
});

/** A linear detector behind the mirror's back plate (on the flight axis): what passes the mirror lands there. */
export const behindMirrorDetectorSchema = z.strictObject({
  /** From the mirror entrance grid to this detector's plane, along the axis; beyond the mirror's depth. */
  distance_mm: ranged(L.behindMirrorDistance_mm, 'mm', true),
  /** Active diameter (centred on the axis); omitted = every particle reaching the plane counts. */
  activeDiameter_mm: ranged(L.detectorDiameter_mm, 'mm', true).optional(),
});

export type DecaySettings = z.output<typeof decaySchema>;
export type DecayChannelSettings = DecaySettings['channels'][number];
export type BehindMirrorDetectorSettings = z.output<typeof behindMirrorDetectorSchema>;
