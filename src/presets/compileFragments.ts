/**
 * The preset's decay sections → the SI fragment model (src/physics/fragments/decayModel.ts), and the
 * cross-field checks on them (masses and charges conserved, branching fractions summing to 1, a
 * region the analyser has). A neutral loss given by formula has its monoisotopic mass computed by the
 * species chemistry (AME 2020 masses); for a species given by formula the loss must be part of the ion.
 */
import { combineCompositions, monoisotopicMass_u, parseFormula, type Composition } from '../ions/chemistry';
import type { SpeciesInfo } from '../ions/ensemble';
import { ELEMENTARY_CHARGE_C } from '../physics/constants';
import { Leg, type BlockDecayModel, type DecayChannelModel, type DecayLaw, type FragmentModel, type LegCode } from '../physics/fragments/decayModel';
import { mmToM, usToS } from '../physics/units';
import type { DecayRegion, DecaySettings } from './fragmentSchema';
import type { PresetIssue } from './issues';
import type { Preset } from './schema';
import { resolveChemistry } from './speciesChemistry';

const REGION_LEG: Record<DecayRegion, LegCode> = { source: Leg.SOURCE, drift: Leg.DRIFT, mirror: Leg.MIRROR, returnDrift: Leg.RETURN };

/** Branching fractions of one species must sum to 1 within this. */
export const BRANCHING_SUM_TOLERANCE = 1e-6;

/** Depth of the mirror along the axis (entrance grid to back plate), null without a mirror. */
export function mirrorDepth_mm(mirror: Preset['mirror']): number | null {
  switch (mirror.type) {
    case 'none':
      return null;
    case 'single':
    case 'profile':
      return mirror.depth_mm;
    case 'dual':
      return mirror.deceleratingLength_mm + mirror.reflectingLength_mm;
    case 'solved':
      return null;
  }
}

function lossComposition(formula: string): Composition | null {
  const parsed = parseFormula(formula, 'neutralLoss');
  return parsed.ok ? parsed.value : null;
}

/** Cross-field checks of every species' decay and of the behind-mirror detector. */
export function checkFragments(preset: Preset): PresetIssue[] {
  const issues: PresetIssue[] = [];
  const behind = preset.detector.behindMirror;
  if (behind) {
    const depth = mirrorDepth_mm(preset.mirror);
    if (preset.mirror.type === 'none') issues.push({ path: 'detector.behindMirror', message: 'needs a mirror (reflectron mode); a linear instrument has its detector on the axis already' });
    else if (preset.mirror.type === 'solved') issues.push({ path: 'detector.behindMirror', message: 'is not available with a solved (gridless) mirror' });
    else if (depth !== null && behind.distance_mm <= depth) {
      issues.push({ path: 'detector.behindMirror.distance_mm', message: `must be > the mirror depth (${depth} mm): the detector sits behind the back plate` });
    }
  }
  preset.ions.species.forEach((s, i) => {
    const decay = s.decay;
    if (!decay) return;
    const at = `ions.species[${i}].decay`;
    // Space charge is applied as sheets to the precursor ensemble only: products flying without it would be inconsistent.
    if (preset.ionLoad?.spaceCharge) {
      issues.push({ path: at, message: 'decay in flight is not modelled together with ionLoad.spaceCharge (the products would fly without the sheets); remove one of them' });
      return;
    }
    if (decay.law.kind === 'fraction' && (decay.law.region === 'mirror' || decay.law.region === 'returnDrift') && preset.mirror.type === 'none') {
      issues.push({ path: `${at}.law.region`, message: `"${decay.law.region}" needs a mirror; in linear mode use "source" or "drift"` });
    }
    const sum = decay.channels.reduce((a, c) => a + c.branching, 0);
    if (Math.abs(sum - 1) > BRANCHING_SUM_TOLERANCE) issues.push({ path: `${at}.channels`, message: `branching fractions must sum to 1 (they sum to ${sum})` });
    const precursorMass = s.mz * s.charge;
    const ionComposition = s.formula ? ionCompositionOf(preset, s) : null;
    decay.channels.forEach((c, k) => {
      const cp = `${at}.channels[${k}]`;
      if (c.neutralLoss !== undefined) {
        const loss = lossComposition(c.neutralLoss);
        if (!loss) {
          const parsed = parseFormula(c.neutralLoss, 'neutralLoss');
          issues.push({ path: `${cp}.neutralLoss`, message: parsed.ok ? 'is not a formula' : parsed.issues.map((x) => x.message).join('; ') });
          return;
        }
        const lossMass = monoisotopicMass_u(loss);
        if (!(lossMass < precursorMass)) issues.push({ path: `${cp}.neutralLoss`, message: `loses ${lossMass} u, not less than the precursor ion's ${precursorMass} u` });
        if (ionComposition) {
          const rest = combineCompositions(ionComposition, loss, -1);
          const short = Object.entries(rest).filter(([, n]) => n < 0).map(([el]) => el);
          if (short.length) issues.push({ path: `${cp}.neutralLoss`, message: `needs more ${short.join(', ')} than the precursor ion (${s.formula} ${s.adduct}) has` });
        }
        return;
      }
      const charge = c.charge ?? s.charge;
      if (charge > s.charge) issues.push({ path: `${cp}.charge`, message: `must be ≤ the precursor charge (${s.charge})` });
      const mass = (c.mz ?? 0) * charge;
      if (!(mass < precursorMass)) {
        issues.push({ path: `${cp}.mz`, message: `gives a fragment of ${mass} u, which must be lighter than the precursor ion (${precursorMass} u, m/z ${s.mz} × ${s.charge})` });
      }
    });
  });
  return issues;
}

