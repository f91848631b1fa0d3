/**
 * Mirror-voltage stepping for post-source-decay fragments: a reflectron focuses fragments only over a
 * window of their energy fraction ε = m_f/m_p (formed in the field-free drift, a fragment keeps the
 * precursor's speed, so its energy is ε of the precursor's). With ideal grids and every mirror
 * potential (relative to the drift tube) scaled by s, a fragment of fraction ε flies exactly as one of
 * ε/s at s = 1: its time in a uniform mirror is 2·m_f·v/(q·E) ∝ ε/s, the drifts are shared. So one run
 * at the preset's mirror maps R and the flight time over x = ε/s (a grid of fragment masses, all formed
 * in the drift); the window where R stays above the target gives the segments s_1 = 1, s_{k+1} =
 * s_k·x_lo/x_hi down to the lightest fragment asked for. Each segment is then run with the preset's own
 * decay channels, its spectrum converted to m/z by its own calibration m = m_p·s·x(t) (the grid's time
 * law, linear between grid points), and the windows stitched into one fragment spectrum.
 */
import type { Preset } from '../presets/schema';
import { simulate } from './run';

export interface SteppingRequest {
  readonly preset: Preset;
  /** Fragment m/z range to cover (Th). */
  readonly fromMz: number;
  readonly toMz: number;
  /** Least resolving power each segment's window must keep (spectrum peak R with acquisition settings, else ideal). */
  readonly minResolvingPower: number;
  /** Index of the precursor species (default: the first with a decay section). */
  readonly species?: number;
  /** Grid of fragment masses the time law and R are mapped on (default 40). */
  readonly gridPoints?: number;
  /** Ions of each segment run (the stitched spectrum); the grid run has its own ensemble (gridIonsPerPoint). */
  readonly ions?: number;
  /** Fragment ions per grid point in the planning run (default GRID_IONS_PER_POINT). */
  readonly gridIonsPerPoint?: number;
}

/**
 * The planning run's ensemble: every grid point gets this many fragments of its own (R's sampling
 * error about 1/sqrt(2N) ≈ 1.6 % at N = 2000), and it is seeded by PLANNING_SEED, not the preset's
 * seed, so the segments are a function of the analyser, the range and the target alone: two runs
 * with different seeds report the same segments (tests/simulation/mirrorStepping.test.ts). Earlier
 * the grid shared the run's ions (about ions/40 per point) and its seed, and the window edges moved
 * with the seed.
 */
export const GRID_IONS_PER_POINT = 2000;
export const PLANNING_SEED = 0x5e97;

export interface SteppingSegment {
  readonly index: number;
  /** Mirror potentials relative to the drift tube scaled by this. */
  readonly scale: number;
  /** The mirror section of the preset for this segment. */
  readonly mirror: Preset['mirror'];
  /** Fragment m/z window this segment covers (within the range asked for). */
  readonly fromMz: number;
  readonly toMz: number;
  /** Least R over the window, from the grid. */
  readonly minResolvingPower: number;
}

export interface SteppingResult {
  readonly precursorMz: number;
  readonly window: { readonly lowFraction: number; readonly highFraction: number };
  /** R and time over the grid x = m_f/m_p at the preset's mirror. */
  readonly grid: readonly { readonly fraction: number; readonly resolvingPower: number | null; readonly time_ns: number | null }[];
  /** True when one setting keeps the whole range above the target (a mirror that focuses all fragment masses at once). */
  readonly singleSetting: boolean;
  readonly segments: SteppingSegment[];
  /** The stitched fragment spectrum: m/z ascending, intensity, and the segment each sample came from (empty without acquisition). */
  readonly spectrum: { readonly mz: Float64Array; readonly intensity: Float64Array; readonly segment: Int32Array };
}

const MAX_SEGMENTS = 40;

