import { describe, expect, it } from 'vitest';
import {
  DOP853,
  DOPRI5,
  createWorkspace,
  errorNorm,
  rungeKuttaStep,
  type RhsFunction,
  type RungeKuttaTableau,
} from '../../../src/physics/integrator/index';
import { evaluateDenseOutput, prepareDenseOutput } from '../../../src/physics/integrator/denseOutput';

const TABLEAUS = [DOPRI5, DOP853] as const;

// ---------------------------------------------------------------------------------------------
// Butcher's order conditions, generated over all rooted trees up to order 8 (Butcher, Numerical
// Methods for ODEs, 3rd ed., Sec. 3; Hairer, Nørsett & Wanner, Solving ODEs I, Sec. II.2):
// a weight vector w has order p iff w·Φ(t) = 1/γ(t) for every tree t with |t| ≤ p, where
// Φ(leaf) = 1 and Φ([t1 … tm]) = Π_k A·Φ(t_k) (componentwise), γ([t1 … tm]) = |t|·Π γ(t_k).
// ---------------------------------------------------------------------------------------------
interface Tree {
  order: number;
  gamma: number;
  children: number[];
}

function rootedTrees(maxOrder: number): Tree[] {
  const trees: Tree[] = [{ order: 1, gamma: 1, children: [] }];
  for (let order = 2; order <= maxOrder; order++) {
    const known = trees.length;
    // Children: non-decreasing sequences of tree ids whose orders sum to order − 1.
    const build = (remaining: number, minId: number, chosen: number[]): void => {
      if (remaining === 0) {
        const gamma = chosen.reduce((g, id) => g * trees[id].gamma, order);
        trees.push({ order, gamma, children: chosen.slice() });
        return;
      }
      for (let id = minId; id < known; id++) {
        if (trees[id].order > remaining) continue;
        chosen.push(id);
        build(remaining - trees[id].order, id, chosen);
        chosen.pop();
      }
    };
    build(order - 1, 0, []);
  }
  return trees;
}

const TREES = rootedTrees(8);

/** Φ(t) over all stages of the tableau (extra dense stages included). */
function elementaryWeights(tab: RungeKuttaTableau): Float64Array[] {
  const S = tab.totalStages;
  const phi: Float64Array[] = [];
  for (const tree of TREES) {
    const v = new Float64Array(S).fill(1);
    for (const child of tree.children) {
      const u = phi[child];
      for (let i = 0; i < S; i++) {
        let acc = 0;
        for (let j = 0; j < S; j++) acc += tab.a[i * S + j] * u[j];
        v[i] *= acc;
      }
    }
    phi.push(v);
  }
  return phi;
}

/** Largest |w·Φ(t) − θ^|t|/γ(t)| over the trees of exactly the given order. */
function orderResidual(w: ArrayLike<number>, phi: Float64Array[], order: number, theta = 1): number {
  let worst = 0;
  TREES.forEach((tree, id) => {
    if (tree.order !== order) return;
    let acc = 0;
    for (let j = 0; j < w.length; j++) acc += w[j] * phi[id][j];
    worst = Math.max(worst, Math.abs(acc - theta ** tree.order / tree.gamma));
  });
  return worst;
}

function padded(v: ArrayLike<number>, length: number): Float64Array {
  const out = new Float64Array(length);
  for (let i = 0; i < v.length; i++) out[i] = v[i];
  return out;
}

/** Dense-output weights b(θ) over all stages, from the F-form documented in tableaus.ts. */
function denseWeights(tab: RungeKuttaTableau, x: number): Float64Array {
  const S = tab.totalStages;
  const s = tab.stages;
  const b = padded(tab.b, S);
  const rows: Float64Array[] = [];
  rows.push(b); // F0 = Δ
  const f1 = new Float64Array(S);
  f1[0] = 1;
  for (let j = 0; j < S; j++) f1[j] -= b[j];
  rows.push(f1); // F1 = h f_old − Δ
  const f2 = new Float64Array(S);
  for (let j = 0; j < S; j++) f2[j] = 2 * b[j];
  f2[0] -= 1;
  f2[s] -= 1;
  rows.push(f2); // F2 = 2Δ − h(f_old + f_new)
  for (let r = 0; r < tab.denseRows; r++) rows.push(tab.d.slice(r * S, (r + 1) * S));
  const w = new Float64Array(S);
  let multiplier = 1;
  rows.forEach((row, r) => {
    multiplier *= r % 2 === 0 ? x : 1 - x;
    for (let j = 0; j < S; j++) w[j] += multiplier * row[j];
  });
  return w;
}

describe('rooted trees', () => {
  it('counts the trees of each order as in the literature (1, 1, 2, 4, 9, 20, 48, 115)', () => {
    // OEIS A000081 (number of rooted trees with n nodes).
    const counts = [1, 2, 3, 4, 5, 6, 7, 8].map((p) => TREES.filter((t) => t.order === p).length);
    expect(counts).toEqual([1, 1, 2, 4, 9, 20, 48, 115]);
  });
});

