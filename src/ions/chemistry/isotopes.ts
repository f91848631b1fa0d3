/**
 * Monoisotopic m/z and the isotope envelope of an ion, in fine structure (every isotopic
 * composition, so 13C, 15N, 2H, 17O/18O and 33S/34S splittings stay apart) and summed into
 * nominal-mass groups for display.
 *
 * Method: for each element the multinomial over its isotopes is enumerated exactly, walking the
 * chain of conditional binomials outwards from their modes; elements are then combined pairwise.
 * Because isotopic choices of different elements are independent, the most probable composition of
 * the whole ion is the product of each element's most probable one, so pruning every list at the
 * same relative threshold keeps exactly the compositions at or above that threshold of the
 * envelope's maximum: nothing above it is lost, nothing below it is kept (for very large or
 * metal-rich ions, close masses are merged early and a cap on the list length may drop the least
 * probable; the result then says so).
 *
 * Nominal groups are computed on their own by convolving per-shift probabilities and
 * probability-weighted masses (the aggregated distribution), which is exact whatever the fine
 * threshold, instead of being summed from the pruned fine peaks.
 */

import { isotopesForKey, readCompositionKey } from './composition';
import type { Composition } from './composition';
import { lookupElement } from './elements';

/** Electron mass in u, CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)). */
export const ELECTRON_MASS_U = 5.48579909065e-4;

/** Neutral-atom mass of the composition built from each element's most abundant isotope. */
export function monoisotopicMass_u(composition: Composition): number {
  let mass = 0;
  for (const [key, count] of Object.entries(composition)) {
    const { symbol, massNumber } = readCompositionKey(key);
    const isotopes = isotopesForKey(key);
    if (!isotopes) throw new Error(`no isotope data for '${key}'`);
    mass += count * (massNumber === undefined ? (lookupElement(symbol)?.principal.mass_u as number) : isotopes[0].mass_u);
  }
  return mass;
}

/**
 * m/z of an ion whose atoms (as neutral atoms) weigh `atomsMass_u` and whose signed charge is z:
 * (M − z·m_e)/|z|, i.e. z electrons removed from a cation, |z| added to an anion.
 * z = 0 returns the neutral mass itself.
 */
export function mzFromAtomsMass(atomsMass_u: number, charge: number): number {
  if (charge === 0) return atomsMass_u;
  return (atomsMass_u - charge * ELECTRON_MASS_U) / Math.abs(charge);
}

export interface IsotopePeak {
  /** m/z (u per elementary charge), or mass in u for charge 0. */
  readonly mz: number;
  /** Relative to the most abundant peak (= 1). */
  readonly abundance: number;
  /** Probability of this isotopic composition among all molecules of the species. */
  readonly fraction: number;
  /** Extra neutrons relative to the monoisotopic composition (nominal shift, may be negative). */
  readonly shift: number;
}

export interface NominalGroup {
  /** Extra neutrons relative to the monoisotopic composition: M+0, M+1, M+2 ... (or M−2 for 54Fe etc.). */
  readonly shift: number;
  /** Probability-weighted mean m/z of all the group's isotopic compositions. */
  readonly mz: number;
  /** Relative to the most abundant group (= 1). */
  readonly abundance: number;
  /** Summed probability of the group's compositions. */
  readonly fraction: number;
}

export interface EnvelopeOptions {
  /** Compositions below this fraction of the most probable one are left out. Default 1e-6. */
  readonly relativeThreshold?: number;
  /** Fine peaks closer than this in m/z are merged (abundance-weighted). Default 1e-6. */
  readonly mergeTolerance_mz?: number;
  /**
   * Most isotopic compositions kept at any stage. Default 1e6, which a 150 kDa protein at the default
   * threshold stays well under; past it the least probable are dropped and `complete` is false.
   */
  readonly maxCompositions?: number;
}

export interface IsotopeEnvelope {
  readonly monoisotopicMz: number;
  /** Fine structure, sorted by m/z. */
  readonly peaks: readonly IsotopePeak[];
  /**
   * Nominal-mass groups, sorted by shift (hence by m/z); computed exactly rather than summed from
   * `peaks`, and listed down to relativeThreshold × the largest group.
   */
  readonly groups: readonly NominalGroup[];
  /** Summed fraction of the fine peaks: 1 minus what the threshold (or the cap) left out. */
  readonly coverage: number;
  /** False when maxCompositions forced compositions above the threshold out. */
  readonly complete: boolean;
}

