/** Unit conversions at the edges of the engine; the engine itself works in SI. Named by direction. */

export const mmToM = (mm: number): number => mm * 1e-3;
export const mToMm = (m: number): number => m * 1e3;
export const nsToS = (ns: number): number => ns * 1e-9;
export const sToNs = (s: number): number => s * 1e9;
export const sToUs = (s: number): number => s * 1e6;
export const usToS = (us: number): number => us * 1e-6;
