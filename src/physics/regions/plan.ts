/**
 * The per-q/m constants of every region of an analyser (accelerations, plane positions, grid
 * transmissions), filled once per species (or per fragment) and read by the region kernels, so the
 * per-ion loop computes no field twice and allocates nothing.
 */
import type { AnalyserModel } from '../analyser';
import { chargeToMass_C_per_kg } from '../constants';
import type { SolvedMirrorModel } from '../solvedMirror';
import type { SolvedSourceModel } from '../solvedSource';

export interface FlightPlan {
  /** Signed charge-to-mass ratio (C/kg). */
  qOverM: number;
  delay_s: number;
  /** Acceleration in the first source stage while the extraction is held (m/s²). */
  holdAcceleration: number;
  /** Acceleration in each source stage while the extraction is held (the hold potentials; m/s²). */
  readonly sourceHoldAcceleration: Float64Array;
  sourceStageCount: number;
  /** Axial position of each source plane: [0, z1, (z2)] (m). */
  readonly sourcePlane_m: Float64Array;
  readonly sourceAcceleration: Float64Array;
  /** Transmission of the plane closing each source stage. */
  readonly sourceExitTransmission: Float64Array;
  driftLength_m: number;
  mirrorStageCount: number;
  readonly mirrorLength_m: Float64Array;
  readonly mirrorAcceleration: Float64Array;
  /** Transmission of the grid at the entry of each mirror stage (entrance grid first). */
  readonly mirrorEntryTransmission: Float64Array;
  returnLength_m: number;
  postGap_m: number;
  postAcceleration: number;
  postGridTransmission: number;
  maxFlightTime_s: number;
  /** Gridless mirror with a solved field (traced in 3-D, src/physics/regions/solvedRegion.ts); null otherwise. */
  solvedMirror: SolvedMirrorModel | null;
  /** Source with a solved field (traced in 3-D from the start); null otherwise. */
  solvedSource: SolvedSourceModel | null;
}

// Enough for tabulated mirror profiles, which become one uniform stage per table segment.
const MAX_STAGES = 256;

export function createFlightPlan(): FlightPlan {
  return {
    qOverM: 0,
    delay_s: 0,
    holdAcceleration: 0,
    sourceStageCount: 0,
    sourcePlane_m: new Float64Array(MAX_STAGES + 1),
    sourceAcceleration: new Float64Array(MAX_STAGES),
    sourceHoldAcceleration: new Float64Array(MAX_STAGES),
    sourceExitTransmission: new Float64Array(MAX_STAGES),
    driftLength_m: 0,
    mirrorStageCount: 0,
    mirrorLength_m: new Float64Array(MAX_STAGES),
    mirrorAcceleration: new Float64Array(MAX_STAGES),
    mirrorEntryTransmission: new Float64Array(MAX_STAGES),
    returnLength_m: 0,
    postGap_m: 0,
    postAcceleration: 0,
    postGridTransmission: 1,
    maxFlightTime_s: 0,
    solvedMirror: null,
    solvedSource: null,
  };
}

/** Fill `plan` for ions of signed charge-to-mass ratio `qOverM_C_per_kg` in `model` (a fragment's q/m, say). */
export function prepareFlightPlan(plan: FlightPlan, model: AnalyserModel, qOverM_C_per_kg: number): FlightPlan {
  const k = qOverM_C_per_kg;
  const src = model.source;
  plan.qOverM = k;
  plan.delay_s = src.delay_s;
  plan.sourceStageCount = src.stageLengths_m.length;
  plan.sourcePlane_m[0] = 0;
  for (let j = 0; j < src.stageLengths_m.length; j++) {
    const gap = src.stageLengths_m[j];
    plan.sourcePlane_m[j + 1] = plan.sourcePlane_m[j] + gap;
    plan.sourceAcceleration[j] = (k * (src.planes[j].final_V - src.planes[j + 1].final_V)) / gap;
    plan.sourceHoldAcceleration[j] = (k * (src.planes[j].hold_V - src.planes[j + 1].hold_V)) / gap;
    plan.sourceExitTransmission[j] = src.planeTransmission[j + 1] ?? 1;
  }
  plan.holdAcceleration = (k * (src.planes[0].hold_V - src.planes[1].hold_V)) / src.stageLengths_m[0];
  plan.driftLength_m = model.drift.length_m;
  const mirror = model.mirror;
  plan.mirrorStageCount = mirror ? mirror.stages.length : 0;
  plan.returnLength_m = mirror ? mirror.returnLength_m : 0;
  if (mirror) {
    let entry = model.drift.potential_V;
    for (let j = 0; j < mirror.stages.length; j++) {
      const stage = mirror.stages[j];
      plan.mirrorLength_m[j] = stage.length_m;
      plan.mirrorAcceleration[j] = (k * (entry - stage.exitPotential_V)) / stage.length_m;
      plan.mirrorEntryTransmission[j] = j === 0 ? mirror.entranceGridTransmission : (mirror.innerGridTransmission[j - 1] ?? 1);
      entry = stage.exitPotential_V;
    }
  }
  const post = model.postAcceleration;
  plan.postGap_m = post ? post.gap_m : 0;
  plan.postAcceleration = post ? (k * (model.drift.potential_V - post.potential_V)) / post.gap_m : 0;
  plan.postGridTransmission = post ? post.gridTransmission : 1;
  plan.maxFlightTime_s = model.maxFlightTime_s;
  plan.solvedMirror = model.mirror?.solved ?? null;
  plan.solvedSource = model.source.solved ?? null;
  return plan;
}

/** Signed charge-to-mass ratio (C/kg) of an ion of m/z `mz` in `model` (its polarity gives the sign). */
export function chargeToMassIn(model: AnalyserModel, mz: number): number {
  return model.polarity * chargeToMass_C_per_kg(mz);
}

/** Fill `plan` for ions of the given m/z in `model`. */
export function preparePlanForMz(plan: FlightPlan, model: AnalyserModel, mz: number): FlightPlan {
  return prepareFlightPlan(plan, model, chargeToMassIn(model, mz));
}
