/**
 * Linear thermal expansion coefficients of common flight-tube and electrode-stack materials, near
 * room temperature (mean over about 20–100 °C).
 *
 * FROM MEMORY, not checked against the handbook during writing: the values are those commonly
 * tabulated in engineering handbooks (e.g. the ASM Metals Handbook and the CRC Handbook of
 * Chemistry and Physics, thermal expansion tables). Austenitic stainless steel 304 is about
 * 17.3e-6 /K; verify against the material certificate of the actual part when it matters.
 */
export interface Material {
  readonly name: string;
  readonly label: string;
  readonly expansion_per_K: number;
}

export const MATERIALS: readonly Material[] = [
  { name: 'stainless-304', label: 'austenitic stainless steel 304', expansion_per_K: 17.3e-6 },
  { name: 'stainless-316', label: 'austenitic stainless steel 316', expansion_per_K: 16.0e-6 },
  { name: 'aluminium-6061', label: 'aluminium alloy 6061', expansion_per_K: 23.6e-6 },
  { name: 'titanium', label: 'titanium (grade 2 / Ti-6Al-4V)', expansion_per_K: 8.6e-6 },
  { name: 'invar-36', label: 'Invar (Fe-36Ni)', expansion_per_K: 1.3e-6 },
  { name: 'alumina', label: 'alumina ceramic (96–99.5 %)', expansion_per_K: 7.5e-6 },
];

export const MATERIAL_NAMES: readonly string[] = MATERIALS.map((m) => m.name);

export function materialExpansion_per_K(name: string): number {
  const m = MATERIALS.find((x) => x.name === name);
  if (!m) throw new Error(`unknown material ${name}`);
  return m.expansion_per_K;
}
