/**
 * Bessel functions of the first kind for the field-solver tests, from Bessel's integral
 *   J_n(x) = (1/π) ∫₀^π cos(nτ − x sin τ) dτ        (Abramowitz & Stegun 9.1.21, from memory)
 * evaluated with the trapezoidal rule, which converges geometrically for this smooth periodic
 * integrand (enough points: a few more than x). Zeros of J0 by Newton's method with J0' = −J1,
 * started from McMahon's estimate (n − ¼)π (A&S 9.5.12, from memory).
 */

export function besselJ(n: number, x: number): number {
  const points = Math.ceil(Math.abs(x)) + 40;
  const h = Math.PI / points;
  let sum = 0.5 * (Math.cos(0) + Math.cos(n * Math.PI - x * Math.sin(Math.PI)));
  for (let k = 1; k < points; k++) {
    const tau = k * h;
    sum += Math.cos(n * tau - x * Math.sin(tau));
  }
  return (sum * h) / Math.PI;
}

export const besselJ0 = (x: number): number => besselJ(0, x);
export const besselJ1 = (x: number): number => besselJ(1, x);

/** The first `count` positive zeros of J0. */
export function besselJ0Zeros(count: number): number[] {
  const zeros: number[] = [];
  for (let n = 1; n <= count; n++) {
    let x = (n - 0.25) * Math.PI;
    for (let it = 0; it < 50; it++) {
      const step = besselJ0(x) / -besselJ1(x);
      x -= step;
      if (Math.abs(step) < 1e-15 * x) break;
    }
    zeros.push(x);
  }
  return zeros;
}
