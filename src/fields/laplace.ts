/**
 * Finite-difference Laplace solver for axisymmetric potentials, (1/r)∂r(r ∂rφ) + ∂²zφ = 0.
 *
 * Discretisation (conservative, second order): at a node r_i = i·hr with i ≥ 1
 *   [r_{i+½}(φ_{i+1} − φ_i) − r_{i−½}(φ_i − φ_{i−1})] / (r_i hr²) + (φ_{j+1} − 2φ_j + φ_{j−1}) / hz²,
 * and on the axis (i = 0) the limit r → 0 (L'Hôpital, φ even in r):
 *   4(φ_1 − φ_0)/hr² + (φ_{j+1} − 2φ_j + φ_{j−1}) / hz².
 * Nodes with fixed = 1 hold prescribed (Dirichlet) values; the outer row r = rMax and both z end
 * rows must be fixed (the mesh builder guarantees that).
 *
 * Convergence measure, shared by every solver here: the relative residual
 *   ‖Lφ‖₂ / ‖b‖₂ over free nodes, with b = −Lφ evaluated with all free nodes set to 0,
 * i.e. the right-hand side once the Dirichlet values are moved across. It does not depend on the
 * initial guess; from a zero initial guess it equals the residual relative to the initial one.
 *
 * Two solvers share the discretisation:
 *  - geometric multigrid V-cycles: red-black Gauss–Seidel smoothing, bilinear prolongation,
 *    restriction by its transpose (full weighting, volume-weighted by r), and Galerkin coarse
 *    operators P^T A P built from the volume-weighted (symmetric) form of the operator. The
 *    Galerkin products coarsen the Dirichlet mask algebraically: a coarse node is dropped only
 *    when every fine node it touches is fixed. Rediscretised coarse grids with injected masks
 *    were tried first and converged at only 0.4–0.6 per V-cycle, because electrode faces that
 *    fall between coarse nodes move on the coarse grid; the Galerkin operators see them exactly.
 *    The coarsest grid is solved by banded LU.
 *  - plain red-black SOR with an optimal-ω estimate (cheap empty-can estimate, or Young's formula
 *    with the actual mesh's Jacobi radius from Lanczos), the baseline for benchmarks.
 * All work arrays are allocated up front; the iterations allocate nothing.
 */

export interface DirichletGrid {
  readonly nr: number;
  readonly nz: number;
  readonly hr_m: number;
  readonly hz_m: number;
  /** 1 where the value in the solution array is prescribed, per node j·nr + i. */
  readonly fixed: Uint8Array;
}

export interface SolveOptions {
  /** Stop when the relative residual (see module comment) is at or below this. Default 1e-9. */
  readonly relativeTolerance?: number;
  /** Cap on V-cycles (multigrid) or sweeps (SOR). */
  readonly maxIterations?: number;
}

export interface SolveReport {
  readonly method: 'multigrid' | 'sor' | 'direct';
  readonly converged: boolean;
  /** V-cycles for multigrid (not counting the nested-iteration start, which costs about one more), sweeps for SOR, 1 for a direct solve. */
  readonly iterations: number;
  readonly relativeResidual: number;
  /** Why a fallback was used, or why the solve stopped short; empty when all went as planned. */
  readonly note: string;
}

export const DEFAULT_RELATIVE_TOLERANCE = 1e-9;

/** First zero of J0 (Abramowitz & Stegun table 9.5, from memory): lowest radial mode of a grounded cylinder. */
const J0_FIRST_ZERO = 2.404825557695773;

/** Limits for a banded LU on one grid: work n·p² and storage n·(2p+1) doubles. */
const DIRECT_MAX_WORK = 4e7;
const DIRECT_MAX_STORAGE = 8e6;

/** Coarsening stops once a grid has at most this many nodes (the banded solve is then trivial). */
const COARSEST_TARGET_NODES = 300;

/**
 * The finest grid (Laplace: no right-hand side), with the 5-point operator
 *   L u = aW u_W + aE u_E + aZ (u_S + u_N) − aC u   (coefficients per radial index i).
 * Its symmetric (volume-weighted) form is w_i · L with w_0 = 1/8, w_i = i: the weights of the
 * axis disc and of the rings around it, in units of hr·hr·hz·2π.
 */
interface FineLevel {
  readonly nr: number;
  readonly nz: number;
  readonly fixed: Uint8Array;
  /** The caller's solution array during a solve. */
  u: Float64Array;
  readonly res: Float64Array;
  readonly aW: Float64Array;
  readonly aE: Float64Array;
  readonly aC: Float64Array;
  readonly invC: Float64Array;
  readonly aZ: number;
  readonly weight: Float64Array;
}

/** A coarse grid with a 9-point operator stored as A[9k + d], d = 3·(dj + 1) + (di + 1). */
interface CoarseLevel {
  readonly nr: number;
  readonly nz: number;
  readonly fixed: Uint8Array;
  readonly u: Float64Array;
  readonly f: Float64Array;
  readonly res: Float64Array;
  readonly A: Float64Array;
  /** 1 / A[9k + 4] at free nodes. */
  readonly invDiag: Float64Array;
}

