/**
 * Counting (time-to-digital) detection: dead time and its correction.
 *
 * Loss law: a non-paralysable (non-extending) dead time τ — after a counted event the channel
 * ignores every event for τ, and ignored events do not extend it — so a Poisson stream of true
 * rate n is counted at m = n/(1 + nτ) (G. F. Knoll, Radiation Detection and Measurement, 4th ed.,
 * Wiley 2010, ch. 4, "dead time"). Each channel restarts at every shot.
 *
 * Correction (the usual one for accumulated time-of-flight counting, with Poisson arrivals per
 * shot): in bin i of an N-trial histogram (trials = shots × channels), the channel was alive in
 * N − Σ_{j=i−d}^{i−1} c_j trials, d the dead time in bins; of those, c_i saw at least one ion, so
 * the mean ions per trial is λ_i = −ln(1 − c_i/alive_i) and the corrected count is N·λ_i
 * (T. Stephan, J. Zehnpfenning & A. Benninghoven, J. Vac. Sci. Technol. A 12 (1994) 405;
 * formula written from memory). It assumes at most one count per bin and trial (τ ≥ one bin);
 * with τ shorter than a bin only the pile-up within a bin is undone.
 */

/**
 * Marks which of the time-ordered events of one channel in one shot are counted under a
 * non-paralysable dead time τ; returns the number counted. `order` lists event indices in time
 * order; `counted` gets 1 or 0 at each listed index.
 */
export function countNonParalysable(time_s: Float64Array, order: Int32Array, from: number, to: number, deadTime_s: number, counted: Uint8Array): number {
  let liveFrom = -Infinity;
  let n = 0;
  for (let k = from; k < to; k++) {
    const e = order[k];
    if (time_s[e] >= liveFrom) {
      counted[e] = 1;
      liveFrom = time_s[e] + deadTime_s;
      n++;
    } else counted[e] = 0;
  }
  return n;
}

/**
 * Mean fraction of bin i = j + k that an event in bin j blocks, the event uniform within its bin
 * and τ = D bins: ∫₀¹ clamp(D − k + u, 0, 1) du.
 */
export function blockedFraction(deadBins: number, k: number): number {
  const x = deadBins - k;
  if (x >= 1) return 1;
  if (x <= -1) return 0;
  return x >= 0 ? 0.5 + x - 0.5 * x * x : 0.5 * (1 + x) * (1 + x);
}

/**
 * The Poisson dead-time correction of an accumulated counting histogram (see the header), with
 * `deadBins` = τ/bin width (not necessarily whole). The published form takes the d = τ/bin
 * preceding bins as wholly dead; here the one or two bins at the end of the dead time count with
 * the mean fraction of them an event blocks (blockedFraction), which removes the over-correction
 * the whole-bin form shows when τ is comparable with the peak width. A bin in which every live
 * trial counted (c_i ≥ alive_i) cannot be corrected: it is given −N·ln(1/(alive_i + 1)) and
 * counted in `saturatedBins`.
 */
export function correctDeadTime(counts: Float64Array, trials: number, deadBins: number, out = new Float64Array(counts.length)): { corrected: Float64Array; saturatedBins: number } {
  // Bins 1..full back are wholly dead; bins full+1 .. last back partly.
  const full = deadBins >= 1 ? Math.floor(deadBins - 1) : 0;
  const last = Math.ceil(deadBins + 1) - 1;
  let window = 0; // Σ of counts[i−full .. i−1]
  let saturated = 0;
  for (let i = 0; i < counts.length; i++) {
    let dead = window;
    for (let k = full + 1; k <= last; k++) if (i - k >= 0) dead += blockedFraction(deadBins, k) * counts[i - k];
    const alive = trials - dead;
    const c = counts[i];
    if (c <= 0) out[i] = 0;
    else if (c >= alive) {
      saturated++;
      out[i] = trials * Math.log(Math.max(alive, 0) + 1);
    } else out[i] = -trials * Math.log1p(-c / alive);
    if (full > 0) {
      window += c;
      if (i - full >= 0) window -= counts[i - full];
    }
  }
  return { corrected: out, saturatedBins: saturated };
}
