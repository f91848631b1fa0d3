/**
 * Species colours by m/z: log(m/z) across the setup's range mapped onto our own five-stop ramp
 * (ice blue → mint → straw → coral → orchid), used alike in the 3D view, the charts and the tables.
 */

const STOPS: readonly (readonly [number, number, number])[] = [
  [0x5a, 0xc8, 0xff],
  [0x5f, 0xe0, 0xa4],
  [0xf0, 0xd4, 0x5c],
  [0xff, 0x8a, 0x5c],
  [0xe3, 0x6a, 0xd0],
];

/** Colour at u in [0, 1] as 0..1 RGB components. */
export function rampRgb(u: number, out: [number, number, number] = [0, 0, 0]): [number, number, number] {
  const x = Math.min(Math.max(Number.isFinite(u) ? u : 0, 0), 1) * (STOPS.length - 1);
  const i = Math.min(Math.floor(x), STOPS.length - 2);
  const f = x - i;
  for (let c = 0; c < 3; c++) out[c] = (STOPS[i][c] + (STOPS[i + 1][c] - STOPS[i][c]) * f) / 255;
  return out;
}

export function rgbToCss(rgb: readonly [number, number, number]): string {
  const hex = (v: number): string => Math.round(v * 255).toString(16).padStart(2, '0');
  return `#${hex(rgb[0])}${hex(rgb[1])}${hex(rgb[2])}`;
}

/** Position of each m/z on the ramp: log scale between the smallest and largest; 0.5 when all are equal. */
export function mzRampPositions(mzs: readonly number[]): number[] {
  const logs = mzs.map((m) => Math.log(m));
  const lo = Math.min(...logs);
  const hi = Math.max(...logs);
  return logs.map((l) => (hi > lo ? (l - lo) / (hi - lo) : 0.5));
}

export function speciesColours(mzs: readonly number[]): string[] {
  return mzRampPositions(mzs).map((u) => rgbToCss(rampRgb(u)));
}

/** Electrode colour by potential relative to the largest magnitude in the setup: cold blue (−) … slate (0) … amber (+). */
export function potentialRgb(potential_V: number, maxAbs_V: number, out: [number, number, number] = [0, 0, 0]): [number, number, number] {
  const u = maxAbs_V > 0 ? Math.max(-1, Math.min(1, potential_V / maxAbs_V)) : 0;
  const neutral = [0.42, 0.47, 0.53];
  const pos = [0.95, 0.62, 0.22];
  const neg = [0.35, 0.55, 0.98];
  const target = u >= 0 ? pos : neg;
  const f = Math.abs(u);
  for (let c = 0; c < 3; c++) out[c] = neutral[c] + (target[c] - neutral[c]) * f;
  return out;
}