function checkGrid(grid: DirichletGrid): void {
  const { nr, nz, hr_m, hz_m, fixed } = grid;
  if (!Number.isInteger(nr) || !Number.isInteger(nz) || nr < 3 || nz < 3) throw new Error(`grid must be at least 3×3 nodes (got ${nr}×${nz})`);
  if (!(hr_m > 0) || !(hz_m > 0) || !Number.isFinite(hr_m) || !Number.isFinite(hz_m)) throw new Error('grid spacings must be positive');
  if (fixed.length !== nr * nz) throw new Error(`fixed mask has ${fixed.length} entries, expected ${nr * nz}`);
  for (let i = 0; i < nr; i++) {
    if (!fixed[i] || !fixed[(nz - 1) * nr + i]) throw new Error('both z end rows must be fixed (Dirichlet)');
  }
  for (let j = 0; j < nz; j++) if (!fixed[j * nr + nr - 1]) throw new Error('the outer radial row must be fixed (Dirichlet)');
}

function makeFineLevel(grid: DirichletGrid): FineLevel {
  const { nr, nz, hr_m: hr, hz_m: hz, fixed } = grid;
  const aW = new Float64Array(nr);
  const aE = new Float64Array(nr);
  const aC = new Float64Array(nr);
  const invC = new Float64Array(nr);
  const weight = new Float64Array(nr);
  const aZ = 1 / (hz * hz);
  const ihr2 = 1 / (hr * hr);
  for (let i = 0; i < nr; i++) {
    if (i === 0) {
      aW[i] = 0;
      aE[i] = 4 * ihr2;
      weight[i] = 0.125;
    } else {
      aW[i] = ((i - 0.5) / i) * ihr2;
      aE[i] = ((i + 0.5) / i) * ihr2;
      weight[i] = i;
    }
    aC[i] = aW[i] + aE[i] + 2 * aZ;
    invC[i] = 1 / aC[i];
  }
  const n = nr * nz;
  return { nr, nz, fixed, u: new Float64Array(n), res: new Float64Array(n), aW, aE, aC, invC, aZ, weight };
}

/** The fine operator in symmetric form (w_i · L) as a 9-point array, for the Galerkin product and direct solves. */
function fineAsNinePoint(L: FineLevel): Float64Array {
  const { nr, nz, fixed, aW, aE, aC, aZ, weight } = L;
  const A = new Float64Array(9 * nr * nz);
  for (let j = 1; j < nz - 1; j++) {
    for (let i = 0; i < nr - 1; i++) {
      const k = j * nr + i;
      if (fixed[k] === 1) continue;
      const w = weight[i];
      A[9 * k + 4] = -w * aC[i];
      A[9 * k + 3] = w * aW[i];
      A[9 * k + 5] = w * aE[i];
      A[9 * k + 1] = w * aZ;
      A[9 * k + 7] = w * aZ;
    }
  }
  return A;
}

/**
 * Red-black relaxation of the fine level: Gauss–Seidel for ω = 1, SOR otherwise. Node (i, j) is
 * red when i + j is even. Row i = 0 has aW = 0, so reading its west neighbour (the previous
 * row's last node, always fixed) is harmless.
 */
function relaxFine(L: FineLevel, sweeps: number, omega: number): void {
  const { nr, nz, fixed, u, aW, aE, invC, aZ } = L;
  const last = nr - 1;
  for (let s = 0; s < sweeps; s++) {
    for (let color = 0; color < 2; color++) {
      for (let j = 1; j < nz - 1; j++) {
        const row = j * nr;
        for (let i = (j + color) & 1; i < last; i += 2) {
          const k = row + i;
          if (fixed[k] === 1) continue;
          const gs = (aW[i] * u[k - 1] + aE[i] * u[k + 1] + aZ * (u[k - nr] + u[k + nr])) * invC[i];
          u[k] += omega * (gs - u[k]);
        }
      }
    }
  }
}

/** Gauss–Seidel specialised (ω = 1) so that the multigrid smoother does no extra arithmetic. */
function smoothFineLaplace(L: FineLevel, sweeps: number): void {
  const { nr, nz, fixed, u, aW, aE, invC, aZ } = L;
  const last = nr - 1;
  for (let s = 0; s < sweeps; s++) {
    for (let color = 0; color < 2; color++) {
      for (let j = 1; j < nz - 1; j++) {
        const row = j * nr;
        for (let i = (j + color) & 1; i < last; i += 2) {
          const k = row + i;
          if (fixed[k] === 1) continue;
          u[k] = (aW[i] * u[k - 1] + aE[i] * u[k + 1] + aZ * (u[k - nr] + u[k + nr])) * invC[i];
        }
      }
    }
  }
}

/** res = −L u at free nodes, 0 at fixed nodes (fixed nodes are never written). Returns ‖res‖₂. */
function fineResidual(L: FineLevel): number {
  const { nr, nz, fixed, u, res, aW, aE, aC, aZ } = L;
  let sum = 0;
  for (let j = 1; j < nz - 1; j++) {
    const row = j * nr;
    for (let i = 0; i < nr - 1; i++) {
      const k = row + i;
      if (fixed[k] === 1) continue;
      const r = aC[i] * u[k] - (aW[i] * u[k - 1] + aE[i] * u[k + 1] + aZ * (u[k - nr] + u[k + nr]));
      res[k] = r;
      sum += r * r;
    }
  }
  return Math.sqrt(sum);
}

