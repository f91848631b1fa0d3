/** The measurement side of a run: spectrum peaks, calibration and focus analysis, end to end. */
import { describe, expect, it } from 'vitest';
import { validatePreset } from '../../src/presets/load';
import type { PresetInput } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';

const noiseFree = (extra: Partial<PresetInput> = {}): PresetInput => ({
  formatVersion: 1,
  name: 'noise-free calibration',
  polarity: 'positive',
  source: { repeller: { potential_V: 20_000 }, groundGrid: { gap_mm: 10 }, extraction: { mode: 'static' } },
  drift: { length_mm: 1500 },
  mirror: { type: 'none' },
  ions: {
    species: [500, 1000, 1500, 2000, 3000].map((mz) => ({ mz, charge: 1, abundance: 1 })),
    startPosition: { kind: 'surface', position_mm: 6 },
    startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 },
  },
  acquisition: { pulseWidth_ns: 1, sampleInterval_ns: 0.1 },
  analysis: { calibrantMz: [500, 3000] },
  run: { ions: 5000, seed: 1 },
  ...extra,
});

function run(doc: PresetInput, withSpectrum = false) {
  const loaded = validatePreset(doc);
  if (!loaded.ok) throw new Error(JSON.stringify(loaded.issues));
  return simulate(loaded.value, { withSpectrum });
}

describe('calibration on noise-free simulated peaks', () => {
  it('reproduces the unknowns to < 1 ppm (ions at rest in one plane: t = t0 + a·sqrt(m/z) holds exactly)', () => {
    const r = run(noiseFree());
    const cal = r.report.calibration;
    expect(cal && 'unknowns' in cal).toBe(true);
    if (!cal || !('unknowns' in cal)) return;
    expect(cal.timesFrom).toBe('spectrum peak centroids');
    expect(cal.unknowns).toHaveLength(3);
    for (const u of cal.unknowns) expect(Math.abs(u.error_ppm!)).toBeLessThan(1);
    // The species table carries the same errors.
    expect(r.report.species.filter((s) => s.massError_ppm !== null)).toHaveLength(3);
  });

  it('a detector pulse sets the width of a zero-spread peak (FWHM = pulse width)', () => {
    const r = run(noiseFree());
    for (const s of r.report.species) expect(s.peak!.fwhm_ns!).toBeCloseTo(1, 2);
  });

  it('the whole spectrum holds every detected ion', () => {
    const r = run(noiseFree(), true);
    const spec = r.analysis.spectrum!;
    let sum = 0;
    for (const y of spec.intensity) sum += y;
    expect(sum).toBeCloseTo(5000, 6);
    let ascending = true;
    for (let k = 1; k < spec.time_ns.length; k++) ascending &&= spec.time_ns[k] > spec.time_ns[k - 1];
    expect(ascending).toBe(true);
    expect(spec.mz).not.toBeNull();
  });
});

describe('focus analysis', () => {
  it('finds the single-field space-focus plane at 2·s0 (Wiley & McLaren 1955)', () => {
    // Start 6 mm into a 10 mm single-stage source: s0 = 4 mm from the exit grid, focus at 8 mm.
    const r = run({ ...noiseFree(), ions: { ...noiseFree().ions, startVelocity: { kind: 'normal', mean_m_per_s: 1e-3, sd_m_per_s: 0 } } });
    const focus = r.report.focus!;
    expect('spaceFocusPlane_mm' in focus).toBe(true);
    if (!('spaceFocusPlane_mm' in focus)) return;
    expect(focus.spaceFocusPlane_mm!).toBeCloseTo(8, 3);
    // 1.5 m of drift is far beyond the focus: first-order space focus is not reached there.
    expect(focus.spaceFocusOrder).toBe(0);
    // Beyond the focus, ions starting nearer the exit grid (larger z0, less energy) arrive later.
    expect(focus.dT_dz0_ns_per_mm).toBeGreaterThan(0);
  });
});
