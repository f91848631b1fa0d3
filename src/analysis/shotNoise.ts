/**
 * Shot noise of a simulated spectrum with few ions. The spectrum of N traced ions is a sum of N
 * single-ion pulses; when the pulse is much narrower than the peak, the few ions under one pulse
 * width make the peak top ragged, the tallest sample overestimates the envelope's height, and the
 * half-maximum crossings close in: the FWHM comes out too narrow (R too high, even above the ion-only
 * R; 922 against 749 in the gridless demo at 2000 ions). An instrument summing far more ions records
 * the smooth envelope. So the peak is measured with the response widened (gaussian, extra sd h) until
 * the expected overestimate of the apex is about APEX_BIAS, and the measured widths are corrected in
 * quadrature, FWHM² − (2·sqrt(2 ln 2)·h)², exact for a gaussian peak. The widening is capped at half
 * the peak's sd (a 12 % wider peak before the correction). With enough ions h = 0 and nothing changes.
 *
 * Noise model (common practice, no source): within ±s of the apex about 2·s·density ions are
 * expected, so the relative noise is 1/sqrt(that); the largest of M ≈ FWHM/(2s) independent such
 * windows across the top exceeds the mean by about sqrt(2·ln M) noise units.
 */
import { GAUSSIAN_FWHM_PER_SD } from './detectorResponse';

/** Expected relative overestimate of the peak height the measurement accepts. */
export const APEX_BIAS = 0.02;

export interface ShotNoiseSmoothing {
  /** Extra gaussian sd added to the response (s); 0 with enough ions. */
  readonly sd_s: number;
  /** True when the cap (half the peak's sd) stopped the widening short of APEX_BIAS. */
  readonly limited: boolean;
}

/** Smoothing a peak of `count` ions with arrival-time sd `peakSd_s` needs on top of a response of sd `responseSd_s`. */
export function shotNoiseSmoothing(count: number, peakSd_s: number, responseSd_s: number): ShotNoiseSmoothing {
  if (!(count > 1) || !(peakSd_s > 0)) return { sd_s: 0, limited: false };
  // Apex density of a gaussian peak: count / (sqrt(2π)·sd) ions per second.
  const density = count / (Math.sqrt(2 * Math.PI) * peakSd_s);
  let s = responseSd_s;
  for (let i = 0; i < 30; i++) {
    const windows = Math.max(2, (GAUSSIAN_FWHM_PER_SD * peakSd_s) / (2 * s));
    const needed = (2 * Math.log(windows)) / (APEX_BIAS * APEX_BIAS) / (2 * density);
    const next = Math.max(responseSd_s, needed);
    if (Math.abs(next - s) <= 1e-6 * s) break;
    s = next;
  }
  const wanted = s > responseSd_s ? Math.sqrt(s * s - responseSd_s * responseSd_s) : 0;
  const cap = 0.5 * peakSd_s;
  return wanted > cap ? { sd_s: cap, limited: true } : { sd_s: wanted, limited: false };
}

/** A width with the smoothing's gaussian contribution (`addedWidth_s`) removed in quadrature (null when not positive). */
export function withoutSmoothing(width_s: number | null, addedWidth_s: number): number | null {
  if (width_s === null) return null;
  if (addedWidth_s === 0) return width_s;
  const sq = width_s * width_s - addedWidth_s * addedWidth_s;
  return sq > 0 ? Math.sqrt(sq) : null;
}