/** ‖L u‖₂ over free nodes, without storing the residual. */
function fineResidualNorm(L: FineLevel): number {
  const { nr, nz, fixed, u, aW, aE, aC, aZ } = L;
  let sum = 0;
  for (let j = 1; j < nz - 1; j++) {
    const row = j * nr;
    for (let i = 0; i < nr - 1; i++) {
      const k = row + i;
      if (fixed[k] === 1) continue;
      const r = aW[i] * u[k - 1] + aE[i] * u[k + 1] + aZ * (u[k - nr] + u[k + nr]) - aC[i] * u[k];
      sum += r * r;
    }
  }
  return Math.sqrt(sum);
}

/** ‖b‖₂: the residual with every free node set to zero (the Dirichlet data moved to the right-hand side). */
function fineRhsNorm(L: FineLevel): number {
  const { nr, nz, fixed, u, aW, aE, aZ } = L;
  let sum = 0;
  for (let j = 1; j < nz - 1; j++) {
    const row = j * nr;
    for (let i = 0; i < nr - 1; i++) {
      const k = row + i;
      if (fixed[k] === 1) continue;
      let b = 0;
      if (i > 0 && fixed[k - 1] === 1) b -= aW[i] * u[k - 1];
      if (fixed[k + 1] === 1) b -= aE[i] * u[k + 1];
      if (fixed[k - nr] === 1) b -= aZ * u[k - nr];
      if (fixed[k + nr] === 1) b -= aZ * u[k + nr];
      sum += b * b;
    }
  }
  return Math.sqrt(sum);
}

function zeroFreeNodes(u: Float64Array, fixed: Uint8Array): void {
  for (let k = 0; k < u.length; k++) if (fixed[k] === 0) u[k] = 0;
}

/**
 * Red-black Gauss–Seidel (ω = 1) or SOR on a 9-point coarse level; any order is a valid
 * Gauss–Seidel. The axis column (no west neighbours, and k − nr − 1 may be −1 there) is done apart.
 */
function relaxCoarse(C: CoarseLevel, sweeps: number, omega: number): void {
  const { nr, nz, fixed, u, f, A, invDiag } = C;
  const last = nr - 1;
  for (let s = 0; s < sweeps; s++) {
    for (let color = 0; color < 2; color++) {
      for (let j = 1; j < nz - 1; j++) {
        const row = j * nr;
        let i = (j + color) & 1;
        if (i === 0) {
          const k = row;
          if (fixed[k] === 0) {
            const a = 9 * k;
            const off = A[a + 1] * u[k - nr] + A[a + 2] * u[k - nr + 1] + A[a + 5] * u[k + 1] + A[a + 7] * u[k + nr] + A[a + 8] * u[k + nr + 1];
            u[k] += omega * ((f[k] - off) * invDiag[k] - u[k]);
          }
          i = 2;
        }
        for (; i < last; i += 2) {
          const k = row + i;
          if (fixed[k] === 1) continue;
          const a = 9 * k;
          const kS = k - nr;
          const kN = k + nr;
          const off =
            A[a] * u[kS - 1] + A[a + 1] * u[kS] + A[a + 2] * u[kS + 1] +
            A[a + 3] * u[k - 1] + A[a + 5] * u[k + 1] +
            A[a + 6] * u[kN - 1] + A[a + 7] * u[kN] + A[a + 8] * u[kN + 1];
          u[k] += omega * ((f[k] - off) * invDiag[k] - u[k]);
        }
      }
    }
  }
}

/** res = f − A u at free nodes of a coarse level (fixed entries are never written, so stay 0); returns ‖res‖₂. */
function coarseResidual(C: CoarseLevel): number {
  const { nr, nz, fixed, u, f, res, A } = C;
  let sum = 0;
  for (let j = 1; j < nz - 1; j++) {
    const row = j * nr;
    for (let i = 0; i < nr - 1; i++) {
      const k = row + i;
      if (fixed[k] === 1) continue;
      const a = 9 * k;
      const kS = k - nr;
      const kN = k + nr;
      const west = i > 0 ? A[a] * u[kS - 1] + A[a + 3] * u[k - 1] + A[a + 6] * u[kN - 1] : 0;
      const Au = west + A[a + 1] * u[kS] + A[a + 2] * u[kS + 1] + A[a + 4] * u[k] + A[a + 5] * u[k + 1] + A[a + 7] * u[kN] + A[a + 8] * u[kN + 1];
      const r = f[k] - Au;
      res[k] = r;
      sum += r * r;
    }
  }
  return Math.sqrt(sum);
}

/**
 * Restriction by the transpose of bilinear prolongation (4 × full weighting), optionally weighting
 * each fine value by its radial volume first. Fine nodes at r < 0 do not exist: on the axis the
 * stencil is one-sided, which is what makes it the exact transpose there.
 */
