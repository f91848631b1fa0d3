/**
 * What the detector and the trigger do to the ions' true arrival times.
 *
 * - Single-ion response: a gaussian current pulse of the given FWHM, area = the ion's intensity
 *   weight. (A real electron-multiplier pulse rises faster than it falls; the symmetric gaussian
 *   is our stated simplification, characterised by its FWHM alone.)
 * - Detector timing jitter (transit-time spread of the multiplier), independent per ion, gaussian
 *   with the given sd. It is folded into the pulse analytically: a gaussian pulse at a gaussian-
 *   distributed time has, on average over many shots, the gaussian shape of variance
 *   sd_pulse² + sd_jitter². The folded spectrum is that many-shot expectation, without the
 *   Monte-Carlo noise that drawing one jitter value per ion would add.
 * - Start (trigger) jitter, common to a whole shot: the ensemble is treated as `shots` laser or
 *   pusher shots accumulated by the digitizer. Ion i belongs to shot i mod shots (ensembles are
 *   grouped by species, so every shot holds every species, as in a real shot), and every ion of a
 *   shot is shifted by that shot's offset, drawn from N(0, sd_trigger²) by a seeded generator.
 *   With one shot the whole spectrum moves but no peak broadens; with many shots peaks broaden by
 *   the quadrature sum.
 */
import { SeededRandom } from '../ions/random';

/** FWHM = 2·sqrt(2·ln 2)·σ for a gaussian. */
export const GAUSSIAN_FWHM_PER_SD = 2 * Math.sqrt(2 * Math.LN2);

/** The pulse is deposited over ±PULSE_REACH_SD standard deviations; Φ(−8) ≈ 6e-16 is lost. */
export const PULSE_REACH_SD = 8;

/** Stream index of the trigger offsets in SeededRandom, so other users of the seed stay apart. */
const TRIGGER_STREAM = 0x7419;

export interface DetectorSettings {
  /** FWHM of the single-ion current pulse (gaussian); 0 for an ideal detector. */
  readonly pulseFwhm_s: number;
  /** Sd of the per-ion detector timing jitter. */
  readonly detectorJitterSd_s: number;
  /** Sd of the start (trigger) jitter, one offset per shot. */
  readonly triggerJitterSd_s: number;
  /** Number of shots the ensemble is split into (integer ≥ 1). */
  readonly shots: number;
  /** Seed of the trigger offsets. */
  readonly seed: number;
}

export interface SettingIssue {
  /** The field at fault, e.g. `detector.pulseFwhm_s`. */
  readonly path: string;
  readonly message: string;
}

/** Problems with detector settings, each naming its field under `prefix`; empty when valid. */
export function checkDetectorSettings(s: DetectorSettings, prefix = 'detector'): SettingIssue[] {
  const issues: SettingIssue[] = [];
  const nonNegative = (value: number, field: string): void => {
    if (!Number.isFinite(value) || value < 0) issues.push({ path: `${prefix}.${field}`, message: `must be a finite number ≥ 0 (got ${value})` });
  };
  nonNegative(s.pulseFwhm_s, 'pulseFwhm_s');
  nonNegative(s.detectorJitterSd_s, 'detectorJitterSd_s');
  nonNegative(s.triggerJitterSd_s, 'triggerJitterSd_s');
  if (!Number.isInteger(s.shots) || s.shots < 1) issues.push({ path: `${prefix}.shots`, message: `must be an integer ≥ 1 (got ${s.shots})` });
  if (!Number.isInteger(s.seed)) issues.push({ path: `${prefix}.seed`, message: `must be an integer (got ${s.seed})` });
  return issues;
}

/** Sd of the effective single-ion response: pulse and detector jitter added in quadrature. */
export function effectivePulseSd_s(s: DetectorSettings): number {
  const pulseSd = s.pulseFwhm_s / GAUSSIAN_FWHM_PER_SD;
  return Math.sqrt(pulseSd * pulseSd + s.detectorJitterSd_s * s.detectorJitterSd_s);
}

/** The shot ion `index` belongs to. */
export function shotOfIon(index: number, shots: number): number {
  return index % shots;
}

/** One trigger offset per shot (s), drawn from the seeded generator; zeros when there is no jitter. */
export function triggerOffsets_s(s: DetectorSettings): Float64Array {
  const offsets = new Float64Array(s.shots);
  if (s.triggerJitterSd_s > 0) {
    const rng = new SeededRandom(s.seed, TRIGGER_STREAM);
    for (let k = 0; k < s.shots; k++) offsets[k] = s.triggerJitterSd_s * rng.normal();
  }
  return offsets;
}

