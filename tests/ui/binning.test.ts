import { describe, expect, it } from 'vitest';
import { accumulate, binCentres, binsForWidth, detectedExtent, paddedRange } from '../../src/ui/charts/binning';

const DETECTED = 1;

describe('spectrum binning', () => {
  it('counts only detected ions inside the range, each in the bin that holds it', () => {
    const values = Float64Array.from([0.05, 0.15, 0.15, 0.95, 1.0, -0.1, 0.5, 0.55]);
    const fate = Uint8Array.from([1, 1, 1, 1, 1, 1, 2, 1]);
    const range = { lo: 0, hi: 1, bins: 10 };
    const counts = accumulate(values, fate, DETECTED, 0, values.length, range, new Float64Array(10));
    expect(Array.from(counts)).toEqual([1, 2, 0, 0, 0, 1, 0, 0, 0, 1]);
    // Summing species blocks into one array.
    accumulate(values, fate, DETECTED, 0, 2, range, counts);
    expect(counts[0]).toBe(2);
    expect(counts[1]).toBe(3);
  });

  it('weights ions when weights are given', () => {
    const counts = accumulate(Float64Array.from([0.5, 0.5]), Uint8Array.from([1, 1]), DETECTED, 0, 2, { lo: 0, hi: 1, bins: 2 }, new Float64Array(2), Float64Array.from([0.25, 0.5]));
    expect(Array.from(counts)).toEqual([0, 0.75]);
  });

  it('bin centres, extent, padding and bin count', () => {
    expect(Array.from(binCentres({ lo: 10, hi: 20, bins: 4 }, new Float64Array(4)))).toEqual([11.25, 13.75, 16.25, 18.75]);
    expect(detectedExtent(Float64Array.from([5, 1, 9, NaN, 3]), Uint8Array.from([1, 2, 1, 1, 1]), DETECTED)).toEqual([3, 9]);
    expect(detectedExtent(Float64Array.from([5]), Uint8Array.from([2]), DETECTED)).toBeNull();
    const r = paddedRange([20, 30], 100);
    expect(r.lo).toBeCloseTo(19.6, 12);
    expect(r.hi).toBeCloseTo(30.4, 12);
    expect(binsForWidth(600)).toBe(1200);
    expect(binsForWidth(10)).toBe(200);
    expect(binsForWidth(1e5)).toBe(4000);
  });
});
