/**
 * Delayed extraction: the tuned optimum delay against the time-lag focusing condition (Wiley &
 * McLaren 1955, Rev. Sci. Instrum. 26, 1150; Vestal, Juhasz & Martin 1995, Rapid Commun. Mass
 * Spectrom. 9, 1044) for a field-free delay τ followed by an ideal step to the extraction fields.
 *
 * Derivation of the expected delay (independent of src/tuning/analyticStarts.ts, which uses the
 * chain-rule derivative): an ion formed at the repeller (z = 0) with axial speed v0 coasts to
 * z = v0·τ, then crosses the rest of stage 1 (x1 = s1 − v0·τ, acceleration a1 = qE1/m) and stage 2
 * (length s2, a2 = qE2/m) and drifts D. With v1² = v0² + 2·a1·x1, v2² = v1² + 2·a2·s2 and the
 * uniform-field crossing time 2x/(v_in + v_out):
 *   T(v0; τ) = τ + 2·x1/(v0 + v1) + 2·s2/(v1 + v2) + D/v2.
 * First-order focus of the speed spread: ∂T/∂v0 = 0 at the mean speed. ∂T/∂v0 is taken here by a
 * central difference of this closed form, and its root in τ found by bisection.
 */
import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../src/physics/constants';
import { timeLagFocusDelay_s } from '../../src/tuning/analyticStarts';
import { delayedLinear, inProcessEngine } from './fixtures';

const s1 = 3e-3;
const s2 = 10e-3;
const D = 1.2;
const E1 = (20000 - 18800) / s1;
const E2 = 18800 / s2;
const V0 = 400; // mean start speed (m/s); the spread is narrow (σ = 20 m/s) so the first-order condition governs

function flightTime(mz: number, v0: number, tau: number): number {
  const qm = ELEMENTARY_CHARGE_C / (mz * ATOMIC_MASS_CONSTANT_KG);
  const x1 = s1 - v0 * tau;
  const v1 = Math.sqrt(v0 * v0 + 2 * qm * E1 * x1);
  const v2 = Math.sqrt(v1 * v1 + 2 * qm * E2 * s2);
  return tau + (2 * x1) / (v0 + v1) + (2 * s2) / (v1 + v2) + D / v2;
}

function analyticDelay_ns(mz: number): number {
  const slope = (tau: number) => (flightTime(mz, V0 + 0.01, tau) - flightTime(mz, V0 - 0.01, tau)) / 0.02;
  let lo = 1e-9;
  let hi = 2e-6;
  expect(Math.sign(slope(lo))).toBe(-Math.sign(slope(hi)));
  for (let i = 0; i < 80; i++) {
    const mid = 0.5 * (lo + hi);
    if (Math.sign(slope(mid)) === Math.sign(slope(lo))) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi) * 1e9;
}

describe('optimal delay of delayed extraction grows with m/z as time-lag focusing predicts', () => {
  const masses = [500, 1500, 4500];
  const preset = delayedLinear({
    delay_ns: 100,
    velocity: { kind: 'normal', mean_m_per_s: V0, sd_m_per_s: 20 },
    mz: masses.map((mz) => ({ mz })),
    ions: 4500,
  });

  it('tuned delays match the analytic optimum within 0.5 % at three masses, and rise with m/z', async () => {
    const engine = inProcessEngine(2);
    const tuned: number[] = [];
    for (const mz of masses) {
      const r = await engine.optimise({
        preset,
        parameters: [{ path: 'source.extraction.delay_ns', min: 0, max: 1500 }],
        objective: { name: 'max-r-at-mz', targetMz: mz },
        useAnalyticStart: false,
      });
      tuned.push(r.best[0]);
    }
    const expected = masses.map(analyticDelay_ns);
    for (let i = 0; i < masses.length; i++) expect(Math.abs(tuned[i] / expected[i] - 1)).toBeLessThan(0.005);
    // The trend: strictly increasing, and between √m and m scaling as the derivation shows
    // (τ ≈ (v0 − g·v1)/a1: a term ∝ √(m/z) and a term ∝ m/z from the start speed).
    expect(tuned[1]).toBeGreaterThan(tuned[0]);
    expect(tuned[2]).toBeGreaterThan(tuned[1]);
    const ratio = tuned[2] / tuned[0];
    expect(ratio).toBeGreaterThan(Math.sqrt(masses[2] / masses[0]));
    expect(ratio).toBeLessThan(masses[2] / masses[0]);
    expect(Math.abs(ratio / (expected[2] / expected[0]) - 1)).toBeLessThan(0.01);
  });

  it('the analytic start of the tuner is this condition', async () => {
    const r = await inProcessEngine(1).optimise({
      preset,
      parameters: [{ path: 'source.extraction.delay_ns', min: 0, max: 1500 }],
      objective: { name: 'max-r-at-mz', targetMz: 1500 },
      ions: 300,
    });
    // The tuner's start uses the mean of the truncated normal (no truncation here) and a chain-rule derivative.
    expect(Math.abs(r.start[0] / analyticDelay_ns(1500) - 1)).toBeLessThan(1e-5);
    expect(r.startSource?.join(' ')).toMatch(/time-lag focus/);
    for (const mz of masses) expect(Math.abs((timeLagFocusDelay_s(preset, mz) ?? NaN) * 1e9 / analyticDelay_ns(mz) - 1)).toBeLessThan(1e-5);
  });
});