function ionCompositionOf(preset: Preset, s: Preset['ions']['species'][number]): Composition | null {
  if (!s.formula) return null;
  const chem = resolveChemistry({ formula: s.formula, adduct: s.adduct ?? 'protonated', charge: s.charge, polarity: preset.polarity });
  return chem.ok ? chem.value.composition : null;
}

function decayLaw(decay: DecaySettings): DecayLaw {
  const law = decay.law;
  return law.kind === 'lifetime' ? { kind: 'lifetime', lifetime_s: usToS(law.lifetime_us) } : { kind: 'fraction', fraction: law.fraction, leg: REGION_LEG[law.region] };
}

const mzOf = (mass_u: number, charge: number): number => (charge === 0 ? Infinity : mass_u / charge);

/** Channels for one ensemble block of mass `precursorMass_u` (an isotope peak carries its extra neutrons into the charged fragment). */
function blockChannels(decay: DecaySettings, speciesLabel: string, precursorMass_u: number, precursorCharge: number, monoMass_u: number): DecayChannelModel[] {
  return decay.channels.map((c) => {
    if (c.neutralLoss !== undefined) {
      const loss = monoisotopicMass_u(lossComposition(c.neutralLoss)!);
      const fragmentMass = precursorMass_u - loss;
      const label = c.label ?? `${speciesLabel} −${c.neutralLoss}`;
      return {
        label,
        branching: c.branching,
        fragment: { label, mass_u: fragmentMass, charge: precursorCharge, mz: fragmentMass / precursorCharge },
        complement: { label: `${c.neutralLoss} (neutral)`, mass_u: loss, charge: 0, mz: Infinity },
      };
    }
    const charge = c.charge ?? precursorCharge;
    // The channel's m/z is the monoisotopic fragment's; heavier isotope peaks keep their extra mass on it.
    const fragmentMass = c.mz! * charge + (precursorMass_u - monoMass_u);
    const rest = precursorMass_u - fragmentMass;
    const restCharge = precursorCharge - charge;
    const label = c.label ?? `${speciesLabel} → m/z ${c.mz}`;
    return {
      label,
      branching: c.branching,
      fragment: { label, mass_u: fragmentMass, charge, mz: fragmentMass / charge },
      complement: { label: restCharge === 0 ? `${label} neutral (${rest.toFixed(3)} u)` : `${label} partner`, mass_u: rest, charge: restCharge, mz: mzOf(rest, restCharge) },
    };
  });
}

/** The fragment model of a validated preset, for the blocks of its compiled ensemble; null when no species decays. */
export function compileFragments(preset: Preset, blocks: readonly SpeciesInfo[]): FragmentModel | null {
  const out: BlockDecayModel[] = [];
  blocks.forEach((b, block) => {
    const speciesIndex = b.parent ?? block;
    const s = preset.ions.species[speciesIndex];
    if (!s?.decay) return;
    const baseLabel = b.label.replace(/ M\+\d+$/, '');
    out.push({
      species: speciesIndex,
      block,
      precursorMz: b.mz,
      precursorMass_u: b.mz * b.charge,
      law: decayLaw(s.decay),
      channels: blockChannels(s.decay, baseLabel, b.mz * b.charge, b.charge, s.mz * s.charge),
      kineticEnergyRelease_J: (s.decay.kineticEnergyRelease_meV ?? 0) * 1e-3 * ELEMENTARY_CHARGE_C,
    });
  });
  if (out.length === 0) return null;
  const behind = preset.detector.behindMirror;
  return {
    blocks: out,
    behindMirror: behind
      ? { distance_m: mmToM(behind.distance_mm), radius_m: behind.activeDiameter_mm === undefined ? Infinity : mmToM(behind.activeDiameter_mm) / 2 }
      : null,
  };
}