/** Growable columns of isotopic compositions: mass, probability relative to the list maximum, shift. */
class CompositionList {
  mass: Float64Array;
  rel: Float64Array;
  shift: Int32Array;
  length = 0;

  constructor(capacity: number) {
    this.mass = new Float64Array(capacity);
    this.rel = new Float64Array(capacity);
    this.shift = new Int32Array(capacity);
  }

  push(mass: number, rel: number, shift: number): void {
    if (this.length === this.mass.length) this.grow();
    this.mass[this.length] = mass;
    this.rel[this.length] = rel;
    this.shift[this.length] = shift;
    this.length++;
  }

  private grow(): void {
    const capacity = this.mass.length * 2;
    const mass = new Float64Array(capacity);
    const rel = new Float64Array(capacity);
    const shift = new Int32Array(capacity);
    mass.set(this.mass);
    rel.set(this.rel);
    shift.set(this.shift);
    this.mass = mass;
    this.rel = rel;
    this.shift = shift;
  }

  sortByMass(): void {
    sortColumns(this.mass, this.rel, this.shift, 0, this.length - 1);
  }

  /** Most probable first, so that products with this list can stop early. */
  sortByRelDescending(): void {
    sortColumns(this.rel, this.mass, this.shift, 0, this.length - 1);
    this.rel.subarray(0, this.length).reverse();
    this.mass.subarray(0, this.length).reverse();
    this.shift.subarray(0, this.length).reverse();
  }

  /**
   * Sorts by mass and merges neighbours closer than `tolerance_u` into their probability-weighted
   * centroid, labelled with the larger contributor's shift. Probability is conserved.
   */
  mergeClose(tolerance_u: number): void {
    if (this.length < 2) return;
    this.sortByMass();
    let w = 0;
    let kept = this.rel[0];
    for (let i = 1; i < this.length; i++) {
      const m = this.mass[i];
      const r = this.rel[i];
      if (m - this.mass[w] <= tolerance_u) {
        const total = this.rel[w] + r;
        this.mass[w] += (r / total) * (m - this.mass[w]);
        this.rel[w] = total;
        if (r > kept) {
          this.shift[w] = this.shift[i];
          kept = r;
        }
      } else {
        w++;
        this.mass[w] = m;
        this.rel[w] = r;
        this.shift[w] = this.shift[i];
        kept = r;
      }
    }
    this.length = w + 1;
  }

  /** Keeps the `keep` most probable entries. */
  truncateToMostProbable(keep: number): void {
    if (this.length <= keep) return;
    this.sortByRelDescending();
    this.length = keep;
  }
}

/**
 * In-place quicksort of `key[lo..hi]` ascending, carrying two parallel columns along. Written out
 * because typed-array sort with a comparator is slow and refuses very large arrays.
 */
function sortColumns(key: Float64Array, b: Float64Array, c: Int32Array, lo: number, hi: number): void {
  while (hi - lo > 16) {
    const mid = (lo + hi) >>> 1;
    // Median of three as pivot, which keeps already-sorted input from going quadratic.
    if (key[mid] < key[lo]) swap(key, b, c, mid, lo);
    if (key[hi] < key[lo]) swap(key, b, c, hi, lo);
    if (key[hi] < key[mid]) swap(key, b, c, hi, mid);
    const pivot = key[mid];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (key[i] < pivot) i++;
      while (key[j] > pivot) j--;
      if (i <= j) {
        swap(key, b, c, i, j);
        i++;
        j--;
      }
    }
    // Recurse into the smaller side, loop on the larger: stack depth stays logarithmic.
    if (j - lo < hi - i) {
      sortColumns(key, b, c, lo, j);
      lo = i;
    } else {
      sortColumns(key, b, c, i, hi);
      hi = j;
    }
  }
  for (let i = lo + 1; i <= hi; i++) {
    const k = key[i];
    const vb = b[i];
    const vc = c[i];
    let j = i - 1;
    while (j >= lo && key[j] > k) {
      key[j + 1] = key[j];
      b[j + 1] = b[j];
      c[j + 1] = c[j];
      j--;
    }
    key[j + 1] = k;
    b[j + 1] = vb;
    c[j + 1] = vc;
  }
}

