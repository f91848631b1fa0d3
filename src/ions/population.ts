/**
 * Initial conditions of an ion population: how many ions of each species, where along the axis
 * they start, and with what axial velocity. Each species draws from its own seeded stream, so a
 * species' ions do not change when another species is added or the pool layout changes.
 */
import { ATOMIC_MASS_CONSTANT_KG, BOLTZMANN_J_PER_K } from '../physics/constants';
import { allocateEnsemble, type Ensemble, type SpeciesInfo } from './ensemble';
import { SeededRandom } from './random';
import { KeptResults } from '../keptResults';

export type StartPositionSpec =
  | { readonly kind: 'surface'; readonly z_m: number }
  | { readonly kind: 'uniform'; readonly from_m: number; readonly to_m: number }
  | { readonly kind: 'gaussian'; readonly mean_m: number; readonly sd_m: number };

export type StartVelocitySpec =
  | {
      readonly kind: 'normal';
      readonly mean_m_per_s: number;
      readonly sd_m_per_s: number;
      /** Draws below this are redrawn (truncated normal); -Infinity for none. */
      readonly minimum_m_per_s: number;
    }
  /** Axial kinetic energy normal (truncated at 0), converted per species to a speed away from the repeller. */
  | { readonly kind: 'energy'; readonly mean_J: number; readonly sd_J: number }
  /** Maxwell–Boltzmann: each velocity component normal with mean 0 and sd sqrt(kT/m) for the ion's mass m. */
  | { readonly kind: 'thermal'; readonly temperature_K: number };

export type TransverseVelocitySpec =
  | { readonly kind: 'none' }
  | { readonly kind: 'normal'; readonly sd_m_per_s: number }
  | { readonly kind: 'angular'; readonly sd_rad: number }
  | { readonly kind: 'thermal'; readonly temperature_K: number };

export interface TransverseSpec {
  /** Start positions uniform over a disc of this radius about the axis. */
  readonly spotRadius_m: number;
  readonly velocity: TransverseVelocitySpec;
  /** Orthogonal injection: kinetic energy of a beam moving along +x (0 = none). */
  readonly beamEnergy_J: number;
  readonly beamEnergySd_J: number;
}

export const NO_TRANSVERSE: TransverseSpec = { spotRadius_m: 0, velocity: { kind: 'none' }, beamEnergy_J: 0, beamEnergySd_J: 0 };

export interface PopulationSpec {
  readonly species: readonly SpeciesInfo[];
  readonly totalIons: number;
  readonly seed: number;
  readonly startPosition: StartPositionSpec;
  readonly startVelocity: StartVelocitySpec;
  readonly transverse?: TransverseSpec;
  /** Start positions are confined to [0, firstStage_m) (the first source stage). */
  readonly firstStage_m: number;
}

/** Redraw budget for truncated distributions; validation keeps acceptance far above 1/MAX_REDRAWS. */
const MAX_REDRAWS = 10_000;

/** Split `total` ions over species by abundance, largest remainder first (deterministic). */
export function allocateCounts(abundances: readonly number[], total: number): number[] {
  const sum = abundances.reduce((a, b) => a + b, 0);
  if (!(sum > 0)) return abundances.map(() => 0);
  const exact = abundances.map((a) => (a / sum) * total);
  const counts = exact.map(Math.floor);
  let left = total - counts.reduce((a, b) => a + b, 0);
  const order = exact
    .map((x, i) => ({ i, frac: x - Math.floor(x) }))
    .sort((p, q) => q.frac - p.frac || p.i - q.i);
  for (let k = 0; left > 0; k = (k + 1) % order.length, left--) counts[order[k].i]++;
  return counts;
}

/**
 * The last few populations sampled, when keepSampledPopulations turned it on (the engine worker
 * does): the page's runs mostly change potentials or timing, not the ions, and a run split over
 * workers samples the same population again to finish. An ensemble is read-only to every caller
 * (tests/ions/populationCache.test.ts checks that a run leaves it as sampled), so handing out
 * the same one gives the same numbers. Keyed by the whole spec, numbers written exactly.
 */
const kept = new KeptResults<Ensemble>();

/** Keep the last `entries` sampled populations for reuse (0 turns it off and forgets them). */
export function keepSampledPopulations(entries: number): void {
  kept.keep(entries);
}

export function samplePopulation(spec: PopulationSpec): Ensemble {
  return kept.get(spec, drawPopulation);
}

function drawPopulation(spec: PopulationSpec): Ensemble {
  const counts = allocateCounts(
    spec.species.map((s) => s.abundance),
    spec.totalIons,
  );
  const ens = allocateEnsemble(spec.species, counts);
  for (let s = 0; s < spec.species.length; s++) {
    const rng = new SeededRandom(spec.seed, s);
    const from = ens.speciesStart[s];
    const to = ens.speciesStart[s + 1];
    samplePositions(ens.z0_m, from, to, spec.startPosition, spec.firstStage_m, rng);
    sampleVelocities(ens.vz0_m_per_s, from, to, spec.startVelocity, spec.species[s], rng);
    // Transverse draws come after the axial ones, so adding them leaves the axial sample unchanged.
    if (spec.transverse && drawsTransverse(spec.transverse)) sampleTransverse(ens, from, to, spec.transverse, spec.species[s], rng);
  }
  return ens;
}

