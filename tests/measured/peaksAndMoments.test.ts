/**
 * The fit's peak statistics and the peak pairing.
 * - Moments of a sampled gaussian: centroid μ and variance σ² + Δ²/12 for bins of width Δ
 *   (Sheppard's correction for grouping, W. F. Sheppard, Proc. London Math. Soc. 29 (1898) 353;
 *   standard textbook result, e.g. Kendall & Stuart, The Advanced Theory of Statistics, vol. 1).
 * - Counting-statistics variance of the centroid of N counts from a gaussian: σ²/N (the variance of
 *   a sample mean, σ² here including the binning's Δ²/12), and of the rms width: σ²/(2N) for a
 *   gaussian (from Var(s²) = 2σ⁴/N).
 */
import { describe, expect, it } from 'vitest';
import { standardNormalCdf } from '../../src/analysis/detectorResponse';
import { windowedMoments } from '../../src/measured/moments';
import { matchPeaks, pickMeasuredPeaks, triangularSmooth, type MeasuredPeak } from '../../src/measured/peakMatch';
import { modelProfile } from '../../src/measured/profile';
import { simulate } from '../../src/simulation/run';
import { testPreset } from './recoveryFixture';

/** Expected counts per bin of width dt for N counts from N(mu, sd²), bins centred on x_k = x0 + k·dt. */
function gaussianBins(n: number, x0: number, dt: number, mu: number, sd: number, N: number): { x: Float64Array; y: Float64Array } {
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    x[k] = x0 + k * dt;
    y[k] = N * (standardNormalCdf((x[k] + dt / 2 - mu) / sd) - standardNormalCdf((x[k] - dt / 2 - mu) / sd));
  }
  return { x, y };
}

describe('windowed moments', () => {
  it('give the centroid and Sheppard-corrected width of a sampled gaussian, and the counting variances', () => {
    const sd = 2;
    const dt = 0.7;
    const N = 10_000;
    const { x, y } = gaussianBins(400, -140, dt, 3.3, sd, N);
    const m = windowedMoments(x, y, 0, 9 * sd)!;
    expect(m.converged).toBe(true);
    expect(m.centroid).toBeCloseTo(3.3, 6);
    expect(m.rmsWidth ** 2).toBeCloseTo(sd * sd + (dt * dt) / 12, 4);
    // The binned counts are spread by σ² + Δ²/12, so the sample mean's variance is that over N.
    expect(m.centroidVariance / ((sd * sd + (dt * dt) / 12) / N)).toBeCloseTo(1, 3);
    expect(m.rmsWidthVariance / ((sd * sd) / (2 * N))).toBeCloseTo(1, 1);
  });

  it('move smoothly with the peak (partial bins at the window edges) and return null without signal', () => {
    const a = gaussianBins(300, 0, 1, 150, 3, 1000);
    const b = gaussianBins(300, 0, 1, 150.001, 3, 1000);
    const ma = windowedMoments(a.x, a.y, 150, 5)!;
    const mb = windowedMoments(b.x, b.y, 150, 5)!;
    expect((mb.centroid - ma.centroid) / 0.001).toBeCloseTo(1, 2);
    expect(windowedMoments(a.x, new Float64Array(300), 150, 5)).toBeNull();
  });
});

describe('peak picking and matching', () => {
  it('finds each peak once despite noise on its top, and pairs nearest first, one to one', () => {
    const p1 = gaussianBins(2000, 0, 0.5, 300, 2, 5000);
    const p2 = gaussianBins(2000, 0, 0.5, 700, 3, 3000);
    const y = p1.y.map((v, k) => v + p2.y[k] + (k % 2 === 0 ? 6 : -6) * Math.sqrt(v + p2.y[k]) * 0.2);
    const peaks = pickMeasuredPeaks({ format: 'text', axis: 'time', x: p1.x, intensity: y, title: null, timeUnitFrom: 'user', notes: [] });
    expect(peaks).toHaveLength(2);
    expect(peaks[0].position).toBeCloseTo(300, 0);
    expect(peaks[1].position).toBeCloseTo(700, 0);
    const measured: MeasuredPeak[] = [300, 310, 700].map((position, i) => ({ position, apexIndex: i, height: 1, fwhm: 1, area: 1 }));
    const predicted = [
      { species: 0, label: 'a', mz: 1, position: 305.5 },
      { species: 1, label: 'b', mz: 2, position: 309 },
      { species: 2, label: 'c', mz: 3, position: 900 },
    ];
    const matches = matchPeaks(measured, predicted, () => 20);
    expect(matches.map((m) => [m.label, m.measured])).toEqual([
      ['a', 300],
      ['b', 310],
    ]);
    expect(triangularSmooth(new Float64Array([0, 0, 9, 0, 0]), 1)).toEqual(new Float64Array([0, 2.25, 4.5, 2.25, 0]));
  });
});

describe('model profile', () => {
  it('reproduces a noiseless spectrum of the same preset: residual far below the signal', () => {
    const preset = testPreset({ timeOffset_ns: 12.5 });
    const s = simulate(preset, { ions: 6000, withSpectrum: true }).analysis.spectrum!;
    const spectrum = { format: 'text' as const, axis: 'time' as const, x: s.time_ns.map((t) => t * 1e-9), intensity: s.intensity.map((v) => v * 3), title: null, timeUnitFrom: 'user' as const, notes: [] };
    const p = modelProfile(preset, spectrum, { ions: 6000 })!;
    expect(p.scale).toBeCloseTo(3, 9);
    const peak = Math.max(...spectrum.intensity);
    expect(Math.max(...p.residual.map(Math.abs))).toBeLessThan(1e-9 * peak);
  });
});
