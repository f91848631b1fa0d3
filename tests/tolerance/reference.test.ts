/**
 * The tolerance analysis against textbook results.
 *
 * TOF kinematics, t = L·sqrt(m/(2zeU)) (Wiley & McLaren, Rev. Sci. Instrum. 26 (1955) 1150; the
 * textbook form in Cotter, Time-of-Flight Mass Spectrometry, ACS 1997, ch. 2): for a drift-dominated
 * linear instrument m ∝ U·t²/L², so under a calibration fixed beforehand
 * - every potential × (1 + ε) (U → U(1 + ε), t → t/√(1 + ε)) gives an apparent mass m/(1 + ε): −ε;
 * - the tube length × (1 + αΔT) gives t·(1 + αΔT) and an apparent mass m·(1 + αΔT)²: +2αΔT.
 * Derived in the test below with the source's share of the flight included, and compared with the
 * analytic values within 1 %.
 */
import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../src/physics/constants';
import { materialExpansion_per_K } from '../../src/tolerance/materials';
import { driftDominated, runTolerance, valid } from './helpers';

const sens = (r: Awaited<ReturnType<typeof runTolerance>>, id: string) => {
  const p = r.sensitivities.find((s) => s.parameter === id);
  if (!p) throw new Error(`no parameter ${id}`);
  return p;
};

describe('drift-dominated linear instrument (m ∝ U·t²/L²)', () => {
  it('all potentials × (1 + ε) move the apparent mass by −ε', async () => {
    const preset = driftDominated();
    const r = await runTolerance({ preset });
    // Only the repeller supply is not at 0 V: its sensitivity is that of "all potentials".
    const supplies = r.sensitivities.filter((p) => p.kind === 'slow' && p.parameter.startsWith('supply.'));
    expect(supplies.map((p) => p.parameter)).toEqual(['supply.repeller.drift']);
    for (let s = 0; s < r.species.length; s++) {
      const total = supplies.reduce((a, p) => a + p.species[s].massShift_ppm_per_unit!, 0);
      expect(Math.abs(total - -1)).toBeLessThan(0.01); // −ε, ε in ppm: −1 ppm per ppm
    }
  });

  it('two-stage source: the supplies together give −ε (each alone does not)', async () => {
    const preset = valid({
      ...driftDominated(),
      source: {
        repeller: { potential_V: 20000 },
        extractionGrid: { gap_mm: 3, potential_V: 17000 },
        groundGrid: { gap_mm: 8 },
        extraction: { mode: 'static' },
      },
      ions: { ...driftDominated().ions, startPosition: { kind: 'surface', position_mm: 1.5 } },
    });
    const r = await runTolerance({ preset });
    const rep = sens(r, 'supply.repeller.drift');
    const grid = sens(r, 'supply.extractionGrid.drift');
    for (let s = 0; s < r.species.length; s++) {
      const a = rep.species[s].massShift_ppm_per_unit!;
      const b = grid.species[s].massShift_ppm_per_unit!;
      expect(Math.abs(a)).toBeGreaterThan(0.05);
      expect(Math.abs(b)).toBeGreaterThan(0.05);
      expect(Math.abs(a + b - -1)).toBeLessThan(0.01);
    }
  });

  it('a tube expansion α·ΔT moves the apparent mass by +2·α·ΔT', async () => {
    const alpha = materialExpansion_per_K('stainless-304');
    const preset = driftDominated();
    const r = await runTolerance({ preset });
    const p = sens(r, 'temperature.flightTube');
    expect(p.unit).toBe('K');
    for (let s = 0; s < r.species.length; s++) {
      const mz = r.species[s].mz;
      const perK = p.species[s].massShift_ppm_per_unit! * 1e-6; // relative mass shift per K
      // Derived: only the drift time t_d = L/v scales; the source time 2d/v does not (ions from rest).
      const U = 20000;
      const v = Math.sqrt((2 * ELEMENTARY_CHARGE_C * U) / (mz * ATOMIC_MASS_CONSTANT_KG));
      const tDrift = 4.0 / v;
      const tSource = (2 * 0.005) / v;
      const derived = 2 * alpha * (tDrift / (tDrift + tSource));
      expect(Math.abs(perK / derived - 1)).toBeLessThan(1e-3);
      // The textbook value for a drift-only flight: +2αΔT, within 1 %.
      expect(Math.abs(perK / (2 * alpha) - 1)).toBeLessThan(0.01);
      expect(r.species[s].flightTime_ns! * 1e-9).toBeCloseTo(tDrift + tSource, 12);
    }
  });
});