function restrictTranspose(res: Float64Array, nrf: number, weight: Float64Array | null, C: CoarseLevel): void {
  const { nr, nz, fixed, f } = C;
  for (let J = 1; J < nz - 1; J++) {
    for (let I = 0; I < nr - 1; I++) {
      const K = J * nr + I;
      if (fixed[K] === 1) continue;
      const i = 2 * I;
      let sum = 0;
      for (let dj = -1; dj <= 1; dj++) {
        const row = (2 * J + dj) * nrf;
        const wj = dj === 0 ? 1 : 0.5;
        let s = res[row + i] * (weight ? weight[i] : 1) + 0.5 * res[row + i + 1] * (weight ? weight[i + 1] : 1);
        if (I > 0) s += 0.5 * res[row + i - 1] * (weight ? weight[i - 1] : 1);
        sum += wj * s;
      }
      f[K] = sum;
    }
  }
}

/** Bilinear interpolation of the coarse correction, added at free fine nodes. Dropped coarse nodes hold 0. */
function prolongAdd(c: Float64Array, ncr: number, u: Float64Array, nr: number, nz: number, fixed: Uint8Array): void {
  for (let j = 1; j < nz - 1; j++) {
    const J = j >> 1;
    const rowA = J * ncr;
    const rowB = j & 1 ? rowA + ncr : rowA;
    const row = j * nr;
    for (let i = 0; i < nr - 1; i++) {
      const k = row + i;
      if (fixed[k] === 1) continue;
      const I = i >> 1;
      if (i & 1) u[k] += 0.25 * (c[rowA + I] + c[rowA + I + 1] + c[rowB + I] + c[rowB + I + 1]);
      else u[k] += 0.5 * (c[rowA + I] + c[rowB + I]);
    }
  }
}

/**
 * Galerkin coarse operator P^T A P for bilinear P that is zero on fixed fine nodes. The coarse
 * boundary (outer radius, both z ends) stays fixed; any other coarse node is kept unless every
 * fine node it interpolates to is fixed (its row would be empty).
 */
function galerkin(Af: Float64Array, nr: number, nz: number, fixedF: Uint8Array): CoarseLevel {
  const ncr = (nr - 1) / 2 + 1;
  const ncz = (nz - 1) / 2 + 1;
  const nc = ncr * ncz;
  const A = new Float64Array(9 * nc);
  const onCoarseEdge = (I: number, J: number) => I >= ncr - 1 || J <= 0 || J >= ncz - 1;
  const interior = new Uint8Array(nc);
  for (let J = 1; J < ncz - 1; J++) for (let I = 0; I < ncr - 1; I++) interior[J * ncr + I] = 1;
  // Coarse parents of a fine index x: x/2 (weight 1) when even, (x±1)/2 (weight ½ each) when odd.
  for (let j = 1; j < nz - 1; j++) {
    const J0 = j >> 1;
    const nJ = 1 + (j & 1);
    const wj = j & 1 ? 0.5 : 1;
    for (let i = 0; i < nr - 1; i++) {
      const k = j * nr + i;
      if (fixedF[k] === 1) continue;
      const I0 = i >> 1;
      const nI = 1 + (i & 1);
      const wij = (i & 1 ? 0.5 : 1) * wj;
      for (let d = 0; d < 9; d++) {
        const a = Af[9 * k + d];
        if (a === 0) continue;
        const dj = d < 3 ? -1 : d < 6 ? 0 : 1;
        const di = d - 3 * (dj + 1) - 1;
        const i2 = i + di;
        const j2 = j + dj;
        if (fixedF[j2 * nr + i2] === 1) continue;
        const I20 = i2 >> 1;
        const J20 = j2 >> 1;
        const nI2 = 1 + (i2 & 1);
        const nJ2 = 1 + (j2 & 1);
        const w2 = (i2 & 1 ? 0.5 : 1) * (j2 & 1 ? 0.5 : 1) * wij * a;
        for (let J = J0; J < J0 + nJ; J++) {
          for (let I = I0; I < I0 + nI; I++) {
            const K = J * ncr + I;
            if (interior[K] === 0) continue;
            for (let J2 = J20; J2 < J20 + nJ2; J2++) {
              for (let I2 = I20; I2 < I20 + nI2; I2++) {
                if (interior[J2 * ncr + I2] === 0) continue;
                A[9 * K + 3 * (J2 - J + 1) + (I2 - I + 1)] += w2;
              }
            }
          }
        }
      }
    }
  }
  const fixed = new Uint8Array(nc);
  const invDiag = new Float64Array(nc);
  for (let J = 0; J < ncz; J++) {
    for (let I = 0; I < ncr; I++) {
      const K = J * ncr + I;
      fixed[K] = onCoarseEdge(I, J) || A[9 * K + 4] === 0 ? 1 : 0;
      if (fixed[K] === 0) invDiag[K] = 1 / A[9 * K + 4];
    }
  }
  return { nr: ncr, nz: ncz, fixed, u: new Float64Array(nc), f: new Float64Array(nc), res: new Float64Array(nc), A, invDiag };
}

/** Banded LU (no pivoting: the free block is symmetric definite) of a 9-point operator on one grid. */
class BandedDirect {
  private readonly n: number;
  private readonly p: number;
  private readonly width: number;
  private readonly band: Float64Array;
  private readonly x: Float64Array;

  static affordable(nr: number, nz: number): boolean {
    const n = nr * nz;
    const p = nr + 1;
    return n * p * p <= DIRECT_MAX_WORK && n * (2 * p + 1) <= DIRECT_MAX_STORAGE;
  }