function swap(key: Float64Array, b: Float64Array, c: Int32Array, i: number, j: number): void {
  const k = key[i];
  key[i] = key[j];
  key[j] = k;
  const vb = b[i];
  b[i] = b[j];
  b[j] = vb;
  const vc = c[i];
  c[i] = c[j];
  c[j] = vc;
}

// ln n! from a table for small n and Stirling's series beyond, which is exact to double precision there.
const LOG_FACTORIAL_TABLE_SIZE = 256;
const LOG_FACTORIAL_TABLE = (() => {
  const table = new Float64Array(LOG_FACTORIAL_TABLE_SIZE);
  for (let i = 2; i < LOG_FACTORIAL_TABLE_SIZE; i++) table[i] = table[i - 1] + Math.log(i);
  return table;
})();

function logFactorial(n: number): number {
  if (n < LOG_FACTORIAL_TABLE_SIZE) return LOG_FACTORIAL_TABLE[n];
  const inv = 1 / n;
  const inv2 = inv * inv;
  return n * Math.log(n) - n + 0.5 * Math.log(2 * Math.PI * n) + inv * (1 / 12 - inv2 * (1 / 360 - inv2 / 1260));
}

function logBinomial(k: number, n: number, logP: number, logQ: number): number {
  return logFactorial(n) - logFactorial(k) - logFactorial(n - k) + k * logP + (n - k) * logQ;
}

interface ElementIsotope {
  readonly mass_u: number;
  readonly probability: number;
  readonly shift: number;
}

/**
 * All compositions of `count` atoms of one element whose probability is at least `threshold`
 * times the most probable one, with rel = probability / most probable, sorted by rel descending;
 * returns ln(most probable probability) alongside.
 */
function elementCompositions(
  isotopes: readonly ElementIsotope[],
  count: number,
  threshold: number,
  cap: number,
): { list: CompositionList; logMax: number; truncated: boolean } {
  // Most abundant isotope last: it takes whatever the rarer isotopes leave.
  const principal = isotopes.reduce((best, iso) => (iso.probability > best.probability ? iso : best));
  const rare = isotopes.filter((iso) => iso !== principal).sort((a, b) => b.probability - a.probability);
  // `found.rel` holds ln(probability) here; it becomes probability / maximum below.
  const found = new CompositionList(64);
  // Too many compositions to list (hundreds of atoms of a many-isotope element): raise this
  // element's threshold so that about `cap` remain, and say the result is incomplete.
  const estimatedThreshold = thresholdForCount(rare, principal, count, cap);
  let truncated = estimatedThreshold > threshold;
  const elementThreshold = Math.max(threshold, estimatedThreshold);
  let logFloor = Math.log(elementThreshold) + approximateLogMode(rare, principal, count);
  let logMax = -Infinity;
  // A bound on the walk itself, in case the estimate above is far off.
  let visitsLeft = 4 * cap;

  const rareCounts = new Int32Array(rare.length);
  const visit = (level: number, remaining: number, remainingProbability: number, logPrefix: number): void => {
    if (--visitsLeft < 0) {
      truncated = true;
      return;
    }
    if (level === rare.length) {
      let mass = remaining * principal.mass_u;
      let shift = 0;
      for (let j = 0; j < rare.length; j++) {
        mass += rareCounts[j] * rare[j].mass_u;
        shift += rareCounts[j] * rare[j].shift;
      }
      found.push(mass, logPrefix, shift);
      if (logPrefix > logMax) logMax = logPrefix;
      if (found.length > 2 * cap) {
        // Hundreds of atoms of a many-isotope element: keep the most probable, raise the floor.
        found.truncateToMostProbable(cap);
        logFloor = Math.max(logFloor, found.rel[cap - 1]);
        truncated = true;
      }
      return;
    }
    const q = rare[level].probability / remainingProbability;
    const logQ = Math.log(q);
    const logNotQ = Math.log1p(-q);
    const nextProbability = remainingProbability - rare[level].probability;
    // The conditional binomial is unimodal: walk up and down from its mode until below the floor.
    const mode = Math.min(remaining, Math.floor((remaining + 1) * q));
    for (let k = mode; k <= remaining; k++) {
      const lp = logPrefix + logBinomial(k, remaining, logQ, logNotQ);
      if (lp < logFloor) break;
      rareCounts[level] = k;
      visit(level + 1, remaining - k, nextProbability, lp);
    }
    for (let k = mode - 1; k >= 0; k--) {
      const lp = logPrefix + logBinomial(k, remaining, logQ, logNotQ);
      if (lp < logFloor) break;
      rareCounts[level] = k;
      visit(level + 1, remaining - k, nextProbability, lp);
    }
    rareCounts[level] = 0;
  };
  visit(0, count, 1, 0);

  // Keep exactly those at or above threshold × the true maximum (the floor used a lower bound of it).
  const list = new CompositionList(Math.max(1, found.length));
  const logCut = logMax + Math.log(elementThreshold);
  for (let i = 0; i < found.length; i++) {
    if (found.rel[i] >= logCut) list.push(found.mass[i], Math.exp(found.rel[i] - logMax), found.shift[i]);
  }
  list.sortByRelDescending();
  if (list.length > cap) {
    list.length = cap;
    truncated = true;
  }
  return { list, logMax, truncated };
}

