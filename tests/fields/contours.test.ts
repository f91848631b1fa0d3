import { describe, expect, it } from 'vitest';
import { createContourBuffer, evenLevels, extractContours } from '../../src/fields/contours';

/**
 * Known potentials (analytic, no source needed beyond the formulas): a potential linear in z has
 * straight equipotentials z = const, and φ = r² + (z − z₀)² has circles of radius √φ. Marching
 * squares with linear edge interpolation (Lorensen & Cline, SIGGRAPH 1987, the 2-D case; from
 * memory) is exact for the first and second-order accurate in the spacing for the second.
 */
function grid(nr: number, nz: number, h: number, f: (r: number, z: number) => number) {
  const phi = new Float64Array(nr * nz);
  for (let j = 0; j < nz; j++) for (let i = 0; i < nr; i++) phi[j * nr + i] = f(i * h, j * h);
  return { mesh: { nr, nz, hr_m: h, hz_m: h, zMin_m: 0 }, phi };
}

describe('equipotential contours', () => {
  it('a potential linear in z gives straight lines across the whole radius, exactly at the level', () => {
    const { mesh, phi } = grid(21, 41, 0.5, (_r, z) => 100 * z); // 0 … 2000 V over z = 0 … 20
    const out = createContourBuffer(1000);
    const n = extractContours(mesh, phi, [333, 1250.5], out);
    expect(n).toBe(2 * 20); // one segment per column of cells for each level
    let length = 0;
    for (let s = 0; s < n; s++) {
      const [r1, z1, r2, z2] = out.segments.subarray(4 * s, 4 * s + 4);
      expect([333 / 100, 1250.5 / 100].some((zc) => Math.abs(z1 - zc) < 1e-5 && Math.abs(z2 - zc) < 1e-5)).toBe(true);
      length += Math.hypot(r2 - r1, z2 - z1);
    }
    expect(length).toBeCloseTo(2 * 10, 4); // each line spans r = 0 … 10
  });

  it('circles of φ = r² + (z − z0)²: vertices on radius √level within O(h²), total length ≈ the half circumference', () => {
    for (const h of [0.2, 0.1]) {
      const nr = Math.round(6 / h) + 1;
      const nz = Math.round(12 / h) + 1;
      const { mesh, phi } = grid(nr, nz, h, (r, z) => r * r + (z - 6) * (z - 6));
      const out = createContourBuffer(20_000);
      const level = 16; // radius 4
      const n = extractContours(mesh, phi, [level], out);
      let worst = 0;
      let length = 0;
      for (let s = 0; s < n; s++) {
        const [r1, z1, r2, z2] = out.segments.subarray(4 * s, 4 * s + 4);
        worst = Math.max(worst, Math.abs(Math.hypot(r1, z1 - 6) - 4), Math.abs(Math.hypot(r2, z2 - 6) - 4));
        length += Math.hypot(r2 - r1, z2 - z1);
      }
      // Linear interpolation of a quadratic across an edge: error ≤ h²/(8·r)·… ; bound it by h²/4.
      expect(worst).toBeLessThan((h * h) / 4);
      expect(Math.abs(length - Math.PI * 4) / (Math.PI * 4)).toBeLessThan(h * h);
    }
  });

  it('levels strictly inside the range; a full buffer is flagged, not overrun', () => {
    const { mesh, phi } = grid(11, 11, 1, (_r, z) => z);
    const levels = evenLevels(phi, 4);
    expect(Array.from(levels)).toEqual([1.25, 3.75, 6.25, 8.75]);
    const small = createContourBuffer(5);
    expect(extractContours(mesh, phi, levels, small)).toBe(5);
    expect(small.truncated).toBe(true);
  });
});