  /** `A` is the 9-point operator; fixed nodes become identity rows. */
  constructor(
    nr: number,
    nz: number,
    private readonly fixed: Uint8Array,
    A: Float64Array,
  ) {
    this.n = nr * nz;
    this.p = nr + 1;
    this.width = 2 * this.p + 1;
    this.band = new Float64Array(this.n * this.width);
    this.x = new Float64Array(this.n);
    const { p, width: w, band } = this;
    for (let k = 0; k < this.n; k++) {
      if (fixed[k] === 1) {
        band[k * w + p] = 1;
        continue;
      }
      for (let d = 0; d < 9; d++) {
        const offset = (Math.floor(d / 3) - 1) * nr + (d % 3) - 1;
        if (A[9 * k + d] !== 0) band[k * w + p + offset] = A[9 * k + d];
      }
    }
    for (let k = 0; k < this.n; k++) {
      const pivot = band[k * w + p];
      const end = Math.min(this.n - 1, k + p);
      for (let m = k + 1; m <= end; m++) {
        const mk = m * w + (k - m + p);
        if (band[mk] === 0) continue;
        const l = band[mk] / pivot;
        band[mk] = l;
        for (let c = k + 1; c <= end; c++) band[m * w + (c - m + p)] -= l * band[k * w + (c - k + p)];
      }
    }
  }

  /** Solves A u = rhs (null: zero) at free nodes; fixed nodes keep their values. */
  solve(u: Float64Array, rhs: Float64Array | null): void {
    const { n, p, width: w, band, x, fixed } = this;
    for (let k = 0; k < n; k++) x[k] = fixed[k] === 1 ? u[k] : rhs ? rhs[k] : 0;
    for (let k = 0; k < n; k++) {
      const xk = x[k];
      if (xk === 0) continue;
      const end = Math.min(n - 1, k + p);
      for (let m = k + 1; m <= end; m++) x[m] -= band[m * w + (k - m + p)] * xk;
    }
    for (let k = n - 1; k >= 0; k--) {
      let s = x[k];
      const end = Math.min(n - 1, k + p);
      for (let c = k + 1; c <= end; c++) s -= band[k * w + (c - k + p)] * x[c];
      x[k] = s / band[k * w + p];
    }
    for (let k = 0; k < n; k++) if (fixed[k] === 0) u[k] = x[k];
  }
}

/**
 * Optimal SOR factor 2 / (1 + √(1 − ρ_J²)) with ρ_J from the lowest mode of the empty grounded can
 * (J0-like in r, sine in z). Electrodes only lower the true ρ_J, so this errs towards a slightly
 * large ω, the safe side for SOR.
 */
export function estimateSorOmega(grid: Pick<DirichletGrid, 'nr' | 'nz' | 'hr_m' | 'hz_m'>): number {
  const { nr, nz, hr_m: hr, hz_m: hz } = grid;
  const radius = (nr - 1) * hr;
  const length = (nz - 1) * hz;
  const lambdaR = (2 / (hr * hr)) * (1 - Math.cos((J0_FIRST_ZERO * hr) / radius));
  const lambdaZ = (2 / (hz * hz)) * (1 - Math.cos((Math.PI * hz) / length));
  const rhoJ = 1 - (lambdaR + lambdaZ) / (2 / (hr * hr) + 2 / (hz * hz));
  return 2 / (1 + Math.sqrt(Math.max(0, 1 - rhoJ * rhoJ)));
}

/** Number of eigenvalues of the symmetric tridiagonal (α, β) below x (Sturm count via LDLᵀ pivots). */
function countBelow(alpha: Float64Array, beta: Float64Array, m: number, x: number): number {
  let count = 0;
  let d = 1;
  for (let k = 0; k < m; k++) {
    d = alpha[k] - x - (k > 0 ? (beta[k] * beta[k]) / d : 0);
    if (d === 0) d = 1e-300;
    if (d < 0) count++;
  }
  return count;
}

