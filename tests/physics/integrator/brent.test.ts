import { describe, expect, it } from 'vitest';
import { createRootReport, findRootBrent, type ScalarFunction } from '../../../src/physics/integrator/brent';

class Counting implements ScalarFunction {
  calls = 0;
  constructor(private readonly f: (x: number) => number) {}
  evaluate(x: number): number {
    this.calls++;
    return this.f(x);
  }
}

function solveOn(f: (x: number) => number, a: number, b: number, absTol = 0, maxIterations = 200) {
  const fn = new Counting(f);
  const report = createRootReport();
  const root = findRootBrent(fn, a, b, f(a), f(b), absTol, maxIterations, report);
  return { root, report, calls: fn.calls };
}

const ulp = (x: number): number => Math.abs(x) * Number.EPSILON;

describe('findRootBrent', () => {
  it("finds the real root of Wallis's cubic x³ − 2x − 5 to a few ulp", () => {
    // Root 2.0945514815423265… (classic test equation used by Newton and Wallis; value from memory,
    // and checked here by the sign change across the returned value ± 2 ulp).
    const f = (x: number): number => x * x * x - 2 * x - 5;
    const { root, report, calls } = solveOn(f, 2, 3);
    expect(Math.abs(root - 2.0945514815423265)).toBeLessThan(4 * ulp(root));
    expect(f(root - 2 * ulp(root)) * f(root + 2 * ulp(root))).toBeLessThanOrEqual(0);
    expect(report.converged).toBe(true);
    expect(report.evaluations).toBe(calls);
    // Guard: superlinear convergence on a smooth simple root (measured 8–9).
    expect(calls).toBeLessThanOrEqual(12);
  });

  it('finds the fixed point of cos (the Dottie number 0.7390851332151607, from memory)', () => {
    const { root } = solveOn((x) => Math.cos(x) - x, 0, 1);
    expect(Math.abs(root - 0.7390851332151607)).toBeLessThan(4 * ulp(root));
  });

  it('brackets the root between `root` and `other`, within the requested tolerance', () => {
    const f = (x: number): number => Math.exp(x) - 10; // root ln 10
    const absTol = 1e-6;
    const { root, report } = solveOn(f, 0, 5, absTol);
    expect(f(report.root) * f(report.other)).toBeLessThanOrEqual(0);
    const tol = 2 * Number.EPSILON * Math.abs(root) + absTol;
    expect(Math.abs(report.other - report.root)).toBeLessThanOrEqual(2 * tol + 1e-15);
    expect(Math.abs(root - Math.LN10)).toBeLessThan(2 * tol);
    expect(report.fRoot).toBe(f(root));
  });

  it('works with the bracket given in either order', () => {
    const f = (x: number): number => x * x - 2;
    const forward = solveOn(f, 0, 2).root;
    const backward = solveOn(f, 2, 0).root;
    expect(Math.abs(forward - Math.SQRT2)).toBeLessThan(4 * ulp(Math.SQRT2));
    expect(Math.abs(backward - Math.SQRT2)).toBeLessThan(4 * ulp(Math.SQRT2));
  });

  it('falls back to bisection on a flat multiple root and still converges within the bound', () => {
    // x^9 is flat at its root; interpolation steps are poor, and Brent's safeguard bounds the
    // work by about k² evaluations where k ≈ log2(width/tol) = 35 is the bisection count
    // (Brent 1973, Ch. 4). Guard set from the measured 94.
    const { root, report, calls } = solveOn((x) => x ** 9, -1, 1.5, 1e-10);
    expect(Math.abs(root)).toBeLessThan(1e-9);
    expect(report.converged).toBe(true);
    expect(calls).toBeLessThanOrEqual(110);
  });

  it('locates a jump in sign (no root, only a sign change) to the tolerance', () => {
    const { root, report } = solveOn((x) => (x < 0.3 ? -1 : 1), 0, 1, 1e-12);
    expect(Math.abs(root - 0.3)).toBeLessThan(3e-12);
    expect(report.converged).toBe(true);
  });

  it('returns an end point that is an exact root without evaluating', () => {
    const f = (x: number): number => x - 1;
    const { root, calls } = solveOn(f, 1, 4);
    expect(root).toBe(1);
    expect(calls).toBe(0);
    expect(solveOn(f, -3, 1).root).toBe(1);
  });

  it('returns NaN and reports no convergence when the values do not bracket a root', () => {
    const { root, report } = solveOn((x) => x * x + 1, -1, 1);
    expect(Number.isNaN(root)).toBe(true);
    expect(report.converged).toBe(false);
    const nanEnds = solveOn(() => Number.NaN, 0, 1);
    expect(Number.isNaN(nanEnds.root)).toBe(true);
  });

  it('stops at the iteration cap and says so', () => {
    const { report, calls } = solveOn((x) => x ** 9, -1, 1.5, 0, 5);
    expect(calls).toBe(5);
    expect(report.converged).toBe(false);
    expect(Number.isFinite(report.root)).toBe(true);
  });

  it('does not touch the report fields from an earlier call', () => {
    const report = createRootReport();
    const fn = new Counting((x) => x - 0.25);
    findRootBrent(fn, 0, 1, -0.25, 0.75, 0, 100, report);
    const first = { ...report };
    findRootBrent(fn, 0, 1, -0.25, 0.75, 0, 100, report);
    expect(report).toEqual(first);
  });
});
