/**
 * The random parts of a decay, each from uniform deviates the caller draws (a fixed number per ion,
 * so that runs with common random numbers stay aligned ion by ion): the decay time of a lifetime law,
 * the channel, and the release velocity of a kinetic-energy release.
 */

/** Random streams of the decays are offset from the population's (one per species block there). */
export const DECAY_STREAM_OFFSET = 0x16_0000;

/**
 * Decay time (s since formation) of an exponential law with mean lifetime τ: inverse transform of
 * 1 − e^(−t/τ). Proper time and laboratory time differ by γ − 1 < 1e-10 at TOF speeds (v < 3·10^5 m/s), so
 * the ion's own clock is the laboratory one.
 */
export function lifetimeDecayTime_s(lifetime_s: number, u: number): number {
  return -lifetime_s * Math.log1p(-u); // u in [0, 1): 1 − u in (0, 1]
}

/** Index of the channel the cumulative branching fractions put `u` (in [0, 1)) in. */
export function pickChannel(branching: readonly number[], u: number): number {
  let total = 0;
  for (const b of branching) total += b;
  let acc = 0;
  for (let k = 0; k < branching.length - 1; k++) {
    acc += branching[k] / total;
    if (u < acc) return k;
  }
  return branching.length - 1;
}

/**
 * Velocity given to product 1 (mass m1) by a release of energy T shared with product 2 (mass m2),
 * isotropic in the precursor's frame (cos θ uniform from uCos, azimuth from uPhi): momentum
 * conservation gives m1·u1 = m2·u2 and energy ½m1u1² + ½m2u2² = T, so u1 = sqrt(2·T·m2/(m1·(m1 + m2))).
 * Writes [axial, x, y] into `out`; product 2 receives −(m1/m2) times it.
 */
export function releaseVelocity(out: Float64Array, release_J: number, m1_kg: number, m2_kg: number, uCos: number, uPhi: number): Float64Array {
  if (!(release_J > 0)) {
    out[0] = out[1] = out[2] = 0;
    return out;
  }
  const u1 = Math.sqrt((2 * release_J * m2_kg) / (m1_kg * (m1_kg + m2_kg)));
  const cos = 2 * uCos - 1;
  const sin = Math.sqrt(Math.max(0, 1 - cos * cos));
  const phi = 2 * Math.PI * uPhi;
  out[0] = u1 * cos;
  out[1] = u1 * sin * Math.cos(phi);
  out[2] = u1 * sin * Math.sin(phi);
  return out;
}