/** Smallest eigenvalue of the tridiagonal by bisection on [0, 2] (the spectrum of D⁻¹A lies there). */
function smallestEigenvalue(alpha: Float64Array, beta: Float64Array, m: number): number {
  let lo = 0;
  let hi = 2;
  for (let it = 0; it < 100 && hi - lo > 1e-15 * hi; it++) {
    const mid = 0.5 * (lo + hi);
    if (countBelow(alpha, beta, m, mid) >= 1) hi = mid;
    else lo = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * Spectral radius ρ_J of the Jacobi iteration on the actual mesh (electrodes included), from the
 * smallest eigenvalue μ of D⁻¹(−L), ρ_J = 1 − μ (the spectrum is symmetric about 1 for this
 * red-black-coupled operator). μ comes from Lanczos on the symmetric form D^{-½}(−W L)D^{-½},
 * started from the all-ones vector (close to the positive lowest mode); the smallest Ritz value
 * converges from above, so ρ_J is approached from below. Costs about two sweeps per step.
 */
export function jacobiSpectralRadius(grid: DirichletGrid, options: { maxSteps?: number; relativeChange?: number } = {}): { rho: number; steps: number } {
  checkGrid(grid);
  const L = makeFineLevel(grid);
  const { nr, nz, fixed, aW, aE, aC, aZ, weight } = L;
  const n = nr * nz;
  const maxSteps = options.maxSteps ?? 3000;
  const relativeChange = options.relativeChange ?? 1e-4;
  // Scale s_i = 1/√(w_i aC_i) and t_i = √(w_i/aC_i): M x = −t ⊙ L(s ⊙ x).
  const s = new Float64Array(nr);
  const t = new Float64Array(nr);
  for (let i = 0; i < nr; i++) {
    s[i] = 1 / Math.sqrt(weight[i] * aC[i]);
    t[i] = Math.sqrt(weight[i] / aC[i]);
  }
  let vPrev = new Float64Array(n);
  let v = new Float64Array(n);
  let w = new Float64Array(n);
  const y = new Float64Array(n);
  const alpha = new Float64Array(maxSteps);
  const beta = new Float64Array(maxSteps + 1);
  let norm = 0;
  for (let k = 0; k < n; k++) if (fixed[k] === 0) norm++;
  if (norm === 0) return { rho: 0, steps: 0 };
  for (let k = 0; k < n; k++) v[k] = fixed[k] === 0 ? 1 / Math.sqrt(norm) : 0;
  let previous = Infinity;
  let m = 0;
  for (; m < maxSteps; m++) {
    for (let j = 0, k = 0; j < nz; j++) for (let i = 0; i < nr; i++, k++) y[k] = v[k] * s[i];
    let a = 0;
    for (let j = 1; j < nz - 1; j++) {
      const row = j * nr;
      for (let i = 0; i < nr - 1; i++) {
        const k = row + i;
        if (fixed[k] === 1) {
          w[k] = 0;
          continue;
        }
        const Ly = aW[i] * y[k - 1] + aE[i] * y[k + 1] + aZ * (y[k - nr] + y[k + nr]) - aC[i] * y[k];
        w[k] = -t[i] * Ly - beta[m] * vPrev[k];
        a += w[k] * v[k];
      }
    }
    alpha[m] = a;
    let b2 = 0;
    for (let k = 0; k < n; k++) {
      if (fixed[k] === 1) continue;
      w[k] -= a * v[k];
      b2 += w[k] * w[k];
    }
    const b = Math.sqrt(b2);
    beta[m + 1] = b;
    if ((m + 1) % 25 === 0 || b === 0) {
      const mu = smallestEigenvalue(alpha, beta, m + 1);
      if (Math.abs(previous - mu) <= relativeChange * mu || b === 0) {
        m++;
        break;
      }
      previous = mu;
    }
    for (let k = 0; k < n; k++) w[k] /= b;
    const old = vPrev;
    vPrev = v;
    v = w;
    w = old;
  }
  return { rho: 1 - smallestEigenvalue(alpha, beta, Math.min(m, maxSteps)), steps: m };
}

/** Optimal SOR factor for the actual mesh, from jacobiSpectralRadius (Young: ω = 2/(1 + √(1 − ρ_J²))). */
export function spectralSorOmega(grid: DirichletGrid): number {
  const { rho } = jacobiSpectralRadius(grid);
  return 2 / (1 + Math.sqrt(Math.max(0, 1 - rho * rho)));
}

/** Sweeps between residual checks in SOR: a check costs about one sweep. */
const SOR_CHECK_EVERY = 10;

/** SOR on the fine level until the relative residual (w.r.t. `reference`) reaches `tolerance`. */
function runFineSor(L: FineLevel, omega: number, reference: number, tolerance: number, maxSweeps: number): { sweeps: number; relative: number } {
  let sweeps = 0;
  let relative = fineResidualNorm(L) / reference;
  while (relative > tolerance && sweeps < maxSweeps) {
    const batch = Math.min(SOR_CHECK_EVERY, maxSweeps - sweeps);
    relaxFine(L, batch, omega);
    sweeps += batch;
    relative = fineResidualNorm(L) / reference;
  }
  return { sweeps, relative };
}

function attach(L: FineLevel, phi: Float64Array): void {
  if (phi.length !== L.nr * L.nz) throw new Error(`solution array has ${phi.length} entries, expected ${L.nr * L.nz}`);
  L.u = phi;
}

/** Plain red-black SOR on the same discretisation: the benchmark baseline. */
export class SorSolver {
  readonly omega: number;
  private readonly level: FineLevel;

  constructor(grid: DirichletGrid, omega?: number) {
    checkGrid(grid);
    this.omega = omega ?? estimateSorOmega(grid);
    this.level = makeFineLevel(grid);
  }

  /**
   * Solve in place: `phi` holds the Dirichlet values at fixed nodes and the initial guess elsewhere.
   * The residual is checked every few sweeps, so up to that many extra sweeps may be done.
   */
  solve(phi: Float64Array, options: SolveOptions = {}): SolveReport {
    const L = this.level;
    attach(L, phi);
    const tolerance = options.relativeTolerance ?? DEFAULT_RELATIVE_TOLERANCE;
    const maxSweeps = options.maxIterations ?? 50 * Math.max(L.nr, L.nz);
    const reference = fineRhsNorm(L);
    if (reference === 0) {
      zeroFreeNodes(L.u, L.fixed);
      return { method: 'sor', converged: true, iterations: 0, relativeResidual: 0, note: 'all prescribed values are zero' };
    }
    const { sweeps, relative } = runFineSor(L, this.omega, reference, tolerance, maxSweeps);
    const converged = relative <= tolerance;
    return {
      method: 'sor',
      converged,
      iterations: sweeps,
      relativeResidual: relative,
      note: converged ? '' : `stopped after ${sweeps} sweeps at relative residual ${relative.toExponential(2)}`,
    };
  }
}

export interface MultigridOptions {
  /** Gauss–Seidel sweeps before and after each coarse-grid correction on the fine grid (default 2 and 2). */
  readonly preSmooth?: number;
  readonly postSmooth?: number;
  /** The same on every coarse grid (default 2 and 2; 1 and 1 was measured to need ~45 % more cycles). */
  readonly coarsePreSmooth?: number;
  readonly coarsePostSmooth?: number;
  /** Start with a full-multigrid (nested iteration) pass (default true; measured 5 instead of 9 V-cycles to 1e-9). */
  readonly nestedStart?: boolean;
}

/**
 * Geometric multigrid V-cycles. The grid is halved while both (nr − 1) and (nz − 1) are even and
 * the coarse grid keeps at least 3 nodes a side, so 2^k + 1 node counts coarsen all the way.
 * Other counts coarsen as far as they can; the coarsest grid is solved by banded LU when that is
 * affordable, else relaxed by SOR inside each cycle, and when no halving is possible at all the
 * whole solve is SOR. Either fallback is stated in the report's note.
 * Aspect ratios hr/hz beyond ½…2 weaken the point smoother: still convergent, more cycles.
 */
export class MultigridSolver {
  readonly levelCount: number;
  readonly coarsestSize: string;
  private readonly fine: FineLevel;
  private readonly coarse: CoarseLevel[];
  private readonly direct: BandedDirect | null;
  private readonly fallbackNote: string;
  private readonly sorOmega: number;
  private readonly coarseOmega: number;
  private readonly preSmooth: number;
  private readonly postSmooth: number;
  private readonly coarsePreSmooth: number;
  private readonly coarsePostSmooth: number;
  private readonly nested: boolean;

  constructor(grid: DirichletGrid, options: MultigridOptions = {}) {
    checkGrid(grid);
    this.preSmooth = options.preSmooth ?? 2;
    this.postSmooth = options.postSmooth ?? 2;
    this.coarsePreSmooth = options.coarsePreSmooth ?? 2;
    this.coarsePostSmooth = options.coarsePostSmooth ?? 2;
    this.nested = options.nestedStart ?? true;
    this.fine = makeFineLevel(grid);
    this.sorOmega = estimateSorOmega(grid);
    const coarse: CoarseLevel[] = [];
    let nr = grid.nr;
    let nz = grid.nz;
    let A: Float64Array | null = null;
    let fixed = grid.fixed;
    const canHalve = (a: number, b: number) => (a - 1) % 2 === 0 && (b - 1) % 2 === 0 && (a - 1) / 2 + 1 >= 3 && (b - 1) / 2 + 1 >= 3;
    while (nr * nz > COARSEST_TARGET_NODES && canHalve(nr, nz)) {
      const next: CoarseLevel = galerkin(A ?? fineAsNinePoint(this.fine), nr, nz, fixed);
      coarse.push(next);
      ({ nr, nz, A, fixed } = next);
    }
    this.coarse = coarse;
    this.levelCount = coarse.length + 1;
    this.coarsestSize = `${nr}x${nz}`;
    this.coarseOmega = estimateSorOmega({ nr, nz, hr_m: grid.hr_m * 2 ** coarse.length, hz_m: grid.hz_m * 2 ** coarse.length });
    if (BandedDirect.affordable(nr, nz)) {
      this.direct = new BandedDirect(nr, nz, fixed, A ?? fineAsNinePoint(this.fine));
      this.fallbackNote = '';
    } else {
      this.direct = null;
      this.fallbackNote =
        coarse.length === 0
          ? `node counts ${nr}×${nz} cannot be halved and are too many for a direct solve (use 2^k + 1 nodes per axis for multigrid): solved by SOR`
          : `coarsest grid ${nr}×${nz} is too large for a direct solve, so it is relaxed by SOR in each cycle (use 2^k + 1 nodes per axis for full multigrid speed)`;
    }
  }

  /** Solve in place: `phi` holds the Dirichlet values at fixed nodes and the initial guess elsewhere. */
  solve(phi: Float64Array, options: SolveOptions = {}): SolveReport {
    const top = this.fine;
    attach(top, phi);
    const tolerance = options.relativeTolerance ?? DEFAULT_RELATIVE_TOLERANCE;
    const reference = fineRhsNorm(top);
    if (reference === 0) {
      zeroFreeNodes(top.u, top.fixed);
      return { method: 'multigrid', converged: true, iterations: 0, relativeResidual: 0, note: 'all prescribed values are zero' };
    }

    if (this.direct === null && this.coarse.length === 0) {
      const maxSweeps = options.maxIterations ?? 50 * Math.max(top.nr, top.nz);
      const { sweeps, relative } = runFineSor(top, this.sorOmega, reference, tolerance, maxSweeps);
      return { method: 'sor', converged: relative <= tolerance, iterations: sweeps, relativeResidual: relative, note: this.fallbackNote };
    }
    if (this.coarse.length === 0 && this.direct !== null) {
      this.direct.solve(top.u, null);
      const relative = fineResidualNorm(top) / reference;
      return { method: 'direct', converged: relative <= tolerance, iterations: 1, relativeResidual: relative, note: 'grid small or not coarsenable: banded direct solve' };
    }

    // Each cycle computes the fine residual after pre-smoothing for the restriction anyway; the
    // convergence test uses it, so the test costs no extra pass. The iterate then returned is the
    // pre-smoothed one, whose residual is exactly the one reported.
    const maxCycles = options.maxIterations ?? 100;
    let relative = fineResidual(top) / reference;
    if (relative > tolerance && this.nested) {
      this.nestedStart();
      relative = Infinity; // measured after the first pre-smoothing below
    }
    let cycles = 0;
    let best = relative;
    let stalled = 0;
    while (relative > tolerance) {
      if (cycles === maxCycles) {
        relative = fineResidualNorm(top) / reference;
        break;
      }
      smoothFineLaplace(top, this.preSmooth);
      relative = fineResidual(top) / reference;
      if (relative <= tolerance) break;
      // Round-off floor: stop when several cycles in a row bring no real progress.
      if (relative < 0.9 * best) {
        best = relative;
        stalled = 0;
      } else if (++stalled >= 3) break;
      this.correctAndPostSmooth();
      cycles++;
    }
    const converged = relative <= tolerance;
    const stopped = converged ? '' : `stopped after ${cycles} V-cycles at relative residual ${relative.toExponential(2)}`;
    return {
      method: 'multigrid',
      converged,
      iterations: cycles,
      relativeResidual: relative,
      note: [this.fallbackNote, stopped].filter((x) => x).join('; '),
    };
  }

  /** Inexact coarsest solve when LU is too costly: SOR until the residual falls 100-fold (an inexact coarse solve keeps V-cycles convergent). */
  private relaxCoarsest(C: CoarseLevel): void {
    const initial = coarseResidual(C);
    const maxSweeps = 4 * Math.max(C.nr, C.nz);
    for (let sweeps = 0; sweeps < maxSweeps; sweeps += SOR_CHECK_EVERY) {
      relaxCoarse(C, SOR_CHECK_EVERY, this.coarseOmega);
      if (coarseResidual(C) <= 1e-2 * initial) break;
    }
  }

  /** The rest of a V-cycle, once the fine level is pre-smoothed and its residual is in `res`. */
  private correctAndPostSmooth(): void {
    const top = this.fine;
    const first = this.coarse[0];
    restrictTranspose(top.res, top.nr, top.weight, first);
    first.u.fill(0);
    this.coarseCycle(0);
    prolongAdd(first.u, first.nr, top.u, top.nr, top.nz, top.fixed);
    smoothFineLaplace(top, this.postSmooth);
  }

  /** One V-cycle on coarse level c: its `u` is the iterate and `f` the right-hand side. */
  private coarseCycle(c: number): void {
    const coarse = this.coarse;
    const last = coarse.length - 1;
    for (let l = c; l < last; l++) {
      const C = coarse[l];
      relaxCoarse(C, this.coarsePreSmooth, 1);
      coarseResidual(C);
      restrictTranspose(C.res, C.nr, null, coarse[l + 1]);
      coarse[l + 1].u.fill(0);
    }
    const bottom = coarse[last];
    if (this.direct) this.direct.solve(bottom.u, bottom.f);
    else this.relaxCoarsest(bottom);
    for (let l = last - 1; l >= c; l--) {
      const C = coarse[l];
      prolongAdd(coarse[l + 1].u, coarse[l + 1].nr, C.u, C.nr, C.nz, C.fixed);
      relaxCoarse(C, this.coarsePostSmooth, 1);
    }
  }

  /**
   * Full-multigrid start (nested iteration): the fine residual of the initial guess is restricted
   * down every level, solved on the coarsest, and brought back up with one V-cycle per level, so
   * the fine grid starts with its smooth error already removed. Needs `res` of the fine level.
   */
  private nestedStart(): void {
    const top = this.fine;
    const coarse = this.coarse;
    const last = coarse.length - 1;
    restrictTranspose(top.res, top.nr, top.weight, coarse[0]);
    for (let l = 0; l < last; l++) restrictTranspose(coarse[l].f, coarse[l].nr, null, coarse[l + 1]);
    const bottom = coarse[last];
    bottom.u.fill(0);
    if (this.direct) this.direct.solve(bottom.u, bottom.f);
    else this.relaxCoarsest(bottom);
    for (let l = last - 1; l >= 0; l--) {
      const C = coarse[l];
      C.u.fill(0);
      prolongAdd(coarse[l + 1].u, coarse[l + 1].nr, C.u, C.nr, C.nz, C.fixed);
      this.coarseCycle(l);
    }
    prolongAdd(coarse[0].u, coarse[0].nr, top.u, top.nr, top.nz, top.fixed);
  }
}

/** Relative residual of `phi` on `grid` (definition in the module comment); 0 when b = 0. */
export function relativeResidual(grid: DirichletGrid, phi: Float64Array): number {
  checkGrid(grid);
  const L = makeFineLevel(grid);
  L.u = phi;
  const reference = fineRhsNorm(L);
  return reference === 0 ? 0 : fineResidualNorm(L) / reference;
}