describe('timing jitter adds in quadrature to the peak width', () => {
  // Variances of independent contributions add (the sum of independent normal variables is normal
  // with the sum of the variances: Papoulis & Pillai, Probability, Random Variables and Stochastic
  // Processes, 4th ed., 2002, ch. 6 — from memory); for gaussian peaks FWHM² = FWHM₀² + (2.3548·σ)².
  it('R with start jitter σ follows t/(2·sqrt(FWHM₀² + (2.3548σ)²))', async () => {
    const base = driftDominated();
    const preset = valid({
      ...base,
      ions: {
        species: [{ mz: 1000, charge: 1 }],
        startPosition: { kind: 'gaussian', mean_mm: 2, sd_mm: 0.0003 },
        startVelocity: { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 },
      },
      acquisition: { pulseWidth_ns: 1, shots: 10000, sampleInterval_ns: 0.1 },
      tolerances: { timing: { triggerJitter_ns: 4 } },
      run: { ions: 100000, seed: 5 },
    });
    const r = await runTolerance({ preset });
    const t = r.species[0].flightTime_ns!;
    const R0 = r.species[0].resolvingPower!;
    const fwhm0 = t / (2 * R0);
    const jitter = sens(r, 'timing.triggerJitter');
    const R = jitter.species[0].resolvingPowerAtTolerance!;
    const expected = t / (2 * Math.hypot(fwhm0, 2 * Math.sqrt(2 * Math.LN2) * 4));
    expect(R).toBeLessThan(0.8 * R0); // the jitter matters here
    expect(Math.abs(R / expected - 1)).toBeLessThan(0.02);
  });
});

describe('Monte Carlo against the linearised prediction', () => {
  // For small tolerances the mass error is linear in them, so it is normal with the sd of the
  // linear propagation (JCGM 100:2008, the GUM, eq. 10): 5th/95th percentiles at ∓1.6449·sd.
  // Derivation of the bound: a plain sample's 95th percentile at 400 draws has sd
  // sqrt(0.95·0.05/400)/φ(1.645) = 0.106 sd, 6.4 % of 1.645 (asymptotic variance of a sample quantile,
  // from memory), so 3 % needs a design: the draws lie on a randomly shifted lattice in the principal
  // directions of every species' linearised mass error (latticeNormalDesign). Each draw stays N(0, I);
  // only the layout is even. Measured over 12 draw seeds: within 1.7 % for both species (with the
  // earlier design, stratified along the worst species only, m/z 2000 reached 3.9 % at these seeds).
  // Three draw seeds, so that no lucky seed carries the check.
  it.each([1, 2, 3])('percentiles converge to ±1.645·sd_linear at 400 draws (draw seed $0)', async (drawSeed) => {
    const preset = valid({
      ...driftDominated(),
      acquisition: { pulseWidth_ns: 1, shots: 100, sampleInterval_ns: 0.5 },
      tolerances: {
        supplies: { repeller: { drift_ppm: 3, ripple_ppm: 10 } },
        timing: { triggerJitter_ns: 0.5 },
        temperature: { flightTube_K: 0.1 },
        positions: { detector_um: 20 },
      },
    });
    const r = await runTolerance({ preset, draws: 400, drawSeed }, 2);
    const mc = r.monteCarlo!;
    expect(mc.drawsRun).toBe(400);
    expect(mc.failedDraws).toBe(0);
    expect(mc.parameters.sort()).toEqual(['position.detector', 'supply.repeller.drift', 'supply.repeller.ripple', 'temperature.flightTube', 'timing.triggerJitter']);
    // One lattice for both species: m/z 2000's error leans less on the trigger term (2·Δt/t, t twice
    // as long) than m/z 500's, so no single stratified direction serves both.
    expect(mc.design.latticeDimensions).toBe(2);
    // Checked on the ideal-detector figures (mean arrival time, every ion detected and the ions
    // spread evenly over the shots): the linearisation leaves out the counting noise of a measured
    // centroid, which the spectrum-based figures carry on top (their spread is not smaller).
    for (const s of mc.species) {
      const sd = s.linearIons.sd_ppm!;
      const bound = 0.03;
      expect(sd).toBeGreaterThan(1);
      expect(Math.abs(s.massErrorIons_ppm.p95! / (1.6448536 * sd) - 1)).toBeLessThan(bound);
      expect(Math.abs(s.massErrorIons_ppm.p5! / (-1.6448536 * sd) - 1)).toBeLessThan(bound);
      expect(Math.abs(s.massErrorIons_ppm.median!)).toBeLessThan(bound * sd);
      expect(s.massError_ppm.sd!).toBeGreaterThan(0.97 * s.linear.sd_ppm!);
    }
  });
});
