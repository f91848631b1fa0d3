/**
 * Equipotential lines of a node potential by marching squares: in each mesh cell the level is
 * located on the cell edges by linear interpolation between the corner nodes, and the crossings
 * are joined into segments (two per cell in the ambiguous saddle case, resolved by the cell-centre
 * average). Output is a flat list of segments (r1, z1, r2, z2) in metres, written into a
 * caller-owned buffer that is allocated once and reused for every redraw.
 */
import type { FieldMesh } from './mesh';

export interface ContourBuffer {
  /** Segments as (r1, z1, r2, z2) in metres; the first 4·count entries are valid. */
  readonly segments: Float32Array;
  count: number;
  /** True when the buffer filled up and later segments were dropped. */
  truncated: boolean;
}

export function createContourBuffer(maxSegments: number): ContourBuffer {
  return { segments: new Float32Array(4 * maxSegments), count: 0, truncated: false };
}

/** Evenly spaced levels strictly between the potential's extremes (no level on an electrode's own value). */
export function evenLevels(potential_V: ArrayLike<number>, count: number, out: Float64Array = new Float64Array(count)): Float64Array {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < potential_V.length; k++) {
    const v = potential_V[k];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  for (let k = 0; k < count; k++) out[k] = lo + ((hi - lo) * (k + 0.5)) / count;
  return out;
}

/**
 * Append the contours of `potential_V` (one value per mesh node, index j·nr + i) at each level to
 * `out` (reset first). Returns the segment count.
 */
export function extractContours(mesh: Pick<FieldMesh, 'nr' | 'nz' | 'hr_m' | 'hz_m' | 'zMin_m'>, potential_V: ArrayLike<number>, levels: ArrayLike<number>, out: ContourBuffer): number {
  const { nr, nz, hr_m, hz_m, zMin_m } = mesh;
  const seg = out.segments;
  const capacity = seg.length / 4;
  out.count = 0;
  out.truncated = false;
  // Edge crossing points of the current cell: 0 bottom (j), 1 right (i+1), 2 top (j+1), 3 left (i).
  const er = [0, 0, 0, 0];
  const ez = [0, 0, 0, 0];
  const push = (a: number, b: number): void => {
    if (out.count >= capacity) {
      out.truncated = true;
      return;
    }
    const o = 4 * out.count++;
    seg[o] = er[a];
    seg[o + 1] = ez[a];
    seg[o + 2] = er[b];
    seg[o + 3] = ez[b];
  };
  for (let l = 0; l < levels.length; l++) {
    const level = levels[l];
    for (let j = 0; j < nz - 1; j++) {
      const z0 = zMin_m + j * hz_m;
      for (let i = 0; i < nr - 1; i++) {
        const k = j * nr + i;
        const v00 = potential_V[k];
        const v10 = potential_V[k + 1];
        const v01 = potential_V[k + nr];
        const v11 = potential_V[k + nr + 1];
        const mask = (v00 >= level ? 1 : 0) | (v10 >= level ? 2 : 0) | (v11 >= level ? 4 : 0) | (v01 >= level ? 8 : 0);
        if (mask === 0 || mask === 15) continue;
        const r0 = i * hr_m;
        // Crossings on the four edges (only those used are read).
        er[0] = r0 + (hr_m * (level - v00)) / (v10 - v00);
        ez[0] = z0;
        er[1] = r0 + hr_m;
        ez[1] = z0 + (hz_m * (level - v10)) / (v11 - v10);
        er[2] = r0 + (hr_m * (level - v01)) / (v11 - v01);
        ez[2] = z0 + hz_m;
        er[3] = r0;
        ez[3] = z0 + (hz_m * (level - v00)) / (v01 - v00);
        switch (mask) {
          case 1:
          case 14:
            push(3, 0);
            break;
          case 2:
          case 13:
            push(0, 1);
            break;
          case 3:
          case 12:
            push(3, 1);
            break;
          case 4:
          case 11:
            push(1, 2);
            break;
          case 6:
          case 9:
            push(0, 2);
            break;
          case 7:
          case 8:
            push(3, 2);
            break;
          case 5:
          case 10: {
            // Saddle: the centre value decides which corners are connected.
            const centreAbove = (v00 + v10 + v01 + v11) / 4 >= level;
            if ((mask === 5) === centreAbove) {
              push(3, 2);
              push(0, 1);
            } else {
              push(3, 0);
              push(1, 2);
            }
            break;
          }
        }
      }
    }
  }
  return out.count;
}
