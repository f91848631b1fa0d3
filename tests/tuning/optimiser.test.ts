/** The bounded minimisers on functions with known minima. */
import { describe, expect, it } from 'vitest';
import { goldenSection, haltonPoint, nelderMead } from '../../src/tuning/optimiser';

// Rosenbrock 1960 (Comput. J. 3, 175): f = 100(y − x²)² + (1 − x)², minimum 0 at (1, 1).
const rosenbrock = (p: readonly number[]): number => 100 * (p[1] - p[0] ** 2) ** 2 + (1 - p[0]) ** 2;

describe('golden-section search', () => {
  it('finds the vertex of a parabola to the bracket tolerance, in log(width/tol)/log(φ) steps', () => {
    const r = goldenSection((x) => (x - Math.SQRT2) ** 2 + 3, 0, 5, 1e-8);
    expect(Math.abs(r.x[0] - Math.SQRT2)).toBeLessThan(1e-8);
    expect(r.f).toBeCloseTo(3, 12);
    // Each step keeps 1/φ of the bracket at one evaluation (Kiefer 1953): two interior points to
    // start, then ⌈ln(width/tol)/ln φ⌉ steps.
    expect(r.evaluations).toBe(Math.ceil(Math.log(5 / 1e-8) / Math.log((1 + Math.sqrt(5)) / 2)) + 2);
  });
  it('returns the bound when the minimum lies outside the bracket', () => {
    const r = goldenSection((x) => x, 2, 3, 1e-9);
    expect(r.x[0]).toBeLessThan(2 + 1e-8);
  });
});

describe('bounded Nelder–Mead', () => {
  it('finds the Rosenbrock minimum (1, 1) from the textbook start (−1.2, 1)', () => {
    const r = nelderMead(rosenbrock, [-1.2, 1], { lower: [-2, -2], upper: [2, 2], initialStep: 0.1, xTol: 1e-9, maxEvaluations: 2000 });
    expect(Math.abs(r.x[0] - 1)).toBeLessThan(1e-4);
    expect(Math.abs(r.x[1] - 1)).toBeLessThan(1e-4);
    expect(r.f).toBeLessThan(1e-8);
    expect(r.evaluations).toBeLessThanOrEqual(2000);
  });
  it('stays inside the box and lands on its face when the minimum is outside', () => {
    const seen: number[][] = [];
    const f = (p: readonly number[]) => {
      seen.push([...p]);
      return (p[0] - 5) ** 2 + (p[1] - 0.3) ** 2;
    };
    const r = nelderMead(f, [0, 0], { lower: [-1, -1], upper: [1, 1], xTol: 1e-8, maxEvaluations: 500 });
    for (const p of seen) for (const x of p) expect(Math.abs(x)).toBeLessThanOrEqual(1);
    expect(r.x[0]).toBeCloseTo(1, 6);
    expect(r.x[1]).toBeCloseTo(0.3, 4);
  });
  it('is deterministic: the same start gives the same sequence of evaluations', () => {
    const a: number[][] = [];
    const b: number[][] = [];
    nelderMead((p) => (a.push([...p]), rosenbrock(p)), [0.5, -0.5], { lower: [-2, -2], upper: [2, 2], maxEvaluations: 150 });
    nelderMead((p) => (b.push([...p]), rosenbrock(p)), [0.5, -0.5], { lower: [-2, -2], upper: [2, 2], maxEvaluations: 150 });
    expect(a).toEqual(b);
  });
});

describe('Halton restart points', () => {
  it('are the radical inverses in bases 2 and 3 (Halton 1960, Numer. Math. 2, 84)', () => {
    expect(haltonPoint(0, 2)).toEqual([1 / 2, 1 / 3]);
    expect(haltonPoint(1, 2)).toEqual([1 / 4, 2 / 3]);
    expect(haltonPoint(2, 2)[0]).toBeCloseTo(3 / 4, 15);
    expect(haltonPoint(2, 2)[1]).toBeCloseTo(1 / 9, 15);
  });
});