/**
 * The relative threshold above which about `cap` compositions of `count` atoms lie, from the
 * Gaussian approximation of the multinomial: those compositions fill the ellipsoid
 * ½·xᵀΣ⁻¹x ≤ ln(1/t), of volume V_d·r^d·√det Σ with r² = 2 ln(1/t) and
 * det Σ = count^d·Π p (all isotopes). 0 when `cap` is not exceeded at any threshold of interest.
 */
function thresholdForCount(rare: readonly ElementIsotope[], principal: ElementIsotope, count: number, cap: number): number {
  const d = rare.length;
  if (d === 0) return 0;
  let logSqrtDet = 0.5 * (d * Math.log(count) + Math.log(principal.probability));
  for (const iso of rare) logSqrtDet += 0.5 * Math.log(iso.probability);
  // Volume of the unit d-ball: V_0 = 1, V_1 = 2, V_d = V_{d−2}·2π/d.
  let unitBall = d % 2 === 0 ? 1 : 2;
  for (let k = d % 2 === 0 ? 2 : 3; k <= d; k += 2) unitBall *= (2 * Math.PI) / k;
  const logRadiusPowD = Math.log(cap) - Math.log(unitBall) - logSqrtDet;
  const radiusSquared = Math.exp((2 * logRadiusPowD) / d);
  return Math.exp(-radiusSquared / 2);
}

/** ln of the probability of a near-modal composition: a lower bound of the true mode's. */
function approximateLogMode(rare: readonly ElementIsotope[], principal: ElementIsotope, count: number): number {
  let remaining = count;
  let logP = logFactorial(count);
  for (const iso of rare) {
    const k = Math.min(remaining, Math.floor(count * iso.probability));
    remaining -= k;
    logP += k * Math.log(iso.probability) - logFactorial(k);
  }
  return logP + remaining * Math.log(principal.probability) - logFactorial(remaining);
}

/** How many products of `a` and `b` (both most probable first) reach `floor`, by a two-pointer sweep. */
function countProductsAtLeast(a: CompositionList, b: CompositionList, floor: number): number {
  let j = b.length;
  let total = 0;
  for (let i = 0; i < a.length; i++) {
    const need = floor / a.rel[i];
    while (j > 0 && b.rel[j - 1] < need) j--;
    if (j === 0) break;
    total += j;
  }
  return total;
}

// Products allowed beyond `cap` before merging (which loses nothing) is given up for a raised floor.
const PRODUCT_HEADROOM = 8;

/**
 * Products of lists `a` and `b` whose probability relative to the product of their maxima is at
 * least `threshold`. When there would be more than `cap` even after merging close masses, the floor
 * is raised so that only about the `cap` most probable remain, and `truncated` is set.
 */