/** The mirror with every potential (relative to the drift tube) scaled by s. */
export function scaledMirror(mirror: Preset['mirror'], driftPotential_V: number, s: number): Preset['mirror'] {
  const scale = (v: number): number => driftPotential_V + s * (v - driftPotential_V);
  switch (mirror.type) {
    case 'single':
      return { ...mirror, backPlate_V: scale(mirror.backPlate_V) };
    case 'dual':
      return { ...mirror, intermediateGrid_V: scale(mirror.intermediateGrid_V), backPlate_V: scale(mirror.backPlate_V) };
    case 'profile': {
      const p = mirror.profile;
      const profile =
        p.kind === 'harmonic'
          ? { ...p, backPlate_V: scale(p.backPlate_V) }
          : p.kind === 'polynomial'
            ? { ...p, coefficients_V: p.coefficients_V.map((c) => s * c) }
            : { ...p, points: p.points.map(([d, v]) => [d, scale(v)] as [number, number]) };
      return { ...mirror, profile };
    }
    default:
      throw new Error(`mirror stepping needs a gridded mirror (single, dual or profile); this preset's mirror.type is "${mirror.type}"`);
  }
}

function withSpecies(preset: Preset, species: Preset['ions']['species'][number]): Preset {
  return { ...preset, ions: { ...preset.ions, species: [species] }, analysis: undefined };
}

export function planMirrorSteps(request: SteppingRequest): SteppingResult {
  const { preset } = request;
  const index = request.species ?? preset.ions.species.findIndex((s) => s.decay !== undefined);
  const precursor = preset.ions.species[index];
  if (!precursor) throw new Error('mirror stepping needs a species with a decay section (ions.species[].decay), or --step-species');
  if (preset.mirror.type === 'none' || preset.mirror.type === 'solved') throw new Error(`mirror stepping needs a gridded mirror; mirror.type is "${preset.mirror.type}"`);
  const mzP = precursor.mz;
  const charge = precursor.charge;
  if (!(request.fromMz > 0 && request.fromMz < request.toMz && request.toMz < mzP)) {
    throw new Error(`the fragment range must satisfy 0 < from < to < the precursor m/z (${mzP}); got ${request.fromMz}:${request.toMz}`);
  }
  if (!(request.minResolvingPower > 0)) throw new Error(`the target R must be > 0 (got ${request.minResolvingPower})`);
  const n = Math.max(8, Math.min(200, request.gridPoints ?? 40));
  // Grid of fragment fractions from below the lightest asked for up to just under the precursor.
  const lowest = Math.max(0.02, (0.8 * request.fromMz) / mzP);
  const fractions = Array.from({ length: n }, (_, k) => lowest + ((0.995 - lowest) * k) / (n - 1));
  const share = 1 / n;
  const channels = fractions.map((f, k) => ({ mz: f * mzP, charge, branching: k === n - 1 ? 1 - share * (n - 1) : share }));
  const gridPreset = withSpecies(preset, { ...precursor, decay: { law: { kind: 'fraction', fraction: 1, region: 'drift' }, channels, ...kerOf(precursor) } });
  const perPoint = Math.max(200, Math.min(20_000, Math.round(request.gridIonsPerPoint ?? GRID_IONS_PER_POINT)));
  const gridRun = simulate(gridPreset, { ions: perPoint * n, seed: PLANNING_SEED, analysis: 'peaks' });
  const report = gridRun.fragments?.report[0];
  if (!report) throw new Error('the grid run traced no fragments');
  const grid = report.channels.map((c, k) => {
    const f = c.fragment;
    return {
      fraction: fractions[k],
      resolvingPower: f.peak?.resolvingPower ?? f.resolvingPower,
      time_ns: f.peak ? f.peak.centroid_ns : f.flightTime_ns,
    };
  });
  // The window: the widest run of grid points around the best R that all reach the target.
  let best = -1;
  grid.forEach((g, k) => {
    if (g.resolvingPower !== null && (best < 0 || g.resolvingPower > (grid[best].resolvingPower ?? 0))) best = k;
  });
  const bestR = best < 0 ? null : grid[best].resolvingPower;
  if (bestR === null || bestR < request.minResolvingPower) {
    throw new Error(`no fragment of m/z ${request.fromMz}–${request.toMz} reaches R ${request.minResolvingPower} at any mirror setting of this analyser (best R ${bestR === null ? 'none' : bestR.toFixed(0)}); lower the target`);
  }
  const ok = (k: number): boolean => (grid[k].resolvingPower ?? 0) >= request.minResolvingPower;
  let lo = best;
  let hi = best;
  while (lo > 0 && ok(lo - 1)) lo--;
  while (hi < n - 1 && ok(hi + 1)) hi++;
  const xLo = grid[lo].fraction;
  const xHi = grid[hi].fraction;
  const minR = (a: number, b: number): number => Math.min(...grid.slice(a, b + 1).map((g) => g.resolvingPower ?? Infinity));
  const segments: SteppingSegment[] = [];
  const top = request.toMz / mzP;
  const bottom = request.fromMz / mzP;
  // First segment: the window's top edge on the heaviest fragment asked for.
  let s = top / xHi;
  const singleSetting = xHi / xLo >= top / bottom || lo === 0;
  while (segments.length < MAX_SEGMENTS) {
    const from = Math.max(bottom, s * xLo);
    const to = Math.min(top, s * xHi);
    segments.push({ index: segments.length, scale: s, mirror: scaledMirror(preset.mirror, preset.drift.potential_V, s), fromMz: from * mzP, toMz: to * mzP, minResolvingPower: minR(lo, hi) });
    if (from <= bottom || lo === 0) break;
    s *= xLo / xHi;
  }
  if (segments[segments.length - 1].fromMz > request.fromMz * (1 + 1e-12) && lo !== 0) {
    throw new Error(`more than ${MAX_SEGMENTS} segments would be needed for R ${request.minResolvingPower}; lower the target or narrow the range`);
  }
  return {
    precursorMz: mzP,
    window: { lowFraction: xLo, highFraction: xHi },
    grid,
    singleSetting: singleSetting && segments.length === 1,
    segments,
    spectrum: stitch(preset, index, segments, grid, mzP, request.ions),
  };
}

