/**
 * The digitized spectrum built from an ensemble: which ions count, how weights and the record
 * window act, that peak shapes come from the ions, and the m/z axis.
 */
import { describe, expect, it } from 'vitest';
import { buildSpectrum, checkAcquisitionSettings, recordSampleCount, timeAxisToMz, type AcquisitionSettings } from '../../src/analysis/spectrum';
import { findPeaks } from '../../src/analysis/peaks';
import { SeededRandom } from '../../src/ions/random';
import { Fate } from '../../src/physics/fates';

const NS = 1e-9;

const ideal: AcquisitionSettings = {
  pulseFwhm_s: 0,
  detectorJitterSd_s: 0,
  triggerJitterSd_s: 0,
  shots: 1,
  seed: 1,
  sampleInterval_s: 1 * NS,
  recordStart_s: 100 * NS,
  recordLength_s: 50 * NS,
};

describe('buildSpectrum', () => {
  it('with an ideal detector the spectrum is the histogram of the detected ions, weighted', () => {
    const rng = new SeededRandom(5);
    const n = 3000;
    const arrival = new Float64Array(n);
    const fate = new Uint8Array(n);
    const weight = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      arrival[i] = (90 + 70 * rng.uniform()) * NS; // some before and after the record
      fate[i] = i % 7 === 0 ? Fate.MISSED_DETECTOR : i % 11 === 0 ? Fate.STRUCK_ELECTRODE : Fate.DETECTED;
      weight[i] = 0.8 + 0.15 * rng.uniform();
    }
    const s = buildSpectrum({ arrival_s: arrival, fate, weight }, ideal);
    expect(s.intensity.length).toBe(50);
    // Independent histogram: bin k is [100 + k, 101 + k) ns.
    const hist = new Float64Array(50);
    let detected = 0;
    let outside = 0;
    let total = 0;
    for (let i = 0; i < n; i++) {
      if (fate[i] !== Fate.DETECTED) continue;
      detected++;
      total += weight[i];
      const k = Math.floor(arrival[i] / NS - 100);
      if (k < 0 || k >= 50) outside++;
      else hist[k] += weight[i];
    }
    for (let k = 0; k < 50; k++) expect(s.intensity[k]).toBeCloseTo(hist[k], 10);
    expect(s.detectedIons).toBe(detected);
    expect(s.ionsOutsideRecord).toBe(outside);
    expect(s.detectedIntensity).toBeCloseTo(total, 9);
    expect(s.recordedIntensity).toBeCloseTo(hist.reduce((a, b) => a + b, 0), 9);
    expect(s.time_s[0]).toBeCloseTo(100.5 * NS, 20);
  });

  it('the ion range [from, to) selects one block of ions', () => {
    const arrival = Float64Array.from([110.5, 120.5, 130.5, 140.5].map((t) => t * NS));
    const fate = new Uint8Array(4).fill(Fate.DETECTED);
    const s = buildSpectrum({ arrival_s: arrival, fate, from: 1, to: 3 }, ideal);
    expect(s.detectedIons).toBe(2);
    expect(s.intensity[20]).toBe(1);
    expect(s.intensity[30]).toBe(1);
    expect(s.intensity[10]).toBe(0);
  });

  it('peak shapes come from the ions: a flat arrival distribution of width W gives a flat-topped peak of FWHM W', () => {
    // A uniform distribution's density is a box: its full width at half height is its width (definition).
    const rng = new SeededRandom(9);
    const n = 200_000;
    const W = 10 * NS;
    const arrival = new Float64Array(n);
    for (let i = 0; i < n; i++) arrival[i] = 5000 * NS + W * rng.uniform();
    const settings: AcquisitionSettings = { ...ideal, pulseFwhm_s: 0.2 * NS, sampleInterval_s: 0.1 * NS, recordStart_s: 4990 * NS, recordLength_s: 30 * NS };
    const s = buildSpectrum({ arrival_s: arrival, fate: new Uint8Array(n).fill(Fate.DETECTED) }, settings);
    const peaks = findPeaks(s.time_s, s.intensity, { minRelativeProminence: 0.5 });
    expect(peaks).toHaveLength(1);
    expect(Math.abs(peaks[0].fwhm_s! / W - 1)).toBeLessThan(0.01);
    // Not a gaussian: the 5 % width of a gaussian with this FWHM would be 1.82·FWHM; a box blurred
    // by a 0.2 ns pulse stays within W + 2·0.2 ns.
    expect(peaks[0].width5pct_s!).toBeLessThan(W + 0.4 * NS);
    expect(peaks[0].centroid_s).toBeCloseTo(5005 * NS, 11);
  });

  it('a pulse straddling the record start is cut: only the part inside is recorded', () => {
    const settings: AcquisitionSettings = { ...ideal, pulseFwhm_s: 2 * NS };
    const s = buildSpectrum({ arrival_s: Float64Array.of(100 * NS), fate: Uint8Array.of(Fate.DETECTED) }, settings);
    expect(s.recordedIntensity).toBeCloseTo(0.5, 10);
    expect(s.ionsOutsideRecord).toBe(0);
  });

  it('bad settings name the field', () => {
    const issues = checkAcquisitionSettings({ ...ideal, sampleInterval_s: 0, shots: 2.5, pulseFwhm_s: -1 });
    expect(issues.map((i) => i.path).sort()).toEqual(['acquisition.pulseFwhm_s', 'acquisition.sampleInterval_s', 'acquisition.shots']);
    expect(checkAcquisitionSettings({ ...ideal, recordLength_s: 1, sampleInterval_s: 1e-12 })[0].path).toBe('acquisition.recordLength_s');
    expect(() => buildSpectrum({ arrival_s: new Float64Array(2), fate: new Uint8Array(3) }, ideal)).toThrow(/fate/);
    expect(() => buildSpectrum({ arrival_s: new Float64Array(2), fate: new Uint8Array(2) }, { ...ideal, recordLength_s: -1 })).toThrow(
      /recordLength_s/,
    );
    expect(checkAcquisitionSettings(ideal)).toEqual([]);
  });

  it('record length that is a decimal multiple of the interval does not gain a sample', () => {
    expect(recordSampleCount({ sampleInterval_s: 0.1e-9, recordStart_s: 0, recordLength_s: 3e-6 })).toBe(30_000);
    expect(recordSampleCount({ sampleInterval_s: 1e-9, recordStart_s: 0, recordLength_s: 10.5e-9 })).toBe(11);
  });
});

describe('timeAxisToMz', () => {
  it('inverts t = t0 + a·√(m/z) and marks times before t0', () => {
    const cal = { t0_s: 50 * NS, a_s_per_sqrtTh: 0.5e-6, b_s_per_Th: 0 };
    const t = Float64Array.from([10 * NS, 50 * NS, 50 * NS + 0.5e-6 * Math.sqrt(1000), 50 * NS + 0.5e-6 * Math.sqrt(2345.6)]);
    const axis = timeAxisToMz(t, cal);
    expect(axis.invalidCount).toBe(1);
    expect(axis.mz[0]).toBe(0);
    expect(axis.mz[1]).toBe(0);
    expect(axis.mz[2]).toBeCloseTo(1000, 9);
    expect(axis.mz[3]).toBeCloseTo(2345.6, 9);
  });
});