describe.each(TABLEAUS)('$name coefficient tables', (tab) => {
  const S = tab.totalStages;
  const s = tab.stages;
  const phi = elementaryWeights(tab);

  it('has consistent shapes', () => {
    expect(tab.a.length).toBe(S * S);
    expect(tab.c.length).toBe(S);
    expect(tab.b.length).toBe(s);
    expect(tab.e.length).toBe(s + 1);
    expect(tab.d.length).toBe(tab.denseRows * S);
    expect(S).toBe(s + 1 + tab.extraStages);
  });

  it('is explicit: a is strictly lower triangular', () => {
    for (let i = 0; i < S; i++) for (let j = i; j < S; j++) expect(tab.a[i * S + j]).toBe(0);
  });

  it('row sums of a equal c (every stage, the extra dense stages included)', () => {
    for (let i = 0; i < S; i++) {
      let sum = 0;
      for (let j = 0; j < S; j++) sum += tab.a[i * S + j];
      expect(Math.abs(sum - tab.c[i]), `row ${i}`).toBeLessThan(1e-14);
    }
  });

  it('Σb = 1 and Σb̂ = Σ(b − e) = 1', () => {
    const sumB = tab.b.reduce((x, y) => x + y, 0);
    expect(Math.abs(sumB - 1)).toBeLessThan(1e-14);
    const sumE = tab.e.reduce((x, y) => x + y, 0);
    expect(Math.abs(sumB - sumE - 1)).toBeLessThan(1e-14);
    if (tab.e3.length > 0) {
      const sumE3 = tab.e3.reduce((x, y) => x + y, 0);
      expect(Math.abs(sumB - sumE3 - 1)).toBeLessThan(1e-14);
    }
  });

  it('has the FSAL property: a-row `stages` equals b and c = 1 there', () => {
    expect(tab.c[s]).toBe(1);
    for (let j = 0; j < s; j++) expect(tab.a[s * S + j]).toBe(tab.b[j]);
  });

  it('the sparse copies hold exactly the nonzero coefficients', () => {
    const expand = (rows: number, cols: number, sp: RungeKuttaTableau['aSparse']): Float64Array => {
      const m = new Float64Array(rows * cols);
      for (let r = 0; r < rows; r++) for (let p = sp.start[r]; p < sp.start[r + 1]; p++) m[r * cols + sp.col[p]] = sp.value[p];
      return m;
    };
    expect(expand(S, S, tab.aSparse)).toEqual(tab.a);
    expect(expand(1, s, tab.bSparse)).toEqual(tab.b);
    expect(expand(1, s + 1, tab.eSparse)).toEqual(tab.e);
    expect(expand(tab.denseRows, S, tab.dSparse)).toEqual(tab.d);
    if (tab.e3.length > 0) expect(expand(1, s + 1, tab.e3Sparse)).toEqual(tab.e3);
  });

  it(`b satisfies every order condition up to order ${tab.order} and fails one of order ${tab.order + 1}`, () => {
    const b = padded(tab.b, S);
    for (let p = 1; p <= tab.order; p++) expect(orderResidual(b, phi, p), `order ${p}`).toBeLessThan(1e-12);
    if (tab.order < 8) expect(orderResidual(b, phi, tab.order + 1)).toBeGreaterThan(1e-6);
  });

  it('the embedded weights b̂ = b − e have the advertised lower order', () => {
    const bHat = padded(tab.b, S);
    for (let j = 0; j <= s; j++) bHat[j] -= tab.e[j];
    // DOPRI5: b̂ of order 4; DOP853: the fifth-order estimate.
    const embeddedOrder = tab === DOPRI5 ? 4 : 5;
    for (let p = 1; p <= embeddedOrder; p++) expect(orderResidual(bHat, phi, p), `order ${p}`).toBeLessThan(1e-12);
    expect(orderResidual(bHat, phi, embeddedOrder + 1)).toBeGreaterThan(1e-6);
    if (tab.e3.length > 0) {
      const b3 = padded(tab.b, S);
      for (let j = 0; j <= s; j++) b3[j] -= tab.e3[j];
      for (let p = 1; p <= 3; p++) expect(orderResidual(b3, phi, p), `order ${p}`).toBeLessThan(1e-12);
      expect(orderResidual(b3, phi, 4)).toBeGreaterThan(1e-6);
    }
  });

  it(`the dense output satisfies the continuous order conditions up to order ${tab.denseOrder}`, () => {
    for (const x of [0.17, 0.5, 0.83]) {
      const w = denseWeights(tab, x);
      for (let p = 1; p <= tab.denseOrder; p++) {
        expect(orderResidual(w, phi, p, x), `θ = ${x}, order ${p}`).toBeLessThan(1e-11);
      }
      expect(orderResidual(w, phi, tab.denseOrder + 1, x)).toBeGreaterThan(1e-8);
    }
  });

  it('the dense output reproduces b at θ = 1', () => {
    const w = denseWeights(tab, 1);
    const b = padded(tab.b, S);
    for (let j = 0; j < S; j++) expect(Math.abs(w[j] - b[j])).toBeLessThan(1e-12);
  });
});