function kerOf(s: Preset['ions']['species'][number]): { kineticEnergyRelease_meV?: number } {
  return s.decay?.kineticEnergyRelease_meV === undefined ? {} : { kineticEnergyRelease_meV: s.decay.kineticEnergyRelease_meV };
}

/** x(t) from the grid's time law, linear between grid points (t rises with x in a mirror). */
function fractionAt(grid: SteppingResult['grid'], t_ns: number): number | null {
  const pts = grid.filter((g) => g.time_ns !== null).map((g) => [g.time_ns!, g.fraction] as const).sort((a, b) => a[0] - b[0]);
  if (pts.length < 2 || t_ns < pts[0][0] || t_ns > pts[pts.length - 1][0]) return null;
  for (let k = 1; k < pts.length; k++) {
    if (t_ns <= pts[k][0]) return pts[k - 1][1] + ((pts[k][1] - pts[k - 1][1]) * (t_ns - pts[k - 1][0])) / (pts[k][0] - pts[k - 1][0]);
  }
  return null;
}

function stitch(preset: Preset, species: number, segments: readonly SteppingSegment[], grid: SteppingResult['grid'], mzP: number, ions?: number): SteppingResult['spectrum'] {
  const mz: number[] = [];
  const intensity: number[] = [];
  const seg: number[] = [];
  if (!preset.acquisition) return { mz: new Float64Array(0), intensity: new Float64Array(0), segment: new Int32Array(0) };
  for (const segment of segments) {
    const run = simulate(withSpecies({ ...preset, mirror: segment.mirror }, preset.ions.species[species]), { ions, withSpectrum: true });
    const spec = run.analysis.spectrum;
    if (!spec) continue;
    for (let k = 0; k < spec.time_ns.length; k++) {
      // Per-segment calibration: a drift-formed fragment at scale s flies as one of fraction x = ε/s at s = 1.
      const x = fractionAt(grid, spec.time_ns[k]);
      if (x === null) continue;
      const m = mzP * segment.scale * x;
      if (m < segment.fromMz || m > segment.toMz) continue;
      mz.push(m);
      intensity.push(spec.intensity[k]);
      seg.push(segment.index);
    }
  }
  const order = mz.map((_, k) => k).sort((a, b) => mz[a] - mz[b]);
  return { mz: Float64Array.from(order, (k) => mz[k]), intensity: Float64Array.from(order, (k) => intensity[k]), segment: Int32Array.from(order, (k) => seg[k]) };
}
