/** One ion through an analyser, for focus analysis and reference figures (not for ensembles). */
import type { AnalyserModel } from '../physics/analyser';
import { needsIntegrator } from '../physics/analyser';
import { createExactPlan, createIonState, prepareExactPlan, traceOneExact } from '../physics/exactEngine';
import { traceOneMixed } from '../physics/tracer';
import { Fate, type FateCode } from '../physics/fates';

export interface SingleIonResult {
  readonly t: number;
  readonly fate: FateCode;
  /** Axial speed at the detector plane (m/s). */
  readonly v: number;
}

const plan = createExactPlan();
const state = createIonState();

export function traceSingleIon(model: AnalyserModel, mz: number, z0_m: number, v0_m_per_s: number): SingleIonResult {
  prepareExactPlan(plan, model, mz);
  state.t = 0;
  state.z = z0_m;
  state.v = v0_m_per_s;
  state.fate = Fate.UNSET;
  state.w = 1;
  if (needsIntegrator(model)) traceOneMixed(state, plan, model);
  else traceOneExact(state, plan);
  return { t: state.t, fate: state.fate as FateCode, v: Math.abs(state.v) };
}
