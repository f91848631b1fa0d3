/**
 * The m/z at which the energy derivative of the flight time changes sign — where delayed extraction
 * focuses the start-energy spread best — found by a scan over m/z with the exact path recorder
 * (src/physics/trajectory.ts: the exact engine's own kernels) from each m/z's mean start position
 * and mean axial start energy. Runs in the worker as part of a run (RunRequest.focusScan).
 */
import { BOLTZMANN_J_PER_K, ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../physics/constants';
import { createExactPlan, prepareExactPlan } from '../physics/exactEngine';
import { Fate } from '../physics/fates';
import { createTrajectory, traceTrajectory } from '../physics/trajectory';
import type { AnalyserModel } from '../physics/analyser';
import type { Preset } from '../presets/schema';

export interface FocusScan {
  /** m/z where dT/dU0 changes sign, or null when it keeps one sign over the scanned range. */
  readonly energyFocusMz: number | null;
  readonly scannedMz: readonly [number, number];
  /** Sign of dT/dU0 when there is no crossing: −1 faster ions arrive earlier, +1 later. */
  readonly energySlopeSign: number;
}

const plan = createExactPlan();
const trajectory = createTrajectory();

function massKg(mz: number, charge: number): number {
  return mz * charge * ATOMIC_MASS_CONSTANT_KG;
}

/** Mean start position and mean axial start energy of an ion of this m/z. */
function startConditions(preset: Preset, mz: number, charge: number): { z0: number; U0: number } {
  const pos = preset.ions.startPosition;
  const z0 = (pos.kind === 'surface' ? pos.position_mm : pos.kind === 'uniform' ? (pos.from_mm + pos.to_mm) / 2 : pos.mean_mm) * 1e-3;
  const m = massKg(mz, charge);
  const vel = preset.ions.startVelocity as { kind: string; mean_m_per_s?: number; sd_m_per_s?: number; mean_eV?: number; temperature_K?: number };
  if (vel.kind === 'normal') {
    const v = Math.max(Math.abs(vel.mean_m_per_s ?? 0), vel.sd_m_per_s ?? 0, 1);
    return { z0, U0: 0.5 * m * v * v };
  }
  if (vel.kind === 'energy') return { z0, U0: Math.max(vel.mean_eV ?? 0, 0.01) * ELEMENTARY_CHARGE_C };
  return { z0, U0: 0.5 * BOLTZMANN_J_PER_K * Math.max(vel.temperature_K ?? 300, 1) };
}

/** Scan m/z from a third of the lightest species to three times the heaviest, through `model` (SI). */
export function focusScan(model: AnalyserModel, preset: Preset): FocusScan {
  const species = preset.ions.species;
  const sorted = species.map((s) => s.mz).sort((a, b) => a - b);
  const charge = species[0].charge;
  const flightTime = (mz: number, z0: number, U0: number): number => {
    prepareExactPlan(plan, model, mz);
    traceTrajectory(trajectory, plan, z0, Math.sqrt((2 * Math.max(U0, 0)) / massKg(mz, charge)));
    return trajectory.fate === Fate.DETECTED ? trajectory.flightTime_s : NaN;
  };

  // dT/dU0 across m/z: where it changes sign, the extraction delay focuses the start-energy spread.
  const lo = sorted[0] / 3;
  const hi = sorted[sorted.length - 1] * 3;
  const points = 48;
  let previous: { mz: number; slope: number } | null = null;
  let crossing: number | null = null;
  let sign = 0;
  for (let k = 0; k < points && crossing === null; k++) {
    const mz = lo * (hi / lo) ** (k / (points - 1));
    const s = startConditions(preset, mz, charge);
    const h = Math.max(s.U0 * 2e-3, 1e-26);
    const slope = (flightTime(mz, s.z0, s.U0 + h) - flightTime(mz, s.z0, Math.max(s.U0 - h, 0))) / (2 * h);
    if (!Number.isFinite(slope)) continue;
    if (sign === 0) sign = Math.sign(slope);
    if (previous && Math.sign(slope) !== Math.sign(previous.slope) && slope !== previous.slope) {
      // Linear interpolation in log m/z between the bracketing points.
      const f = previous.slope / (previous.slope - slope);
      crossing = Math.exp(Math.log(previous.mz) + f * (Math.log(mz) - Math.log(previous.mz)));
    }
    previous = { mz, slope };
  }

  return { energyFocusMz: crossing, scannedMz: [lo, hi], energySlopeSign: sign };
}
