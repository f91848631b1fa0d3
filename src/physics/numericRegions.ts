/**
 * Compatibility entry points of the axial integrator (src/physics/regions/axialIntegrator.ts):
 * single crossings on one shared integrator, for tests and benchmarks that cross one region at a
 * time. The engine itself uses the integrators its driver owns.
 */
import type { PolynomialProfile, SourceModel } from './analyser';
import { Exit as RegionExitCode, Fate } from './fates';
import { AxialIntegrator, type NumericState } from './regions/axialIntegrator';
import { legacyTally } from './regions/legacyTally';

export type { NumericState };

/** The exit codes under their older names (views of the one vocabulary in src/physics/fates.ts). */
export const Exit = { HIGH: RegionExitCode.FAR, LOW: RegionExitCode.ENTRY, TIME_LIMIT: RegionExitCode.PAUSED, FAILED: Fate.INTEGRATION_FAILED } as const;

export interface IntegrationCounters {
  steps: number;
  evaluations: number;
  lastMessage: string;
}

/** The axial part of the process-wide diagnostic tally (src/physics/regions/legacyTally.ts). */
export const counters: IntegrationCounters = {
  get steps() {
    return legacyTally.axialSteps;
  },
  set steps(n: number) {
    legacyTally.axialSteps = n;
  },
  get evaluations() {
    return legacyTally.axialEvaluations;
  },
  set evaluations(n: number) {
    legacyTally.axialEvaluations = n;
  },
  get lastMessage() {
    return legacyTally.lastMessage;
  },
  set lastMessage(m: string) {
    legacyTally.lastMessage = m;
  },
};

const shared = new AxialIntegrator(legacyTally);

/** Cross [lo, hi] with constant acceleration a. */
export function crossUniformNumeric(st: NumericState, a: number, lo: number, hi: number, tEnd: number): number {
  return shared.crossUniform(st, a, lo, hi, tEnd);
}

/** Cross source stage `stage` (absolute z between its planes) under time-dependent potentials. */
export function crossSourceStageNumeric(st: NumericState, source: SourceModel, qOverM: number, stage: number, lo: number, hi: number, tEnd: number, crossCheck: boolean): number {
  return shared.crossSourceStage(st, source, qOverM, stage, lo, hi, tEnd, crossCheck);
}

/** Inside a polynomial-profile mirror: x from the entrance grid (0) to the back plate (depth). */
export function crossProfileNumeric(st: NumericState, profile: PolynomialProfile, qOverM: number, tEnd: number): number {
  return shared.crossProfile(st, profile, qOverM, tEnd);
}
