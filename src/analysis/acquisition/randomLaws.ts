/**
 * The two random laws of ion load: how many ions a shot holds (Poisson) and how large each ion's
 * detector pulse is (gamma, i.e. Pólya, gain distribution).
 *
 * Poisson: inversion by sequential search for means below 10 (exact), and for larger means the
 * transformed-rejection sampler PTRS of W. Hörmann, "The transformed rejection method for
 * generating Poisson random variables", Insurance: Mathematics and Economics 12 (1993) 39–45
 * (constants as printed there). Gamma: G. Marsaglia & W. W. Tsang, "A simple method for generating
 * gamma variables", ACM TOMS 26 (2000) 363–372, with the shape < 1 boost u^(1/shape).
 */
import type { SeededRandom } from '../../ions/random';

/** Below this mean the sequential inversion is used (cost grows with the mean). */
const INVERSION_LIMIT = 10;

/** ln(k!) exactly summed up to 256, Stirling series (error < 1e-15 relative) beyond. */
const LOG_FACTORIAL = new Float64Array(257);
for (let k = 1; k <= 256; k++) LOG_FACTORIAL[k] = LOG_FACTORIAL[k - 1] + Math.log(k);

export function logFactorial(k: number): number {
  if (k <= 256) return LOG_FACTORIAL[k];
  const n = k + 1;
  const inv = 1 / n;
  const inv2 = inv * inv;
  // ln Γ(n) by Stirling's series (Abramowitz & Stegun 6.1.41), four terms.
  return (n - 0.5) * Math.log(n) - n + 0.5 * Math.log(2 * Math.PI) + inv * (1 / 12 - inv2 * (1 / 360 - inv2 * (1 / 1260 - inv2 / 1680)));
}

/** P(K = k) for K ~ Poisson(mean). */
export function poissonPmf(k: number, mean: number): number {
  if (mean === 0) return k === 0 ? 1 : 0;
  return Math.exp(k * Math.log(mean) - mean - logFactorial(k));
}

/** One Poisson deviate of the given mean (≥ 0). */
export function samplePoisson(rng: SeededRandom, mean: number): number {
  if (!(mean > 0)) return 0;
  if (mean < INVERSION_LIMIT) {
    // Sequential search of the CDF.
    let k = 0;
    let p = Math.exp(-mean);
    let cdf = p;
    const u = rng.uniform();
    while (u > cdf && k < 1000) {
      k++;
      p *= mean / k;
      cdf += p;
    }
    return k;
  }
  const smu = Math.sqrt(mean);
  const b = 0.931 + 2.53 * smu;
  const a = -0.059 + 0.02483 * b;
  const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
  const vr = 0.9277 - 3.6224 / (b - 2);
  const logMean = Math.log(mean);
  for (;;) {
    const u = rng.uniform() - 0.5;
    const v = rng.uniform();
    const us = 0.5 - Math.abs(u);
    const k = Math.floor(((2 * a) / us + b) * u + mean + 0.43);
    if (us >= 0.07 && v <= vr) return k;
    if (k < 0 || (us < 0.013 && v > us)) continue;
    if (Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <= -mean + k * logMean - logFactorial(k)) return k;
  }
}

/** One gamma deviate with the given shape and unit scale (mean = shape). */
export function sampleGamma(rng: SeededRandom, shape: number): number {
  if (shape < 1) {
    let u = rng.uniform();
    while (u === 0) u = rng.uniform();
    return sampleGamma(rng, shape + 1) * Math.pow(u, 1 / shape);
  }
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x: number;
    let v: number;
    do {
      x = rng.normal();
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = rng.uniform();
    if (u < 1 - 0.0331 * x * x * x * x) return d * v;
    if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}

/**
 * A pulse-height (gain) factor of mean 1 and relative sd `relativeSd` from the Pólya (gamma)
 * distribution, shape 1/relativeSd²: relative sd 1 is the exponential law of a single multiplier
 * stage run unsaturated, smaller values the peaked distribution of a saturated multiplier.
 * relativeSd 0 gives exactly 1 (every pulse alike).
 */
export function sampleGain(rng: SeededRandom, relativeSd: number): number {
  if (!(relativeSd > 0)) return 1;
  const shape = 1 / (relativeSd * relativeSd);
  return sampleGamma(rng, shape) / shape;
}
