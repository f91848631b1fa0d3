/**
 * Counts per shot follow the Poisson law P(k) = μ^k·e^(−μ)/k! (e.g. W. Feller, An Introduction to
 * Probability Theory and Its Applications, vol. 1, 3rd ed., 1968, ch. VI.6): mean and variance μ,
 * and the frequencies pass a chi-square test against the pmf. The gain factor follows the gamma
 * law: mean 1 and the requested relative sd (moments of the gamma distribution, same reference ch. II).
 */
import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../../src/ions/random';
import { allocateEnsemble } from '../../../src/ions/ensemble';
import { logFactorial, poissonPmf, sampleGain, samplePoisson } from '../../../src/analysis/acquisition/randomLaws';
import { partitionShots } from '../../../src/analysis/acquisition/shots';

/** Chi-square statistic and degrees of freedom of observed counts against expected, bins with < 5 expected merged into the tails. */
function chiSquare(observed: Map<number, number>, pmf: (k: number) => number, total: number): { chi2: number; dof: number } {
  const keys = [...observed.keys()];
  const lo = Math.min(...keys);
  const hi = Math.max(...keys);
  let chi2 = 0;
  let dof = -1;
  let o = 0;
  let e = 0;
  for (let k = 0; k <= hi + 1; k++) {
    o += observed.get(k) ?? 0;
    e += k === hi + 1 ? Math.max(0, total - [...Array(hi + 1).keys()].reduce((s, j) => s + total * pmf(j), 0)) : total * pmf(k);
    if (e >= 5 || k === hi + 1) {
      if (e > 0) {
        chi2 += ((o - e) * (o - e)) / e;
        dof++;
      }
      o = 0;
      e = 0;
    }
  }
  void lo;
  return { chi2, dof };
}

describe('Poisson counts per shot', () => {
  it('ln k! matches the exact sum across the table/series switch', () => {
    let exact = 0;
    for (let k = 1; k <= 400; k++) {
      exact += Math.log(k);
      expect(Math.abs(logFactorial(k) - exact)).toBeLessThan(1e-13 * Math.max(1, exact));
    }
  });

  it.each([0.3, 4, 9.5, 10, 37, 420])('mean %s: mean, variance and chi-square against the pmf', (mu) => {
    const rng = new SeededRandom(17, 3);
    const n = 200_000;
    const seen = new Map<number, number>();
    let s1 = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const k = samplePoisson(rng, mu);
      seen.set(k, (seen.get(k) ?? 0) + 1);
      s1 += k;
      s2 += k * k;
    }
    const mean = s1 / n;
    const variance = s2 / n - mean * mean;
    expect(Math.abs(mean - mu)).toBeLessThan(5 * Math.sqrt(mu / n));
    expect(Math.abs(variance / mu - 1)).toBeLessThan(5 * Math.sqrt(2 / n) + 5 / Math.sqrt(n * mu));
    const { chi2, dof } = chiSquare(seen, (k) => poissonPmf(k, mu), n);
    // 99.9 % point of chi-square: dof + 3.09·sqrt(2·dof) + a margin for small dof.
    expect(chi2).toBeLessThan(dof + 3.09 * Math.sqrt(2 * dof) + 10);
  });

  it('a shot partition gives each species Poisson counts with mean μ·(its share), and uses every ion once', () => {
    const ens = allocateEnsemble(
      [
        { label: 'a', mz: 100, charge: 1, abundance: 3 },
        { label: 'b', mz: 200, charge: 1, abundance: 1 },
      ],
      [300_000, 100_000],
    );
    const p = partitionShots(ens, 2, 'poisson', 9);
    const used = new Uint8Array(ens.count);
    for (let j = 0; j < p.ions.length; j++) used[p.ions[j]]++;
    expect(used.every((u) => u === 1)).toBe(true);
    const counts = new Map<number, number>();
    const full = p.shots - 10; // the last shots may be cut short by the end of a block
    for (let k = 0; k < full; k++) {
      let b = 0;
      for (let j = p.start[k]; j < p.start[k + 1]; j++) if (p.ions[j] >= 300_000) b++;
      counts.set(b, (counts.get(b) ?? 0) + 1);
    }
    const { chi2, dof } = chiSquare(counts, (k) => poissonPmf(k, 0.5), full);
    expect(chi2).toBeLessThan(dof + 3.09 * Math.sqrt(2 * dof) + 10);
    expect(Math.abs(p.shots - 200_000)).toBeLessThan(5 * Math.sqrt(200_000));
  });
});

describe('Pólya (gamma) gain factor', () => {
  it.each([0.2, 0.5, 1, 1.6])('relative sd %s: mean 1 and the requested sd', (rel) => {
    const rng = new SeededRandom(5);
    const n = 200_000;
    let s1 = 0;
    let s2 = 0;
    let negative = 0;
    for (let i = 0; i < n; i++) {
      const g = sampleGain(rng, rel);
      if (g < 0) negative++;
      s1 += g;
      s2 += g * g;
    }
    const mean = s1 / n;
    expect(negative).toBe(0);
    expect(Math.abs(mean - 1)).toBeLessThan(5 * rel / Math.sqrt(n));
    expect(Math.abs(Math.sqrt(s2 / n - mean * mean) / rel - 1)).toBeLessThan(0.02);
  });
  it('relative sd 0 gives every pulse the same height', () => {
    expect(sampleGain(new SeededRandom(1), 0)).toBe(1);
  });
});
