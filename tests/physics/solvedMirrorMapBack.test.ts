/**
 * The solved mirror's transfer map far below the tuned back plate (src/physics/solvedMirrorMap.ts):
 * the gridless demo with its back plate at 5620 V, where the upper energies pass every turning point
 * and strike the back plate, and the time inside stops rising with energy just below them. Checked
 * against the direct trace (every ion traced at rtol 1e-7) and against rays traced through the same
 * solved field at FINE precision (rtol 1e-9): the fates are the direct trace's, the back-plate pre-test's
 * strikes meet the direct trace's in time and point, and the flight-time error of the detected ions the
 * map changed is no worse than the direct trace's own on the same ions (common practice, no source: the
 * reference is a tighter-tolerance solution of the same equations of motion).
 */
import { describe, expect, it } from 'vitest';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { Fate } from '../../src/physics/fates';
import { BACK_CHECKS_MIN, BACK_POINT_TOL_M, formatMirrorMap, STRIKE_TIME_TOL, TIME_TOL_RMS } from '../../src/physics/solvedMirrorMap';
import { traceMixed } from '../../src/physics/tracer';
import { changedIonErrors, mappedDemoRun } from './mirrorMapReference';

describe('transfer map with the back plate far below its tuned potential (gridless demo, 5620 V)', () => {
  it('takes the ions past every turning point as struck on the back plate, and maps the energies below the time kink', () => {
    const { compiled, mirror, ens, mapped, report } = mappedDemoRun(8000, 5620);
    expect(report.mapped + report.traced).toBe(ens.count);
    expect(report.struckBackByMap).toBeGreaterThan(0);
    expect(report.struckBackByMap).toBe(report.species.reduce((n, s) => n + s.struckBackByMap, 0));
    for (const s of report.species) {
      if (s.struckBackByMap > 0) expect(s.backChecks).toBeGreaterThanOrEqual(BACK_CHECKS_MIN);
      expect(s.struckBackByMap + s.struckByMap).toBeLessThanOrEqual(s.mapped);
      if (s.note === '') expect(s.validationTimeRms!).toBeLessThanOrEqual(TIME_TOL_RMS);
    }
    // Detected ions carried by the map (not only strikes): more than a third of the run.
    expect(report.mapped - report.struckBackByMap - report.struckByMap).toBeGreaterThan(ens.count / 3);
    expect(formatMirrorMap(report)).toMatch(/taken as struck on the back plate by its pre-test/);

    const direct = allocateTraceResult(ens.count);
    traceMixed({ ...compiled.model, mapSolvedMirror: false }, ens, direct);
    let strikes = 0;
    for (let i = 0; i < ens.count; i++) {
      expect(mapped.fate[i]).toBe(direct.fate[i]);
      if (mapped.fate[i] !== Fate.STRUCK_ELECTRODE || mapped.flightTime_s[i] === direct.flightTime_s[i]) continue;
      // A strike the pre-test predicted: the direct trace's time and point within the checks' limits.
      expect(Math.abs(mapped.flightTime_s[i] - direct.flightTime_s[i]) / direct.flightTime_s[i]).toBeLessThan(STRIKE_TIME_TOL);
      expect(Math.hypot(mapped.detectorX_m[i] - direct.detectorX_m[i], mapped.detectorY_m[i] - direct.detectorY_m[i])).toBeLessThan(BACK_POINT_TOL_M);
      strikes++;
    }
    expect(strikes).toBe(report.struckBackByMap + report.struckByMap);

    // Every 5th detected ion the map changed against a FINE trace of its mirror crossing; errors relative to the time inside.
    const errors = changedIonErrors(compiled.model, mirror, ens, mapped, direct, 5);
    expect(errors.changed).toBeGreaterThan(300);
    expect(errors.mappedRms).toBeLessThan(errors.directRms);
  });
});
