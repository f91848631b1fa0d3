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
 * formula written from memory). It assumes τ is a whole number of bins and at most one count per
 * bin and trial (τ ≥ one bin); with τ shorter than a bin, d = 0 and only the pile-up within a bin is undone.
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

/** Dead-time span in whole bins for the correction. */
export function deadTimeBins(deadTime_s: number, binWidth_s: number): number {
  return Math.max(0, Math.round(deadTime_s / binWidth_s));
}

/**
 * The Poisson dead-time correction of an accumulated counting histogram (see the header). A bin
 * in which every live trial counted (c_i ≥ alive_i) cannot be corrected: it is left at the
 * largest finite value, −N·ln(1/(alive_i + 1)), and counted in `saturatedBins`.
 */
export function correctDeadTime(counts: Float64Array, trials: number, deadBins: number, out = new Float64Array(counts.length)): { corrected: Float64Array; saturatedBins: number } {
  let window = 0; // Σ of the previous deadBins counts
  let saturated = 0;
  for (let i = 0; i < counts.length; i++) {
    const alive = trials - window;
    const c = counts[i];
    if (c <= 0) out[i] = 0;
    else if (c >= alive) {
      saturated++;
      out[i] = trials * Math.log(alive + 1);
    } else out[i] = -trials * Math.log1p(-c / alive);
    if (deadBins > 0) {
      window += c;
      if (i - deadBins >= 0) window -= counts[i - deadBins];
    }
  }
  return { corrected: out, saturatedBins: saturated };
}
