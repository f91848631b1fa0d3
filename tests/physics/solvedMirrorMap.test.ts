/**
 * The opt-in transfer map of a solved mirror (src/physics/solvedMirrorMap.ts) and its least-squares
 * fit (src/fields/leastSquares.ts). The fit is checked by the defining property of a least-squares
 * solution (the residual is orthogonal to every column: the normal equations, Golub & Van Loan §5.3)
 * and by exact recovery of a polynomial; the map against rays traced through the solved field of the
 * gridless demo at FINE precision (rtol 1e-9), on a spread of entry states in random order.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { solveLeastSquares } from '../../src/fields/leastSquares';
import { SolvedExit, SolvedPrecision, createSolvedIonState, traceSolvedRegion } from '../../src/physics/regions/solvedTracer';
import { SeededRandom } from '../../src/ions/random';
import { chargeToMass_C_per_kg } from '../../src/physics/constants';
import { createExactPlan, createIonState, prepareExactPlan } from '../../src/physics/exactEngine';
import { Fate } from '../../src/physics/fates';
import { startTransverse, transverse } from '../../src/physics/solvedMirror';
import { SolvedMirrorMapper } from '../../src/physics/solvedMirrorMap';
import { compilePreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';

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
  it('mapped ions agree with FINE traces of the same ions; ions outside the fitted range are traced', () => {
    // The demo's geometry at the settings the map was fitted on (5.0 kV pulse, 150 ns, 5.6 kV back plate):
    // at the demo's retuned settings the exit-direction check fails and the map turns itself off.
    const raw = JSON.parse(readFileSync(new URL('../../presets/demo-gridless-mirror.json', import.meta.url), 'utf8'));
    raw.source.repeller.potential_V = 5000;
    raw.source.extraction.delay_ns = 150;
    raw.mirror.backPlate.potential_V = 5600;
    const valid = validatePreset(raw);
    if (!valid.ok) throw new Error('demo preset invalid');
    const model = compilePreset(valid.value).model;
    const mirror = model.mirror!.solved!;
    const mz = 1046.5418;
    const plan = prepareExactPlan(createExactPlan(), model, mz);
    const k = chargeToMass_C_per_kg(mz);
    const rng = new SeededRandom(13, 0);
    const n = 1600;
    const mapper = new SolvedMirrorMapper(mirror, n);
    const st = createIonState();
    const ion = createSolvedIonState();
    let checked = 0;
    let worst = 0;
    for (let i = 0; i < n; i++) {
      const energy = 4700 + 300 * rng.uniform();
      const r = 3e-3 * Math.sqrt(rng.uniform());
      const phi = 2 * Math.PI * rng.uniform();
      const vx = 150 * (2 * rng.uniform() - 1);
      const vy = 150 * (2 * rng.uniform() - 1);
      const vz = Math.sqrt(2 * energy * k);
      startTransverse(r * Math.cos(phi), r * Math.sin(phi), vx, vy);
      Object.assign(st, { t: 0, z: 0, v: vz, fate: Fate.UNSET, w: 1 });
      const before = mapper.report.mapped;
      expect(mapper.pass(st, plan, 1)).toBe(true);
      if (mapper.report.mapped === before || i % 20 !== 0) continue;
      // A mapped ion: trace it at FINE precision and compare the time inside and the exit state.
      Object.assign(ion, { t: 0, x: r * Math.cos(phi), y: r * Math.sin(phi), z: mirror.region.entryZ_m, vx, vy, vz });
      expect(traceSolvedRegion(ion, mirror.region, k, 1, SolvedPrecision.FINE)).toBe(SolvedExit.ENTRY);
      worst = Math.max(worst, Math.abs(st.t - ion.t) / ion.t);
      expect(Math.abs(st.t - ion.t) / ion.t).toBeLessThan(5e-7);
      expect(Math.hypot(transverse.xRef - ion.x, transverse.yRef - ion.y)).toBeLessThan(5e-6);
      expect(Math.abs(st.v + ion.vz) / ion.vz).toBeLessThan(1e-6);
      checked++;
    }
    startTransverse(0, 0, 0, 0);
    expect(mapper.report.note).toBe('');
    expect(mapper.report.mapped).toBeGreaterThan(0.7 * n);
    expect(mapper.report.traced).toBeGreaterThan(0);
    expect(checked).toBeGreaterThan(30);
    expect(worst).toBeGreaterThan(0); // the map is not the trace itself
  });
});
