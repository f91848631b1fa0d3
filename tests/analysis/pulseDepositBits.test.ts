/**
 * The deposition loop writes the tabulated normal CDF out inline (for speed); it must give the
 * same bits as depositing with standardNormalCdf sample edge by sample edge, the straightforward
 * formulation kept here as the reference. Random centres, widths, areas and record geometries,
 * including pulses hanging over either end of the record and pulses narrower than a sample; and the
 * same for PulseSteps, which computes a pulse's sample shares once for two records (analog detection).
 */
import { describe, expect, it } from 'vitest';
import { depositGaussianPulse, PULSE_REACH_SD, PulseSteps, standardNormalCdf } from '../../src/analysis/detectorResponse';
import { SeededRandom } from '../../src/ions/random';

/** The straightforward deposit: Φ at every sample edge through standardNormalCdf. */
function referenceDeposit(samples: Float64Array, recordStart_s: number, sampleInterval_s: number, centre_s: number, sd_s: number, area: number): number {
  const n = samples.length;
  if (!(sd_s > 0)) {
    const k = Math.floor((centre_s - recordStart_s) / sampleInterval_s);
    if (k < 0 || k >= n) return 0;
    samples[k] += area;
    return area;
  }
  let kLo = Math.floor((centre_s - PULSE_REACH_SD * sd_s - recordStart_s) / sampleInterval_s);
  let kHi = Math.floor((centre_s + PULSE_REACH_SD * sd_s - recordStart_s) / sampleInterval_s);
  if (kHi < 0 || kLo >= n) return 0;
  if (kLo < 0) kLo = 0;
  if (kHi > n - 1) kHi = n - 1;
  const inv = 1 / sd_s;
  let below = standardNormalCdf((recordStart_s + kLo * sampleInterval_s - centre_s) * inv);
  const first = below;
  for (let k = kLo; k <= kHi; k++) {
    const above = standardNormalCdf((recordStart_s + (k + 1) * sampleInterval_s - centre_s) * inv);
    samples[k] += area * (above - below);
    below = above;
  }
  return area * (below - first);
}

describe('depositGaussianPulse', () => {
  it('gives the bits of the straightforward deposit on random inputs', () => {
    const rng = new SeededRandom(20261203, 1);
    for (let trial = 0; trial < 200; trial++) {
      const n = 1 + Math.floor(rng.uniform() * 3000);
      const dt = (0.05 + 2 * rng.uniform()) * 1e-9;
      const start = (rng.uniform() * 60 - 5) * 1e-6;
      const a = new Float64Array(n);
      const b = new Float64Array(n);
      let sumA = 0;
      let sumB = 0;
      for (let ion = 0; ion < 300; ion++) {
        // Centres from a little before the record to a little after it.
        const centre = start + (rng.uniform() * 1.2 - 0.1) * n * dt;
        const pick = rng.uniform();
        const sd = pick < 0.05 ? 0 : pick < 0.2 ? rng.uniform() * 0.3 * dt : rng.uniform() * 40 * dt;
        const area = rng.uniform() * 3;
        sumA += referenceDeposit(a, start, dt, centre, sd, area);
        sumB += depositGaussianPulse(b, start, dt, centre, sd, area);
      }
      expect(Object.is(sumA, sumB)).toBe(true);
      for (let k = 0; k < n; k++) if (!Object.is(a[k], b[k])) expect.fail(`trial ${trial}, sample ${k}: ${b[k]} ≠ ${a[k]}`);
    }
  });

  it('PulseSteps (one pulse added to two records) gives the bits of depositing it in each', () => {
    const rng = new SeededRandom(20261204, 2);
    for (let trial = 0; trial < 100; trial++) {
      const n = 1 + Math.floor(rng.uniform() * 2000);
      const dt = (0.05 + 2 * rng.uniform()) * 1e-9;
      const start = (rng.uniform() * 60 - 5) * 1e-6;
      const deposited = [new Float64Array(n), new Float64Array(n)];
      const stepped = [new Float64Array(n), new Float64Array(n)];
      const steps = new PulseSteps(Math.ceil((2 * PULSE_REACH_SD * 40 * dt) / dt) + 2);
      for (let ion = 0; ion < 200; ion++) {
        const centre = start + (rng.uniform() * 1.2 - 0.1) * n * dt;
        const pick = rng.uniform();
        const sd = pick < 0.05 ? 0 : pick < 0.2 ? rng.uniform() * 0.3 * dt : rng.uniform() * 40 * dt;
        const areas = [rng.uniform() * 3, rng.uniform() * 3];
        steps.set(n, start, dt, centre, sd);
        for (let r = 0; r < 2; r++) {
          depositGaussianPulse(deposited[r], start, dt, centre, sd, areas[r]);
          steps.addTo(stepped[r], areas[r]);
        }
      }
      for (let r = 0; r < 2; r++) for (let k = 0; k < n; k++) if (!Object.is(deposited[r][k], stepped[r][k])) expect.fail(`trial ${trial}, record ${r}, sample ${k}: ${stepped[r][k]} ≠ ${deposited[r][k]}`);
    }
  });
});
