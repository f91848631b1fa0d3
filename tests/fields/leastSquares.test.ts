/** Several right-hand sides on one factorisation (the map's exit position and direction); recovery and the normal equations are checked in tests/physics/solvedMirrorMap.test.ts. */
import { describe, expect, it } from 'vitest';
import { solveLeastSquares, solveLeastSquaresMany } from '../../src/fields/leastSquares';

/** Vandermonde rows 1, x, x², … at `xs`. */
function vandermonde(xs: readonly number[], cols: number): Float64Array {
  const a = new Float64Array(xs.length * cols);
  xs.forEach((x, i) => {
    let p = 1;
    for (let k = 0; k < cols; k++, p *= x) a[i * cols + k] = p;
  });
  return a;
}

describe('least squares by Householder QR', () => {
  const xs = Array.from({ length: 40 }, (_, i) => -1 + (2 * i) / 39);
  const poly = (x: number) => 0.3 - 1.2 * x + 2.5 * x ** 2 + 0.7 * x ** 3;

  it('gives each right-hand side of a shared factorisation the coefficients of its own solve', () => {
    const b1 = Float64Array.from(xs, poly);
    const b2 = Float64Array.from(xs, (x) => Math.exp(x));
    const [c1, c2] = solveLeastSquaresMany(vandermonde(xs, 6), xs.length, 6, [b1.slice(), b2.slice()]);
    const s1 = solveLeastSquares(vandermonde(xs, 6), xs.length, 6, b1.slice());
    const s2 = solveLeastSquares(vandermonde(xs, 6), xs.length, 6, b2.slice());
    for (let k = 0; k < 6; k++) {
      expect(c1[k]).toBe(s1[k]);
      expect(c2[k]).toBe(s2[k]);
    }
  });

  it('rejects fewer rows than columns', () => {
    expect(() => solveLeastSquares(new Float64Array(6), 2, 3, new Float64Array(2))).toThrow(/at least as many rows/);
  });
});
