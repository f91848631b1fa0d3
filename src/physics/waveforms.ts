/**
 * Electrode potentials in time: held until the extraction delay, then a rise to the extraction
 * value (ideal step, linear ramp, exponential approach) or a pasted table. Also the time after
 * which every source potential is constant, from which the closed form is exact again.
 */
import type { ElectrodeDrive, RiseModel, SourceModel, WaveformTable } from './analyser';

/** Potential of source plane `plane` at time t (s since ion formation). */
export function planePotential_V(source: SourceModel, plane: number, t: number): number {
  const drive: ElectrodeDrive = source.planes[plane];
  const rise: RiseModel = source.rise;
  if (rise.kind === 'table') {
    const table = rise.tables[plane];
    if (table) return tableValue(table, t);
  }
  if (t < source.delay_s || drive.hold_V === drive.final_V) return t < source.delay_s ? drive.hold_V : drive.final_V;
  const s = t - source.delay_s;
  switch (rise.kind) {
    case 'linear':
      return s >= rise.riseTime_s ? drive.final_V : drive.hold_V + ((drive.final_V - drive.hold_V) * s) / rise.riseTime_s;
    case 'exponential':
      // hold + (final − hold)·(1 − e^{−s/τ}), written with expm1 for accuracy at small s.
      return drive.hold_V - (drive.final_V - drive.hold_V) * Math.expm1(-s / rise.timeConstant_s);
    default:
      return drive.final_V;
  }
}

/** Linear interpolation in a waveform table, holding the end values outside it. */
export function tableValue(table: WaveformTable, t: number): number {
  const ts = table.time_s;
  const vs = table.potential_V;
  const n = ts.length;
  if (t <= ts[0]) return vs[0];
  if (t >= ts[n - 1]) return vs[n - 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (ts[mid] <= t) lo = mid;
    else hi = mid;
  }
  return vs[lo] + ((vs[hi] - vs[lo]) * (t - ts[lo])) / (ts[hi] - ts[lo]);
}

/** Time when the source potentials first start to change (before it, the hold field is static). */
export function switchStart_s(source: SourceModel): number {
  const rise = source.rise;
  if (rise.kind !== 'table') return source.delay_s;
  let start = source.delay_s;
  for (const table of rise.tables) if (table) start = Math.min(start, table.time_s[0]);
  return Math.max(start, 0);
}

/**
 * Time after which every source potential is constant. For an exponential approach that is when
 * the remaining (final − hold)·e^{−s/τ} falls below half an ulp of the potential: from then on the
 * double-precision potential is exactly the final one, and the closed form is exact again.
 */
export function settleTime_s(source: SourceModel): number {
  const rise = source.rise;
  switch (rise.kind) {
    case 'step':
      return source.delay_s;
    case 'linear':
      return source.delay_s + rise.riseTime_s;
    case 'exponential': {
      let longest = 0;
      for (const p of source.planes) {
        const jump = Math.abs(p.final_V - p.hold_V);
        if (jump === 0) continue;
        const halfUlp = 0.5 * Number.EPSILON * Math.max(Math.abs(p.final_V), Math.abs(p.hold_V), 1);
        longest = Math.max(longest, Math.log(jump / halfUlp));
      }
      return source.delay_s + rise.timeConstant_s * longest;
    }
    case 'table': {
      let end = source.delay_s;
      for (const table of rise.tables) if (table) end = Math.max(end, table.time_s[table.time_s.length - 1]);
      return end;
    }
  }
}

/** Next time after t at which a source potential jumps or kinks (integration restarts there), or Infinity. */
export function nextBreakpoint_s(source: SourceModel, t: number): number {
  if (source.rise.kind === 'table') return nextTableBreakpoint_s(source.rise.tables, source.delay_s, t);
  if (t < source.delay_s) return source.delay_s;
  if (source.rise.kind === 'linear' && t < source.delay_s + source.rise.riseTime_s) return source.delay_s + source.rise.riseTime_s;
  return Infinity;
}

/** The next table point after t over every tabulated electrode (the others step at the delay). */
function nextTableBreakpoint_s(tables: readonly (WaveformTable | null)[], delay_s: number, t: number): number {
  let next = Infinity;
  let stepped = false;
  for (const table of tables) {
    if (!table) {
      stepped = true;
      continue;
    }
    const ts = table.time_s;
    if (t >= ts[ts.length - 1]) continue;
    let lo = -1; // largest index with ts[lo] <= t
    let hi = ts.length - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (ts[mid] <= t) lo = mid;
      else hi = mid;
    }
    next = Math.min(next, ts[hi]);
  }
  return stepped && t < delay_s ? Math.min(next, delay_s) : next;
}