/** False when the transverse spec draws nothing and would only write the zeros the arrays start with. */
function drawsTransverse(spec: TransverseSpec): boolean {
  return spec.spotRadius_m > 0 || spec.velocity.kind !== 'none' || spec.beamEnergy_J > 0;
}

function samplePositions(
  z: Float64Array,
  from: number,
  to: number,
  spec: StartPositionSpec,
  limit_m: number,
  rng: SeededRandom,
): void {
  // One loop per kind, so the per-ion loop has no branch on the spec.
  switch (spec.kind) {
    case 'surface':
      z.fill(spec.z_m, from, to);
      return;
    case 'uniform': {
      rng.fillUniform(z, from, to, spec.from_m, spec.to_m - spec.from_m);
      return;
    }
    case 'gaussian':
      for (let i = from; i < to; i++) {
        let x = spec.mean_m + spec.sd_m * rng.normal();
        for (let tries = 0; (x < 0 || x >= limit_m) && tries < MAX_REDRAWS; tries++) {
          x = spec.mean_m + spec.sd_m * rng.normal();
        }
        z[i] = Math.min(Math.max(x, 0), limit_m * (1 - 1e-12));
      }
      return;
  }
}

function sampleVelocities(
  v: Float64Array,
  from: number,
  to: number,
  spec: StartVelocitySpec,
  species: SpeciesInfo,
  rng: SeededRandom,
): void {
  // Truncated normal: draws below the minimum are redrawn, then clamped (see fillNormal).
  if (spec.kind === 'normal') {
    rng.fillNormal(v, from, to, spec.mean_m_per_s, spec.sd_m_per_s, spec.minimum_m_per_s, MAX_REDRAWS);
    return;
  }
  // The ion's mass m = (m/z)·z·u, not its m/z, sets its speed for a given energy or temperature.
  const mass_kg = species.mz * species.charge * ATOMIC_MASS_CONSTANT_KG;
  if (spec.kind === 'thermal') {
    const sd = Math.sqrt((BOLTZMANN_J_PER_K * spec.temperature_K) / mass_kg);
    for (let i = from; i < to; i++) v[i] = sd * rng.normal();
    return;
  }
  // Energy normal truncated at 0, each kept draw turned into the speed sqrt(2E/m).
  rng.fillNormal(v, from, to, spec.mean_J, spec.sd_J, 0, MAX_REDRAWS, mass_kg);
}

function sampleTransverse(ens: Ensemble, from: number, to: number, spec: TransverseSpec, species: SpeciesInfo, rng: SeededRandom): void {
  const mass_kg = species.mz * species.charge * ATOMIC_MASS_CONSTANT_KG;
  const vel = spec.velocity;
  const thermalSd = vel.kind === 'thermal' ? Math.sqrt((BOLTZMANN_J_PER_K * vel.temperature_K) / mass_kg) : 0;
  for (let i = from; i < to; i++) {
    if (spec.spotRadius_m > 0) {
      // Uniform over the disc: radius ∝ sqrt(u).
      const r = spec.spotRadius_m * Math.sqrt(rng.uniform());
      const phi = 2 * Math.PI * rng.uniform();
      ens.x0_m[i] = r * Math.cos(phi);
      ens.y0_m[i] = r * Math.sin(phi);
    }
    let vx = 0;
    let vy = 0;
    switch (vel.kind) {
      case 'normal':
        vx = vel.sd_m_per_s * rng.normal();
        vy = vel.sd_m_per_s * rng.normal();
        break;
      case 'angular': {
        const vz = Math.abs(ens.vz0_m_per_s[i]);
        vx = vz * Math.tan(vel.sd_rad * rng.normal());
        vy = vz * Math.tan(vel.sd_rad * rng.normal());
        break;
      }
      case 'thermal':
        vx = thermalSd * rng.normal();
        vy = thermalSd * rng.normal();
        break;
      case 'none':
        break;
    }
    if (spec.beamEnergy_J > 0) {
      let energy = spec.beamEnergy_J + spec.beamEnergySd_J * rng.normal();
      for (let tries = 0; energy < 0 && tries < MAX_REDRAWS; tries++) energy = spec.beamEnergy_J + spec.beamEnergySd_J * rng.normal();
      vx += Math.sqrt((2 * Math.max(energy, 0)) / mass_kg);
    }
    ens.vx0_m_per_s[i] = vx;
    ens.vy0_m_per_s[i] = vy;
  }
}