// ---------------------------------------------------------------------------------------------
// Observed orders by step halving on y' = y·cos t, y(0) = 1, exact y = exp(sin t).
// ---------------------------------------------------------------------------------------------
const smoothRhs: RhsFunction<null> = (t, y, dydt) => {
  dydt[0] = y[0] * Math.cos(t);
};
const exactSmooth = (t: number): number => Math.exp(Math.sin(t));

function fixedStepError(tab: RungeKuttaTableau, steps: number, tEnd: number): number {
  const ws = createWorkspace(tab, 1);
  ws.y[0] = 1;
  smoothRhs(0, ws.y, ws.kRows[0], null);
  const h = tEnd / steps;
  for (let i = 0; i < steps; i++) {
    const t = i * h;
    rungeKuttaStep(ws, smoothRhs, null, t, h, t + h);
    ws.y[0] = ws.yNew[0];
    ws.k[0] = ws.k[tab.stages]; // FSAL
  }
  return Math.abs(ws.y[0] - exactSmooth(tEnd));
}

// Kepler orbit, eccentricity 0.5, semi-major axis 1, GM = 1, pericentre at t = 0; exact solution
// through Kepler's equation E − e·sin E = t (any celestial-mechanics text, e.g. Goldstein,
// Classical Mechanics, Sec. 3.8).
const ECC = 0.5;
const kepler: RhsFunction<null> = (_t, y, dydt) => {
  const r2 = y[0] * y[0] + y[1] * y[1];
  const r3 = r2 * Math.sqrt(r2);
  dydt[0] = y[2];
  dydt[1] = y[3];
  dydt[2] = -y[0] / r3;
  dydt[3] = -y[1] / r3;
};
function keplerExact(t: number): number[] {
  let E = t;
  for (let i = 0; i < 50; i++) E -= (E - ECC * Math.sin(E) - t) / (1 - ECC * Math.cos(E));
  const c = Math.cos(E);
  const s = Math.sin(E);
  const r = 1 - ECC * c;
  const b = Math.sqrt(1 - ECC * ECC);
  return [c - ECC, b * s, -s / r, (b * c) / r];
}

/** One step of size h from t0 = 0.3: [raw error estimate, max error of the interpolant at θ = 0.4]. */
function oneStep(tab: RungeKuttaTableau, h: number): [number, number] {
  const ws = createWorkspace(tab, 4);
  const t0 = 0.3;
  ws.y.set(keplerExact(t0));
  ws.atol.fill(1); // with rtol = 0 the norm is the raw estimate
  kepler(t0, ws.y, ws.kRows[0], null);
  rungeKuttaStep(ws, kepler, null, t0, h, t0 + h);
  const estimate = errorNorm(ws, h, 0);
  const old = ws.yOld;
  ws.yOld = ws.y;
  ws.y = ws.yNew;
  ws.yNew = old;
  ws.tOld = t0;
  ws.t = t0 + h;
  ws.h = h;
  ws.denseReady = false;
  prepareDenseOutput(ws, kepler, null);
  const out = evaluateDenseOutput(ws, t0 + 0.4 * h, new Float64Array(4));
  const ref = keplerExact(t0 + 0.4 * h);
  let worst = 0;
  for (let i = 0; i < 4; i++) worst = Math.max(worst, Math.abs(out[i] - ref[i]));
  return [estimate, worst];
}

describe.each(TABLEAUS)('$name observed orders by step halving', (tab) => {
  it(`global error falls as h^${tab.order}`, () => {
    // Step counts chosen so the errors stay well above round-off.
    const counts = tab.order === 5 ? [8, 16, 32, 64] : [4, 8, 16];
    const errors = counts.map((n) => fixedStepError(tab, n, 2));
    for (let i = 1; i < errors.length; i++) {
      const observed = Math.log2(errors[i - 1] / errors[i]);
      expect(observed, `${counts[i - 1]} → ${counts[i]} steps`).toBeGreaterThan(tab.order - 0.4);
      expect(observed).toBeLessThan(tab.order + 0.6);
    }
  });

  it(`error estimate ~ h^${tab.errorOrder + 1} and interpolant error ~ h^${tab.denseOrder + 1} (Kepler orbit)`, () => {
    // Step sizes in the asymptotic range, above round-off.
    const hs = tab.order === 5 ? [0.1, 0.05, 0.025] : [0.2, 0.1, 0.05];
    const results = hs.map((h) => oneStep(tab, h));
    const slope = (which: number, i: number): number => Math.log2(results[i - 1][which] / results[i][which]);
    for (let i = 1; i < hs.length; i++) {
      expect(slope(0, i)).toBeGreaterThan(tab.errorOrder + 1 - 0.5);
      expect(slope(0, i)).toBeLessThan(tab.errorOrder + 1 + 0.5);
      expect(slope(1, i)).toBeGreaterThan(tab.denseOrder + 1 - 0.6);
      expect(slope(1, i)).toBeLessThan(tab.denseOrder + 1 + 0.6);
    }
  });
});
