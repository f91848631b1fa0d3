/**
 * The opt-in transfer map of a solved mirror (src/physics/solvedMirrorMap.ts) and its least-squares
 * fit (src/fields/leastSquares.ts). The fit is checked by the defining property of a least-squares
 * solution (the residual is orthogonal to every column: the normal equations, Golub & Van Loan §5.3)
 * and by exact recovery of a polynomial; the map against rays traced through the solved field of the
 * gridless demo at FINE precision (rtol 1e-9), on a run of the shipped demo at its own settings.
 */
import { describe, expect, it } from 'vitest';
import { solveLeastSquares } from '../../src/fields/leastSquares';
import { SolvedPrecision } from '../../src/physics/regions/solvedTracer';
import { SeededRandom } from '../../src/ions/random';
import { Fate } from '../../src/physics/fates';
import { createIonState, startIonState } from '../../src/physics/regions/contract';
import { createFlight } from '../../src/physics/regions/driver';
import { tracedMirrorPass } from '../../src/physics/regions/solvedKernels';
import { STRIKE_CHECKS_MIN, TIME_TOL_RMS } from '../../src/physics/solvedMirrorMap';
import { traceMixed } from '../../src/physics/tracer';
import { allocateTraceResult } from '../../src/ions/ensemble';
import { mappedDemoRun } from './mirrorMapReference';

describe('least squares by Householder QR', () => {
  it('recovers a polynomial exactly and leaves a residual orthogonal to every column', () => {
    const rng = new SeededRandom(5, 0);
    const rows = 60;
    const cols = 5;
    const A = new Float64Array(rows * cols);
    const b = new Float64Array(rows);
    const xs = Array.from({ length: rows }, () => 2 * rng.uniform() - 1);
    const truth = [0.5, -1.25, 3, 0.75, -2];
    xs.forEach((x, i) => {
      for (let k = 0; k < cols; k++) A[i * cols + k] = x ** k;
      b[i] = truth.reduce((sum, c, k) => sum + c * x ** k, 0);
    });
    const c = solveLeastSquares(A.slice(), rows, cols, b.slice());
    truth.forEach((t, k) => expect(Math.abs(c[k] - t)).toBeLessThan(1e-12));
    // Noisy data: Aᵀ(b − A·c) = 0.
    const noisy = b.map((v) => v + 0.1 * (rng.uniform() - 0.5));
    const fit = solveLeastSquares(A.slice(), rows, cols, noisy.slice());
    for (let k = 0; k < cols; k++) {
      let dot = 0;
      for (let i = 0; i < rows; i++) {
        let pred = 0;
        for (let j = 0; j < cols; j++) pred += A[i * cols + j] * fit[j];
        dot += A[i * cols + k] * (noisy[i] - pred);
      }
      expect(Math.abs(dot)).toBeLessThan(1e-12);
    }
  });

  it('gives a dependent column a zero coefficient instead of a huge one', () => {
    const rows = 20;
    const A = new Float64Array(rows * 3);
    const b = new Float64Array(rows);
    for (let i = 0; i < rows; i++) {
      const x = i / rows;
      A.set([1, x, 2 * x], i * 3); // third column = 2 × second
      b[i] = 1 + 3 * x;
    }
    const c = solveLeastSquares(A, rows, 3, b);
    expect(c[2]).toBe(0);
    expect(Math.abs(c[0] - 1)).toBeLessThan(1e-12);
    expect(Math.abs(c[1] - 3)).toBeLessThan(1e-12);
  });
});

describe('transfer map of the gridless demo mirror', () => {
  it('a run of the demo at its own settings maps most ions, per species, and keeps the flight-time error at the direct trace level', () => {
    // The shipped demo as a user runs it (its own population; 6000 ions: 3000 per species).
    const { compiled, mirror, ens, mapped, report } = mappedDemoRun(6000);
    expect(report.note).toBe('');
    expect(report.species).toHaveLength(2);
    for (const s of report.species) {
      expect(s.note).toBe('');
      expect(s.mapped).toBeGreaterThan(0.5 * 3000);
      expect(s.traced).toBeGreaterThan(0); // training rays and ions outside the domain
      expect(s.validationTimeRms!).toBeLessThanOrEqual(TIME_TOL_RMS);
      expect(s.struckByMap).toBeLessThanOrEqual(s.mapped);
      if (s.struckByMap > 0) expect(s.strikeChecks).toBeGreaterThanOrEqual(STRIKE_CHECKS_MIN);
    }
    expect(report.mapped + report.traced).toBe(ens.count);
    const direct = allocateTraceResult(ens.count);
    expect(traceMixed({ ...compiled.model, mapSolvedMirror: false }, ens, direct)).toBeNull();
    // Every ion keeps the fate of the direct trace; the ions the strike pre-test took as struck on
    // the entrance electrode (the heavier species' wide-angle ions) did strike in the direct trace,
    // at about the same time (the pre-test's time is the map's, less a straight path back).
    expect(report.struckByMap).toBeGreaterThan(0);
    expect(report.struckByMap).toBe(report.species.reduce((n, s) => n + s.struckByMap, 0));
    let struckDirect = 0;
    for (let i = 0; i < ens.count; i++) {
      expect(mapped.fate[i]).toBe(direct.fate[i]);
      if (direct.fate[i] !== Fate.STRUCK_ELECTRODE) continue;
      struckDirect++;
      expect(Math.abs(mapped.flightTime_s[i] - direct.flightTime_s[i])).toBeLessThan(1e-3 * direct.flightTime_s[i]);
    }
    expect(report.struckByMap).toBeLessThan(struckDirect); // those near the margin are traced
    // Every 10th ion against a FINE trace of its mirror crossing (rtol 1e-9), the rest of the flight as in the run.
    let mirrorTime = 0;
    const fine = createFlight(compiled.model, { engine: 'mixed', mirrorMap: tracedMirrorPass(mirror, SolvedPrecision.FINE, (inside_s) => (mirrorTime = inside_s)) });
    const st = createIonState();
    let sumMapped = 0;
    let sumDirect = 0;
    let count = 0;
    let mappedStruck = 0;
    for (let s = 0; s < ens.species.length; s++) {
      fine.setMz(ens.species[s].mz);
      for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i += 10) {
        startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i], ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
        fine.fly(st);
        // Same fate as the direct trace (the map never carries an ion that would strike).
        if (st.fate !== direct.fate[i] || st.fate !== mapped.fate[i]) mappedStruck++;
        if (st.fate !== Fate.DETECTED || mapped.fate[i] !== Fate.DETECTED) continue;
        sumMapped += ((mapped.flightTime_s[i] - st.t) / mirrorTime) ** 2;
        sumDirect += ((direct.flightTime_s[i] - st.t) / mirrorTime) ** 2;
        count++;
      }
    }
    expect(count).toBeGreaterThan(500);
    expect(mappedStruck).toBe(0);
    const rmsMapped = Math.sqrt(sumMapped / count);
    const rmsDirect = Math.sqrt(sumDirect / count);
    // Relative to the time inside the mirror, the return drift's change through the exit direction included.
    expect(rmsMapped).toBeGreaterThan(0); // the map is not the trace itself
    expect(rmsMapped).toBeLessThan(3e-7);
    expect(rmsMapped).toBeLessThan(1.2 * rmsDirect);
  });
});
