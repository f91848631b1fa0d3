import { describe, expect, it } from 'vitest';
import { validatePreset } from '../../src/presets/load';
import { emptyFateCounts } from '../../src/physics/fates';
import type { RunReport, SpeciesReport } from '../../src/simulation/report';
import { describeSetup, diffSpecies, otherMode, runFigures, shownValue } from '../../src/ui/compare/compareModel';
import { demoPreset } from './helpers';

function species(mz: number, t: number, fwhm: number, transmission = 1, charge = 1): SpeciesReport {
  return {
    label: `m/z ${mz}`,
    mz,
    charge,
    ions: 100,
    detected: 100 * transmission,
    transmission,
    flightTime_ns: t,
    medianFlightTime_ns: t,
    sdFlightTime_ns: fwhm / 2.3548,
    fwhm_ns: fwhm,
    fwhmShortest_ns: fwhm,
    resolvingPower: t / (2 * fwhm),
    resolvingPowerShortest: t / (2 * fwhm),
    fates: emptyFateCounts(),
    peak: null,
    massError_ppm: null,
  } as SpeciesReport;
}

const report = (list: SpeciesReport[]): RunReport =>
  ({ ions: list.length * 100, detected: list.reduce((a, s) => a + s.detected, 0), fates: emptyFateCounts(), species: list, calibration: null, focus: null }) as RunReport;

describe('compare mode', () => {
  it('the same source in the other mode is a valid setup with the same source and ions', () => {
    const linear = demoPreset('demo-linear-delayed');
    const dual = demoPreset('demo-reflectron-dual');
    const reflectron = otherMode(linear, dual);
    expect(reflectron.mirror).toEqual(dual.mirror);
    expect(reflectron.source).toEqual(linear.source);
    expect(reflectron.ions).toEqual(linear.ions);
    expect(validatePreset(reflectron).ok).toBe(true);
    const back = otherMode(dual, dual);
    expect(back.mirror).toEqual({ type: 'none' });
    expect(back.drift.length_mm).toBe(1000 + 800);
    expect(validatePreset(back).ok).toBe(true);
    const delay = dual.source.extraction.mode === 'delayed' ? dual.source.extraction.delay_ns : NaN;
    expect(describeSetup(back)).toBe(`two-stage source, delay ${delay} ns; linear, drift 1800 mm`);
  });

  it('shows a tuned delay with six significant digits on screen while the preset keeps every digit', () => {
    const linear = demoPreset('demo-linear-delayed');
    const tuned = { ...linear, source: { ...linear.source, extraction: { mode: 'delayed' as const, delay_ns: 262.2413452345123 } } };
    expect(describeSetup(tuned)).toBe('two-stage source, delay 262.241 ns; linear, drift 1200 mm');
    expect(tuned.source.extraction.delay_ns).toBe(262.2413452345123);
    expect(shownValue(0.000123456789)).toBe('0.000123457');
    expect(shownValue(228)).toBe('228');
  });

  it('matches species by m/z and charge and reports B − A', () => {
    const a = report([species(1000, 20_000, 4), species(2000, 28_000, 10)]);
    const b = report([species(2000, 56_000, 7, 0.9), species(1000, 40_000, 5), species(3000, 70_000, 9)]);
    const rows = diffSpecies(a, b);
    expect(rows.map((r) => r.mz)).toEqual([1000, 2000, 3000]);
    expect(rows[0].flightTimeB_us).toBe(40);
    expect(rows[0].resolvingPowerRatio).toBeCloseTo(4000 / 2500, 12);
    expect(rows[1].fwhmDifference_ns).toBe(-3);
    expect(rows[1].transmissionDifference).toBeCloseTo(-0.1, 12);
    expect(rows[2].a).toBeNull();
    expect(rows[2].resolvingPowerRatio).toBeNull();
    const f = runFigures(b);
    expect(f.bestR).toBe(4000);
    expect(f.firstArrival_us).toBe(40);
    expect(f.detectedFraction).toBeCloseTo(290 / 300, 12);
  });
});
