/**
 * The ions' arrival-time histogram for the app's report page: the app's runs carry per-ion times,
 * not the digitized spectrum (the CLI's --report draws that one), so the page says which it shows.
 */
import { Fate } from '../../physics/fates';
import type { RunOutput } from '../../simulation/runContract';
import type { ReportSeries } from '../../simulation/htmlReport';

/** Most bins (the page thins to its width anyway). */
const MAX_BINS = 1 << 18;

export function arrivalHistogram(output: RunOutput, sampleInterval_ns: number | null): ReportSeries | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < output.fate.length; i++) {
    if (output.fate[i] !== Fate.DETECTED) continue;
    lo = Math.min(lo, output.flightTime_s[i] * 1e9);
    hi = Math.max(hi, output.flightTime_s[i] * 1e9);
  }
  if (!(hi > lo)) return null;
  const width = sampleInterval_ns ?? (hi - lo) / 4000;
  const bins = Math.min(MAX_BINS, Math.max(1, Math.ceil((hi - lo) / width)));
  const step = (hi - lo) / bins;
  const time_ns = Float64Array.from({ length: bins }, (_, b) => lo + (b + 0.5) * step);
  const intensity = new Float64Array(bins);
  for (let i = 0; i < output.fate.length; i++) {
    if (output.fate[i] !== Fate.DETECTED) continue;
    intensity[Math.min(bins - 1, Math.floor((output.flightTime_s[i] * 1e9 - lo) / step))] += 1;
  }
  return { time_ns, intensity, label: `ion arrival-time histogram, ${step.toPrecision(3)} ns bins (no detector response; the CLI's --report draws the simulated spectrum)` };
}
