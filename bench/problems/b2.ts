/**
 * Benchmark problem B2 (delayed extraction with a rising pulse, linear), exactly as the shared
 * benchmark definition gives it: repeller at z = 0, 17 000 V before 300 ns, then
 * 17 000 + 3 000·(1 − exp(−(t − 300 ns)/10 ns)) V; extraction grid 17 000 V at 3 mm; ground grid
 * 0 V at 13 mm; 1.500 m drift to the detector; m/z 5000, z = +1; start at z = 0 with axial velocity
 * normal (mean 500 m/s, sd 200 m/s), redrawn while below 50 m/s.
 *
 * Also the independent reference: the motion in the rising field has the closed form
 * z(s) = z1 + v1·s + A·(s²/2 − τ·s + τ²·(1 − e^{−s/τ})), s = t − 300 ns, which Newton's method
 * solves for the time the ion reaches the extraction grid; the static stage and the drift follow
 * from elementary kinematics.
 */
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../src/physics/constants';
import type { PresetInput } from '../../src/presets/schema';

export const B2_IONS = 100_000;
export const B2_SEED = 20_261_202;

export const b2Preset: PresetInput = {
  formatVersion: 1,
  name: 'Benchmark B2',
  description: 'Benchmark problem B2: delayed extraction with an exponentially rising repeller pulse, linear.',
  polarity: 'positive',
  source: {
    repeller: { potential_V: 20_000, hold_V: 17_000 },
    extractionGrid: { gap_mm: 3, potential_V: 17_000 },
    groundGrid: { gap_mm: 10 },
    extraction: { mode: 'delayed', delay_ns: 300, rise: { shape: 'exponential', timeConstant_ns: 10 } },
  },
  drift: { length_mm: 1500, potential_V: 0 },
  mirror: { type: 'none' },
  detector: {},
  ions: {
    species: [{ label: 'm/z 5000', mz: 5000, charge: 1, abundance: 1 }],
    startPosition: { kind: 'surface', position_mm: 0 },
    startVelocity: { kind: 'normal', mean_m_per_s: 500, sd_m_per_s: 200, minimum_m_per_s: 50 },
  },
  run: { ions: B2_IONS, seed: B2_SEED },
};

/** Flight time (s) of a B2 ion with start speed v0, computed independently of the tracer. */
export function b2ReferenceFlightTime(v0: number): number {
  const k = ELEMENTARY_CHARGE_C / (5000 * ATOMIC_MASS_CONSTANT_KG);
  const delay = 300e-9;
  const tau = 10e-9;
  const d1 = 3e-3;
  const d2 = 10e-3;
  const L = 1.5;
  const A = (k * 3000) / d1; // final acceleration in stage 1
  const z1 = v0 * delay;
  const z = (s: number) => z1 + v0 * s + A * (0.5 * s * s - tau * s - tau * tau * Math.expm1(-s / tau));
  const v = (s: number) => v0 + A * (s + tau * Math.expm1(-s / tau));
  // Newton from the uniform-field estimate; z is convex in s, so the iteration converges monotonically.
  let s = Math.sqrt((2 * (d1 - z1)) / A);
  for (let i = 0; i < 100; i++) {
    const step = (z(s) - d1) / v(s);
    s -= step;
    if (Math.abs(step) <= 1e-16 * s) break;
  }
  const vGrid = v(s);
  const a2 = (k * 17_000) / d2;
  const vExit = Math.sqrt(vGrid * vGrid + 2 * a2 * d2);
  return delay + s + (2 * d2) / (vGrid + vExit) + L / vExit;
}