function combine(a: CompositionList, b: CompositionList, threshold: number, cap: number, tolerance_u: number): { list: CompositionList; truncated: boolean } {
  // Both most probable first, so each loop stops at its first product under the floor.
  a.sortByRelDescending();
  let floor = threshold;
  let truncated = false;
  if (countProductsAtLeast(a, b, floor) > PRODUCT_HEADROOM * cap) {
    // Pathological inputs (many atoms of several many-isotope metals): bisect ln(floor) for ~cap products.
    let lo = Math.log(threshold);
    let hi = 0;
    for (let k = 0; k < 60; k++) {
      const mid = 0.5 * (lo + hi);
      if (countProductsAtLeast(a, b, Math.exp(mid)) > cap) lo = mid;
      else hi = mid;
    }
    floor = Math.exp(hi);
    truncated = true;
  }
  const out = new CompositionList(Math.max(16, a.length + b.length));
  let mergingHelps = true;
  const b0 = b.rel[0];
  for (let i = 0; i < a.length; i++) {
    const ra = a.rel[i];
    if (ra * b0 < floor) break;
    for (let j = 0; j < b.length; j++) {
      const r = ra * b.rel[j];
      if (r < floor) break;
      out.push(a.mass[i] + b.mass[j], r, a.shift[i] + b.shift[j]);
    }
    if (mergingHelps && out.length > 2 * cap) {
      const before = out.length;
      out.mergeClose(tolerance_u);
      mergingHelps = out.length < 0.75 * before;
    }
  }
  if (out.length > cap) out.mergeClose(tolerance_u);
  if (out.length > cap) {
    out.truncateToMostProbable(cap);
    truncated = true;
  }
  return { list: out, truncated };
}

function isotopesOf(key: string): ElementIsotope[] {
  const isotopes = isotopesForKey(key);
  if (!isotopes) throw new Error(`no isotope data for '${key}'`);
  const { symbol, massNumber } = readCompositionKey(key);
  const reference = massNumber ?? (lookupElement(symbol)?.principal.massNumber as number);
  // Tabulated abundances are rounded; renormalised so fractions are probabilities.
  let total = 0;
  for (const iso of isotopes) total += iso.abundance;
  return isotopes.map((iso) => ({ mass_u: iso.mass_u, probability: iso.abundance / total, shift: iso.massNumber - reference }));
}

const MERGE_AS_WE_GO_LENGTH = 4096;

/**
 * Isotope envelope of an ion with the given atoms and signed charge (0: neutral masses).
 * Throws only for compositions with keys the table lacks or non-positive-integer counts; user
 * input reaches here through parseFormula, which rejects those.
 */
export function isotopeEnvelope(composition: Composition, charge: number, options: EnvelopeOptions = {}): IsotopeEnvelope {
  const threshold = options.relativeThreshold ?? 1e-6;
  const tolerance = options.mergeTolerance_mz ?? 1e-6;
  const cap = options.maxCompositions ?? 1_000_000;
  if (!(threshold > 0 && threshold < 1)) throw new Error('relativeThreshold must lie in (0, 1)');
  if (!(tolerance >= 0)) throw new Error('mergeTolerance_mz must be ≥ 0');
  if (!(Number.isSafeInteger(cap) && cap >= 1)) throw new Error('maxCompositions must be a positive integer');

  // Merging acts on neutral masses; a tolerance in m/z spans |z| times as much mass.
  const tolerance_u = tolerance * Math.max(1, Math.abs(charge));
  let all: CompositionList | undefined;
  let logScale = 0;
  let complete = true;
  for (const [key, count] of Object.entries(composition)) {
    if (!Number.isSafeInteger(count) || count <= 0) throw new Error(`count of '${key}' must be a positive integer, got ${count}`);
    const element = elementCompositions(isotopesOf(key), count, threshold, cap);
    logScale += element.logMax;
    if (element.truncated) complete = false;
    if (all === undefined) {
      all = element.list;
    } else {
      const product = combine(all, element.list, threshold, cap, tolerance_u);
      all = product.list;
      if (product.truncated) complete = false;
      // Merging as we go keeps big molecules' lists short; it only changes which near-coincident
      // compositions end up together.
      if (all.length > MERGE_AS_WE_GO_LENGTH) all.mergeClose(tolerance_u);
    }
  }
  if (all === undefined) throw new Error('empty composition');

  const scale = Math.exp(logScale);
  const monoisotopicMz = mzFromAtomsMass(monoisotopicMass_u(composition), charge);
  const groups = nominalGroups(composition, charge, threshold);
  const peaks = mergedPeaks(all, charge, scale, tolerance);
  let coverage = 0;
  for (const peak of peaks) coverage += peak.fraction;
  return { monoisotopicMz, peaks, groups, coverage, complete };
}

