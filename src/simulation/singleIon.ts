/** One ion through an analyser, for focus analysis and reference figures (not for ensembles). */
import type { AnalyserModel } from '../physics/analyser';
import type { FateCode } from '../physics/fates';
import { createIonState, startIonState } from '../physics/regions/contract';
import { createFlight, type ModelFlight } from '../physics/regions/driver';
import { legacyTally } from '../physics/regions/legacyTally';

export interface SingleIonResult {
  readonly t: number;
  readonly fate: FateCode;
  /** Axial speed at the detector plane (m/s). */
  readonly v: number;
}

// The flight of the last model asked for (callers trace many single ions of one model in a row).
let last: { model: AnalyserModel; flight: ModelFlight } | null = null;
const state = createIonState();

/**
 * One on-axis ion of m/z `mz` from z0 (m from the repeller) with axial speed v0 through `model`, with
 * the driver's kernel choice ion by ion (no transfer map: a single ion is traced through a solved
 * mirror); each ion on its own, without the integrator's memory of the one before.
 */
export function traceSingleIon(model: AnalyserModel, mz: number, z0_m: number, v0_m_per_s: number): SingleIonResult {
  if (last === null || last.model !== model) last = { model, flight: createFlight(model, { engine: 'mixed', counters: legacyTally, transferMap: false }) };
  const flight = last.flight;
  flight.forgetFirstSteps();
  flight.setMz(mz);
  flight.fly(startIonState(state, z0_m, v0_m_per_s));
  return { t: state.t, fate: state.fate as FateCode, v: Math.abs(state.v) };
}
