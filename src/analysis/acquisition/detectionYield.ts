/**
 * Detection efficiency of an electron-multiplier detector for an ion striking it at speed v.
 *
 * Law: an ion is detected when it frees at least one secondary electron where the cascade can
 * start. With γ(v) the mean number of secondary electrons and a Poisson number of them, the
 * probability of at least one is 1 − exp(−γ) (the form used for microchannel plates, e.g.
 * G. W. Fraser, "The ion detection efficiency of microchannel plates (MCPs)", Int. J. Mass
 * Spectrom. 215 (2002) 13–30), times the fraction of the surface that is open channel.
 * γ(v) grows with the ion's velocity, not its energy, and vanishes below a threshold speed
 * (kinetic electron emission by large slow ions: R. J. Beuhler & L. Friedman, Nucl. Instrum.
 * Methods 170 (1980) 309–315); here γ = slope·(v − v_threshold) above the threshold, 0 below.
 *
 * The default coefficients are from memory and only set the scale (γ ≈ 3 for a 1 kDa ion at
 * 20 kV, ≈ 0.3 for a 66 kDa ion at 20 kV); a user should fit them to the detector at hand.
 * The open-area fraction default 0.6 is common practice (50–70 % for most MCPs), no source.
 */

export interface DetectionYieldLaw {
  /** Below this impact speed no secondary electron is emitted (m/s). */
  readonly thresholdSpeed_m_per_s: number;
  /** Secondary electrons per (m/s) above the threshold. */
  readonly slope_per_m_per_s: number;
  /** Fraction of the detector face that is open channel (0..1]. */
  readonly openAreaFraction: number;
}

export const DEFAULT_THRESHOLD_SPEED_KM_PER_S = 2;
export const DEFAULT_YIELD_SLOPE_PER_KM_PER_S = 0.05;
export const DEFAULT_OPEN_AREA_FRACTION = 0.6;

/** Mean secondary electrons per ion at impact speed v. */
export function secondaryElectronYield(law: DetectionYieldLaw, speed_m_per_s: number): number {
  const excess = Math.abs(speed_m_per_s) - law.thresholdSpeed_m_per_s;
  return excess > 0 ? law.slope_per_m_per_s * excess : 0;
}

/** Probability that an ion striking at speed v gives a pulse. */
export function detectionProbability(law: DetectionYieldLaw, speed_m_per_s: number): number {
  // 1 − e^(−γ) written with expm1 so a small γ keeps its digits.
  return law.openAreaFraction * -Math.expm1(-secondaryElectronYield(law, speed_m_per_s));
}
