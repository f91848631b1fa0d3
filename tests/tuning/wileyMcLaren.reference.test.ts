/**
 * Auto-tune of a static two-stage source against the space-focus condition of
 * Wiley & McLaren 1955 (Rev. Sci. Instrum. 26, 1150), eq. for the two-field source:
 *   D = 2·s0·k0^{3/2}·(1 − d/((k0 + √k0)·s0)),  k0 = (s0·Es + d·Ed)/(s0·Es),
 * for ions starting at rest a distance s0 before the extraction grid. The expected values are
 * computed here from that formula alone; the tuner sees only simulated peak widths.
 */
import { describe, expect, it } from 'vitest';
import { inProcessEngine, staticTwoStage } from './fixtures';

const wm = (s0: number, d: number, Es: number, Ed: number): number => {
  const k0 = (s0 * Es + d * Ed) / (s0 * Es);
  return 2 * s0 * k0 ** 1.5 * (1 - d / ((k0 + Math.sqrt(k0)) * s0));
};

// Source of the reference test in tests/physics/exactEngine.reference.test.ts: 3 mm + 10 mm, 20 kV / 17 kV.
const gap1 = 3e-3;
const d = 10e-3;
const s0 = 1.5e-3;
const source = (drift_mm: number, grid_V = 17000) =>
  staticTwoStage({
    repeller_V: 20000,
    grid_V,
    gap1_mm: 3,
    gap2_mm: 10,
    drift_mm,
    // A narrow spread of start positions about z0 = gap1 − s0 (σ/s0 = 1/75): the focus is then set
    // by the first-order condition; the variance minimum moves by O((σ/s0)²) only.
    start: { kind: 'gaussian', mean_mm: (gap1 - s0) * 1e3, sd_mm: 0.02 },
    velocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 },
    mz: [{ mz: 1000 }],
    ions: 3000,
  });

describe('auto-tune lands on the Wiley & McLaren 1955 space-focus condition', () => {
  it('tuning the drift length for minimum peak width (within 0.5 %)', async () => {
    const expected_mm = wm(s0, d, (20000 - 17000) / gap1, 17000 / d) * 1e3; // ≈ 75.3 mm
    const r = await inProcessEngine(2).optimise({
      preset: source(200),
      parameters: [{ path: 'drift.length_mm', min: 20, max: 400 }],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      useAnalyticStart: false,
    });
    expect(Math.abs(r.best[0] / expected_mm - 1)).toBeLessThan(0.005);
    // The flatness interval brackets the optimum.
    expect(r.flatness[0].low).toBeLessThan(r.best[0]);
    expect(r.flatness[0].high).toBeGreaterThan(r.best[0]);
  });

  it('tuning the extraction-grid potential for a given drift length (within 0.5 %)', async () => {
    const D = 0.3;
    // Expected grid potential: bisection of the published D(k0(Vg)) = D on Vg (k0 falls as Vg falls, and D with it).
    let lo = 12000;
    let hi = 19900;
    const f = (Vg: number) => wm(s0, d, (20000 - Vg) / gap1, Vg / d) - D;
    expect(Math.sign(f(lo))).toBe(-Math.sign(f(hi)));
    for (let i = 0; i < 100; i++) {
      const mid = 0.5 * (lo + hi);
      if (Math.sign(f(mid)) === Math.sign(f(lo))) lo = mid;
      else hi = mid;
    }
    const expected_V = 0.5 * (lo + hi);
    const r = await inProcessEngine(2).optimise({
      preset: source(D * 1e3, 15000),
      parameters: [{ path: 'source.extractionGrid.potential_V', min: 12000, max: 19900 }],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      useAnalyticStart: false,
    });
    expect(Math.abs(r.best[0] / expected_V - 1)).toBeLessThan(0.005);
  });

  it('the analytic start for the drift length is the same condition (start values name their source)', async () => {
    const expected_mm = wm(s0, d, (20000 - 17000) / gap1, 17000 / d) * 1e3;
    const r = await inProcessEngine(1).optimise({
      preset: source(200),
      parameters: [{ path: 'drift.length_mm', min: 20, max: 400 }],
      objective: { name: 'min-fwhm', targetMz: 1000 },
      ions: 500,
    });
    expect(Math.abs(r.start[0] / expected_mm - 1)).toBeLessThan(1e-6);
    expect(r.startSource?.join(' ')).toMatch(/Wiley & McLaren 1955/);
  });
});