/**
 * Recorded times: each ion's arrival time plus its shot's trigger offset. `out` may be given to
 * reuse a buffer (length ≥ arrival_s.length). Every ion is shifted, detected or not, so an ion's
 * shot and offset depend only on its index.
 */
export function applyTriggerJitter(arrival_s: Float64Array, s: DetectorSettings, out = new Float64Array(arrival_s.length)): Float64Array {
  const offsets = triggerOffsets_s(s);
  const shots = s.shots;
  for (let i = 0; i < arrival_s.length; i++) out[i] = arrival_s[i] + offsets[i % shots];
  return out;
}

// --- Standard normal cumulative distribution, tabulated for the deposition loop -------------------

const CDF_STEP = 1 / 128;
const CDF_POINTS = PULSE_REACH_SD / CDF_STEP + 1;

/**
 * erf(x) for x ≥ 0 from the everywhere-convergent series of positive terms
 * erf(x) = 2/√π · e^(−x²) · Σ_{n≥0} 2ⁿ x^(2n+1) / (1·3·…·(2n+1))  (Abramowitz & Stegun 7.1.6).
 * Absolute error ~1e-16 for x ≤ 6, which is all the table needs; used only to build it.
 */
export function erfSeries(x: number): number {
  if (x === 0) return 0;
  const x2 = x * x;
  let term = x;
  let sum = x;
  for (let n = 0; n < 500; n++) {
    term *= (2 * x2) / (2 * n + 3);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return (2 / Math.sqrt(Math.PI)) * Math.exp(-x2) * sum;
}

// Φ and φ at u = k/128, k = 0..1024; built once at load (about a millisecond).
const CDF_TABLE = new Float64Array(CDF_POINTS);
const PDF_TABLE = new Float64Array(CDF_POINTS);
for (let k = 0; k < CDF_POINTS; k++) {
  const u = k * CDF_STEP;
  CDF_TABLE[k] = 0.5 * (1 + erfSeries(u / Math.SQRT2));
  PDF_TABLE[k] = Math.exp(-0.5 * u * u) / Math.sqrt(2 * Math.PI);
}
// For the deposition loop, standardNormalCdf written out: φ·step and ×128 for ÷step are exact
// (powers of two), so it gives the same bits as the function.
const PDF_STEP_TABLE = PDF_TABLE.map((p) => p * CDF_STEP);
const CDF_PER_STEP = 1 / CDF_STEP;

/**
 * Φ(u), the standard normal CDF, by cubic Hermite interpolation of a table of Φ and its exact
 * derivative φ at steps of 1/128: error ≤ h⁴·max|φ‴|/384 ≈ 2e-11. Exactly 0 below −8 and 1 above
 * +8, so a pulse deposited over ±8 sd telescopes to exactly its area.
 */
export function standardNormalCdf(u: number): number {
  const cdf = CDF_TABLE;
  const pdf = PDF_TABLE;
  const a = u < 0 ? -u : u;
  if (a >= PULSE_REACH_SD) return u < 0 ? 0 : 1;
  const pos = a / CDF_STEP;
  const k = Math.floor(pos);
  const s = pos - k;
  const s2 = s * s;
  const s3 = s2 * s;
  const value =
    (2 * s3 - 3 * s2 + 1) * cdf[k] +
    (s3 - 2 * s2 + s) * CDF_STEP * pdf[k] +
    (-2 * s3 + 3 * s2) * cdf[k + 1] +
    (s3 - s2) * CDF_STEP * pdf[k + 1];
  return u < 0 ? 1 - value : value;
}

/**
 * Adds a gaussian pulse of centre `centre_s`, sd `sd_s` and area `area` to `samples`, each sample k
 * receiving the pulse integrated over [start + k·dt, start + (k+1)·dt). sd 0 deposits the whole
 * area in the sample containing the centre. Parts of the pulse outside the record are dropped.
 * Allocates nothing. Returns the area that fell inside the record.
 */
export function depositGaussianPulse(
  samples: Float64Array,
  recordStart_s: number,
  sampleInterval_s: number,
  centre_s: number,
  sd_s: number,
  area: number,
): number {
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
  const cdf = CDF_TABLE;
  const pdf = PDF_STEP_TABLE;
  let below = standardNormalCdf((recordStart_s + kLo * sampleInterval_s - centre_s) * inv);
  const first = below;
  for (let k = kLo; k <= kHi; k++) {
    const u = (recordStart_s + (k + 1) * sampleInterval_s - centre_s) * inv;
    const a = u < 0 ? -u : u;
    let above: number;
    if (a >= PULSE_REACH_SD) above = u < 0 ? 0 : 1;
    else {
      const pos = a * CDF_PER_STEP;
      const j = Math.floor(pos);
      const s = pos - j;
      const s2 = s * s;
      const s3 = s2 * s;
      const value = (2 * s3 - 3 * s2 + 1) * cdf[j] + (s3 - 2 * s2 + s) * pdf[j] + (-2 * s3 + 3 * s2) * cdf[j + 1] + (s3 - s2) * pdf[j + 1];
      above = u < 0 ? 1 - value : value;
    }
    samples[k] += area * (above - below);
    below = above;
  }
  return area * (below - first);
}

/**
 * One pulse's share of each sample (Φ differences at the sample edges), computed once and added to
 * several records: the ideal and the measured record of analog detection put the same pulse (same
 * centre and sd) in the same samples, only with different areas. `addTo(samples, area)` gives the
 * bits depositGaussianPulse(samples, …, area) gives: each sample receives area·(Φ_above − Φ_below)
 * from the same Φ values. Allocates nothing after construction.
 */
export class PulseSteps {
  /** First sample the pulse reaches, and how many it reaches (0: none inside the record). */
  first = 0;
  count = 0;
  private readonly delta: Float64Array;

  /** `maxSamples`: the most samples one pulse may reach (2·PULSE_REACH_SD·sd/dt + 2). */
  constructor(maxSamples: number) {
    this.delta = new Float64Array(Math.max(1, maxSamples));
  }

  /** The shares of a pulse of centre `centre_s` and sd `sd_s` in a record of `n` samples. */
  set(n: number, recordStart_s: number, sampleInterval_s: number, centre_s: number, sd_s: number): void {
    const delta = this.delta;
    this.count = 0;
    if (!(sd_s > 0)) {
      const k = Math.floor((centre_s - recordStart_s) / sampleInterval_s);
      if (k < 0 || k >= n) return;
      this.first = k;
      this.count = 1;
      delta[0] = 1;
      return;
    }
    let kLo = Math.floor((centre_s - PULSE_REACH_SD * sd_s - recordStart_s) / sampleInterval_s);
    let kHi = Math.floor((centre_s + PULSE_REACH_SD * sd_s - recordStart_s) / sampleInterval_s);
    if (kHi < 0 || kLo >= n) return;
    if (kLo < 0) kLo = 0;
    if (kHi > n - 1) kHi = n - 1;
    if (kHi - kLo + 1 > delta.length) throw new RangeError(`a pulse reaches ${kHi - kLo + 1} samples, more than the ${delta.length} allowed for`);
    const inv = 1 / sd_s;
    const cdf = CDF_TABLE;
    const pdf = PDF_STEP_TABLE;
    let below = standardNormalCdf((recordStart_s + kLo * sampleInterval_s - centre_s) * inv);
    // The loop of depositGaussianPulse, storing the differences instead of adding them.
    for (let k = kLo; k <= kHi; k++) {
      const u = (recordStart_s + (k + 1) * sampleInterval_s - centre_s) * inv;
      const a = u < 0 ? -u : u;
      let above: number;
      if (a >= PULSE_REACH_SD) above = u < 0 ? 0 : 1;
      else {
        const pos = a * CDF_PER_STEP;
        const j = Math.floor(pos);
        const s = pos - j;
        const s2 = s * s;
        const s3 = s2 * s;
        const value = (2 * s3 - 3 * s2 + 1) * cdf[j] + (s3 - 2 * s2 + s) * pdf[j] + (-2 * s3 + 3 * s2) * cdf[j + 1] + (s3 - s2) * pdf[j + 1];
        above = u < 0 ? 1 - value : value;
      }
      delta[k - kLo] = above - below;
      below = above;
    }
    this.first = kLo;
    this.count = kHi - kLo + 1;
  }

  /** Adds the pulse with area `area` to `samples` (the record `set` was given). */
  addTo(samples: Float64Array, area: number): void {
    const delta = this.delta;
    const first = this.first;
    for (let q = 0; q < this.count; q++) samples[first + q] += area * delta[q];
  }
}
