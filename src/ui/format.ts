/** Number formatting for the app: units that read well (µs, ns, ppm) and dashes for missing values. */

export const DASH = '—';

export function fixed(x: number | null | undefined, digits: number): string {
  return x === null || x === undefined || !Number.isFinite(x) ? DASH : x.toFixed(digits);
}

/** Resolving power: whole numbers with thin grouping, exponent form when huge. */
export function formatR(r: number | null | undefined): string {
  if (r === null || r === undefined || !Number.isFinite(r)) return DASH;
  if (r >= 1e6) return r.toExponential(2);
  return Math.round(r).toLocaleString('en').replace(/,/g, '\u2009');
}

export function percent(fraction: number | null | undefined, digits = 1): string {
  return fraction === null || fraction === undefined || !Number.isFinite(fraction) ? DASH : `${(fraction * 100).toFixed(digits)} %`;
}

export function signed(x: number | null | undefined, digits: number): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return DASH;
  const s = x.toFixed(digits);
  return x > 0 ? `+${s}` : s;
}

/** A time in seconds shown in the unit that suits it. */
export function formatTime_s(t: number): string {
  const a = Math.abs(t);
  if (a >= 1e-3) return `${(t * 1e3).toFixed(3)} ms`;
  if (a >= 1e-6) return `${(t * 1e6).toFixed(3)} µs`;
  return `${(t * 1e9).toFixed(1)} ns`;
}

export function formatCount(n: number): string {
  return n.toLocaleString('en').replace(/,/g, '\u2009');
}
