/**
 * The tolerance budget for a target mass accuracy over an m/z range.
 *
 * Each parameter k has a mass sensitivity S_k (ppm per unit; for a shot-to-shot term divided by
 * √shots, since the summed spectrum's centroid moves by the mean of the shots' offsets). With the
 * parameters independent, the combined standard uncertainty is u = √Σ (S_k·u_k)², the law of
 * propagation of uncertainty for a linear model (JCGM 100:2008, the GUM, eq. 10). Hence:
 * - allowed alone: u_k ≤ target/|S_k| (every other parameter perfect);
 * - allowed in an equal root-sum-square split over the n parameters that matter: target/(√n·|S_k|);
 * - the contribution at the stated tolerance, |S_k|·u_k, and its share of u² (what dominates).
 * The worst species in the range decides each parameter's |S_k| and the combined u.
 */
import type { ToleranceParameter } from './parameters';

export interface BudgetRow {
  readonly parameter: string;
  readonly label: string;
  readonly kind: 'slow' | 'shot';
  readonly unit: string;
  readonly tolerance: number;
  /** Largest |mass sensitivity| over the species in range (ppm per unit; shot terms ÷ √shots). */
  readonly sensitivity_ppm_per_unit: number | null;
  readonly worstMz: number | null;
  /** |S|·tolerance (ppm, 1 sd). */
  readonly contribution_ppm: number | null;
  /** Share of the combined variance of the worst species (0..1). */
  readonly share: number | null;
  /** Largest tolerance (in the parameter's unit) meeting the target alone, and in an equal RSS split. */
  readonly allowedAlone: number | null;
  readonly allowedRss: number | null;
}

export interface Budget {
  readonly targetAccuracy_ppm: number;
  readonly range_mz: [number, number] | null;
  readonly speciesMz: number[];
  /** Combined mass uncertainty (1 sd, ppm) at the stated tolerances, for the worst species in range. */
  readonly combined_ppm: number | null;
  readonly worstMz: number | null;
  readonly meetsTarget: boolean | null;
  /** Parameters counted in the RSS split (non-zero sensitivity). */
  readonly rssParameters: number;
  /** Rows sorted by contribution (largest first), then by sensitivity relative to the smallest allowed value. */
  readonly rows: BudgetRow[];
  /** Smallest set of parameters holding ≥ 80 % of the combined variance; empty when no tolerance is given. */
  readonly dominant: string[];
}

interface SensitivityLike {
  readonly parameter: string;
  readonly species: readonly { readonly massShift_ppm_per_unit: number | null }[];
}

/** A sensitivity this small (ppm per unit) is taken as none: the parameter cannot move the mass. */
const NEGLIGIBLE_PPM_PER_UNIT = 1e-9;

export function buildBudget(
  params: readonly ToleranceParameter[],
  sensitivities: readonly SensitivityLike[],
  species: readonly { readonly mz: number }[],
  shots: number,
  target_ppm: number,
  range: readonly [number, number] | null,
): Budget {
  const inRange = species.map((sp) => !range || (sp.mz >= range[0] && sp.mz <= range[1]));
  const speciesMz = species.filter((_, s) => inRange[s]).map((sp) => sp.mz);
  const effective = (p: ToleranceParameter, s: number): number | null => {
    const v = sensitivities.find((x) => x.parameter === p.id)?.species[s].massShift_ppm_per_unit ?? null;
    return v === null ? null : Math.abs(v) / (p.kind === 'shot' ? Math.sqrt(shots) : 1);
  };
  // Combined uncertainty per species, and the worst species.
  let worst = -1;
  let worstU = -1;
  species.forEach((_, s) => {
    if (!inRange[s]) return;
    let u2 = 0;
    for (const p of params) {
      const e = effective(p, s);
      if (e !== null) u2 += (e * p.tolerance) ** 2;
    }
    if (u2 > worstU) {
      worstU = u2;
      worst = s;
    }
  });
  const significant = params.filter((p) => species.some((_, s) => inRange[s] && (effective(p, s) ?? 0) > NEGLIGIBLE_PPM_PER_UNIT));
  const n = Math.max(1, significant.length);
  const rows: BudgetRow[] = params.map((p) => {
    let S: number | null = null;
    let at: number | null = null;
    species.forEach((sp, s) => {
      if (!inRange[s]) return;
      const e = effective(p, s);
      if (e !== null && (S === null || e > S)) {
        S = e;
        at = sp.mz;
      }
    });
    const sens = S as number | null;
    const worstE = worst >= 0 ? effective(p, worst) : null;
    const contribution = worstE === null ? null : worstE * p.tolerance;
    const matters = sens !== null && sens > NEGLIGIBLE_PPM_PER_UNIT;
    return {
      parameter: p.id,
      label: p.label,
      kind: p.kind,
      unit: p.unit,
      tolerance: p.tolerance,
      sensitivity_ppm_per_unit: sens,
      worstMz: at,
      contribution_ppm: contribution,
      share: contribution !== null && worstU > 0 ? contribution ** 2 / worstU : null,
      allowedAlone: matters ? target_ppm / sens : null,
      allowedRss: matters ? target_ppm / (Math.sqrt(n) * sens) : null,
    };
  });
  rows.sort((a, b) => (b.contribution_ppm ?? 0) - (a.contribution_ppm ?? 0) || (b.sensitivity_ppm_per_unit ?? 0) - (a.sensitivity_ppm_per_unit ?? 0));
  const dominant: string[] = [];
  if (worstU > 0) {
    let acc = 0;
    for (const r of rows) {
      if (acc >= 0.8) break;
      dominant.push(r.parameter);
      acc += r.share ?? 0;
    }
  }
  const combined = worst >= 0 ? Math.sqrt(worstU) : null;
  return {
    targetAccuracy_ppm: target_ppm,
    range_mz: range ? [range[0], range[1]] : null,
    speciesMz,
    combined_ppm: combined,
    worstMz: worst >= 0 ? species[worst].mz : null,
    meetsTarget: combined === null ? null : combined <= target_ppm,
    rssParameters: significant.length,
    rows,
    dominant,
  };
}