/** Probability and probability-weighted mass by nominal shift, from `minShift` up. */
interface NominalDistribution {
  readonly minShift: number;
  readonly p: Float64Array;
  readonly pm: Float64Array;
}

// Bins this far below the largest carry nothing a double could add to it.
const NOMINAL_TAIL = 1e-30;

/**
 * Convolution of two nominal distributions; probability-weighted masses add as
 * Σ (pm_a·p_b + p_a·pm_b), so each bin's mean mass stays exact.
 */
function convolveNominal(a: NominalDistribution, b: NominalDistribution): NominalDistribution {
  const n = a.p.length + b.p.length - 1;
  const p = new Float64Array(n);
  const pm = new Float64Array(n);
  for (let i = 0; i < a.p.length; i++) {
    if (a.p[i] === 0) continue;
    for (let j = 0; j < b.p.length; j++) {
      p[i + j] += a.p[i] * b.p[j];
      pm[i + j] += a.pm[i] * b.p[j] + a.p[i] * b.pm[j];
    }
  }
  let max = 0;
  for (const v of p) max = Math.max(max, v);
  let lo = 0;
  let hi = n - 1;
  while (lo < hi && p[lo] < NOMINAL_TAIL * max) lo++;
  while (hi > lo && p[hi] < NOMINAL_TAIL * max) hi--;
  return { minShift: a.minShift + b.minShift + lo, p: p.slice(lo, hi + 1), pm: pm.slice(lo, hi + 1) };
}

/** Nominal distribution of `count` atoms, by repeated squaring of the one-atom distribution. */
function nominalOfElement(isotopes: readonly ElementIsotope[], count: number): NominalDistribution {
  let minShift = Infinity;
  let maxShift = -Infinity;
  for (const iso of isotopes) {
    minShift = Math.min(minShift, iso.shift);
    maxShift = Math.max(maxShift, iso.shift);
  }
  const p = new Float64Array(maxShift - minShift + 1);
  const pm = new Float64Array(maxShift - minShift + 1);
  for (const iso of isotopes) {
    p[iso.shift - minShift] += iso.probability;
    pm[iso.shift - minShift] += iso.probability * iso.mass_u;
  }
  let base: NominalDistribution = { minShift, p, pm };
  let result: NominalDistribution = { minShift: 0, p: Float64Array.of(1), pm: Float64Array.of(0) };
  for (let n = count; n > 0; n >>= 1) {
    if (n & 1) result = convolveNominal(result, base);
    if (n > 1) base = convolveNominal(base, base);
  }
  return result;
}

/**
 * Nominal-mass groups computed directly (not from the pruned fine structure), so their sums and
 * mean m/z are exact whatever the fine threshold; groups below `threshold` × the largest are left out.
 */
function nominalGroups(composition: Composition, charge: number, threshold: number): NominalGroup[] {
  let total: NominalDistribution = { minShift: 0, p: Float64Array.of(1), pm: Float64Array.of(0) };
  for (const [key, count] of Object.entries(composition)) total = convolveNominal(total, nominalOfElement(isotopesOf(key), count));
  let max = 0;
  for (const v of total.p) max = Math.max(max, v);
  const groups: NominalGroup[] = [];
  for (let k = 0; k < total.p.length; k++) {
    if (total.p[k] < threshold * max) continue;
    groups.push({ shift: total.minShift + k, mz: mzFromAtomsMass(total.pm[k] / total.p[k], charge), abundance: total.p[k] / max, fraction: total.p[k] });
  }
  return groups;
}

function mergedPeaks(all: CompositionList, charge: number, scale: number, tolerance_mz: number): IsotopePeak[] {
  all.mergeClose(tolerance_mz * Math.max(1, Math.abs(charge)));
  let maxRel = 0;
  for (let i = 0; i < all.length; i++) maxRel = Math.max(maxRel, all.rel[i]);
  const peaks: IsotopePeak[] = new Array(all.length);
  for (let i = 0; i < all.length; i++) {
    peaks[i] = { mz: mzFromAtomsMass(all.mass[i], charge), abundance: all.rel[i] / maxRel, fraction: all.rel[i] * scale, shift: all.shift[i] };
  }
  return peaks;
}
