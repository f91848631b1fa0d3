/**
 * Why a solved source and its ideal-grid equivalent can disagree after a delayed extraction: during
 * the delay the hold potentials apply, and when they are not field-free the ions can cross the
 * extraction electrode before the pulse. Behind an ideal grid the pulsed repeller then no longer acts
 * on them; through an aperture plate its field still reaches them (field penetration), so their
 * energy, flight time and peak width differ between the two. This module counts those ions (the
 * hold phase of the ideal-grid model, in closed form) and words the note the comparison shows.
 */
import { compilePreset } from '../presets/compile';
import type { Preset } from '../presets/schema';
import { samplePopulation } from '../ions/population';
import { createExactPlan, createIonState, holdExactUntil, prepareExactPlan } from '../physics/exactEngine';
import { startIonState } from '../physics/regions/contract';

export interface PulseReach {
  /** Ions still inside the source at the pulse, and those of them past the first stage's exit plane. */
  readonly inSource: number;
  readonly pastFirstStage: number;
}

/** The hold phase of every ion of `idealPreset` (a preset without solved regions), with its ion count and seed. */
export function pulseReach(idealPreset: Preset, options: { ions?: number; seed?: number } = {}): PulseReach {
  const compiled = compilePreset(idealPreset);
  const model = compiled.model;
  if (!(model.source.delay_s > 0) || model.source.stageLengths_m.length < 2) return { inSource: 0, pastFirstStage: 0 };
  const ens = samplePopulation({ ...compiled.population, totalIons: options.ions ?? compiled.population.totalIons, seed: options.seed ?? compiled.population.seed });
  const plan = createExactPlan();
  const st = createIonState();
  let inSource = 0;
  let pastFirstStage = 0;
  for (let s = 0; s < ens.species.length; s++) {
    prepareExactPlan(plan, model, ens.species[s].mz);
    for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
      startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i]);
      if (!holdExactUntil(st, plan, plan.delay_s)) continue;
      inSource++;
      if (st.z > plan.sourcePlane_m[1]) pastFirstStage++;
    }
  }
  return { inSource, pastFirstStage };
}

/** The note shown beside a solved-vs-ideal comparison when the pulse reaches ions differently in the two; null when it does not apply. */
export function pulseReachNote(reach: PulseReach): string | null {
  if (reach.pastFirstStage === 0 || reach.inSource === 0) return null;
  const share = ((100 * reach.pastFirstStage) / reach.inSource).toFixed(reach.pastFirstStage === reach.inSource ? 0 : 1);
  return (
    `${share} % of the ions crossed the extraction electrode during the delay, pushed by the hold potentials. ` +
    'Behind an ideal grid the pulse on the repeller no longer acts on them; through the extraction aperture its field still reaches them ' +
    '(field penetration), so with solved fields their energy, flight time and peak width differ from the ideal-grid figures.'
  );
}
