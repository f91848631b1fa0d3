/**
 * Entry points of the mixed tracer under their earlier names: each region with the closed form
 * where its field allows it (source stages with rising potentials included), by numerical
 * integration where it does not (polynomial mirrors, solved fields), or everywhere when the model
 * asks for the integrator as a cross-check. Thin wrappers over the region model's driver
 * (src/physics/regions/driver.ts), kept for callers elsewhere.
 */
import type { AnalyserModel } from './analyser';
import { createIonState, Section } from './regions/contract';
import { createFlight, traceEnsemble, type FlightChoice } from './regions/driver';
import { legacyTally } from './regions/legacyTally';
import type { FlightPlan } from './regions/plan';
import type { IonState } from './exactEngine';
import type { Ensemble, TraceResult } from '../ions/ensemble';

/** Trace every ion of `ens` with the mixed kernel choice, writing into `out`. */
export function traceMixed(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  traceEnsemble(model, ens, out, { engine: 'mixed', counters: legacyTally });
}

const single: { model: AnalyserModel | null; flight: ReturnType<typeof createFlight> | null } = { model: null, flight: null };
const full = createIonState();

/** One on-axis ion from start to fate with the mixed kernel choice (`plan` prepared for its m/z in `model`). */
export function traceOneMixed(st: IonState, plan: FlightPlan, model: AnalyserModel): void {
  if (single.model !== model || single.flight === null) {
    const choice: FlightChoice = { engine: 'mixed', counters: legacyTally, transferMap: false };
    single.flight = createFlight(model, choice);
    single.model = model;
  }
  const flight = single.flight;
  flight.forgetFirstSteps(); // each ion on its own: no memory of the one before
  flight.setChargeToMass(plan.qOverM);
  full.t = st.t;
  full.z = st.z;
  full.v = st.v;
  full.fate = st.fate;
  full.w = st.w;
  full.tRef = full.xRef = full.yRef = full.vxRef = full.vyRef = 0;
  flight.fly(full, Section.SOURCE);
  st.t = full.t;
  st.z = full.z;
  st.v = full.v;
  st.fate = full.fate;
  st.w = full.w;
}
