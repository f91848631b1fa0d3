import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText, validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';
import { Fate } from '../../src/physics/fates';
import { ATOMIC_MASS_CONSTANT_KG, ELEMENTARY_CHARGE_C } from '../../src/physics/constants';
import { lifetimeDecayTime_s, releaseVelocity } from '../../src/physics/fragments/decaySampling';
import { SeededRandom } from '../../src/ions/random';
import { traceSingleIon } from '../../src/simulation/singleIon';

type Doc = Record<string, any>;

function demoDoc(name = 'demo-fragments-reflectron.json'): Doc {
  return JSON.parse(readFileSync(`presets/${name}`, 'utf8')) as Doc;
}

/** Every ion alike: start at rest on the repeller, static extraction, no transverse motion, no acquisition. */
function monoenergetic(doc: Doc, decay: Doc, ions = 2000): Preset {
  doc.source.extraction = { mode: 'static' };
  delete doc.source.repeller.hold_V;
  doc.ions.startVelocity = { kind: 'normal', mean_m_per_s: 0, sd_m_per_s: 0 };
  delete doc.ions.transverse;
  delete doc.acquisition;
  delete doc.analysis;
  delete doc.detector.activeDiameter_mm;
  doc.ions.species = [{ ...doc.ions.species[0], decay }];
  doc.run = { ions, seed: 3 };
  const r = parsePresetText(JSON.stringify(doc));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

/** Mirror-entry time of the (identical) intact precursors: arrival minus the return drift and the mirror. */
function tMirrorEntry(run: ReturnType<typeof simulate>): number {
  const v = run.trace.finalSpeed_m_per_s[0];
  const E = 29222 / 0.35;
  const tMirror = (2 * run.report.species[0].mz * ATOMIC_MASS_CONSTANT_KG * v) / (ELEMENTARY_CHARGE_C * E);
  return run.trace.flightTime_s[0] - 0.5 / v - tMirror;
}

describe('fragment ions through the whole run', () => {
  it('single-stage reflectron: post-source-decay arrival and apparent m/z follow the closed form (derived here; 1e-9)', () => {
    // Formed in the field-free drift with the precursor's speed v, the fragment has the energy fraction m_f/m_p,
    // penetrates m_f/m_p as deep and spends 2·m_f·v/(q·E) in the mirror (precursor: 2·m_p·v/(q·E)); all else is shared.
    const fragmentMz = 600;
    const preset = monoenergetic(demoDoc(), { law: { kind: 'fraction', fraction: 0.5, region: 'drift' }, channels: [{ mz: fragmentMz, charge: 1, branching: 1 }] }, 800);
    const run = simulate(preset);
    const species = run.report.species[0];
    const decayed = species.fates.decayed;
    expect(decayed).toBeGreaterThan(300);
    expect(species.detected).toBe(800 - decayed);
    const channel = species.fragments![0];
    const fragment = run.fragments!.trace.products.find((p) => p.role === 'fragment')!;
    const mzP = species.mz;
    // The precursor's would-be arrival, from the same preset without decay.
    const intact = simulate({ ...preset, ions: { ...preset.ions, species: preset.ions.species.map(({ decay: _, ...s }) => s) } });
    const tP = intact.trace.flightTime_s[0];
    const v = intact.trace.finalSpeed_m_per_s[0];
    const E = 29222 / 0.35;
    const tMirror = (mz: number) => (2 * mz * ATOMIC_MASS_CONSTANT_KG * v) / (ELEMENTARY_CHARGE_C * E);
    const expected = tP - tMirror(mzP) + tMirror(fragmentMz);
    for (let i = 0; i < fragment.trace.fate.length; i++) {
      expect(fragment.trace.fate[i]).toBe(Fate.DETECTED);
      expect(rel(fragment.trace.flightTime_s[i], expected)).toBeLessThan(1e-9);
    }
    // One-point calibration on the precursor (t ∝ sqrt(m/z)): apparent m/z = m_p·(t_f/t_p)².
    expect(run.fragments!.report[0].apparentMzFrom).toBe('precursor peak');
    expect(rel(channel.fragment.apparentMz!, mzP * (expected / tP) ** 2)).toBeLessThan(1e-9);
    expect(channel.fragment.apparentMz!).toBeGreaterThan(fragmentMz); // unfocused, apparently heavier: the PSD signature
    expect(channel.complement.role).toBe('neutral');
    expect(channel.complement.fates.detectedBehindMirror).toBe(decayed); // the demo has a detector behind the mirror
    // The neutral keeps the precursor's speed v from the decay on: straight to the plane 400 mm behind the entrance grid.
    const neutral = run.fragments!.trace.products.find((p) => p.role === 'complement')!;
    for (let i = 0; i < neutral.trace.fate.length; i++) {
      const tDecay = neutral.decayTime_s[i];
      const zDecay = 0.7 - (tMirrorEntry(intact) - tDecay) * v; // position in the drift at the decay
      expect(rel(neutral.trace.finalSpeed_m_per_s[i], v)).toBeLessThan(1e-14);
      expect(rel(neutral.trace.flightTime_s[i], tDecay + (0.7 - zDecay + 0.4) / v)).toBeLessThan(1e-9);
    }
  });

  it('linear mode: fragments and neutrals formed in the drift arrive with their precursor (textbook; 1e-12)', () => {
    const preset = monoenergetic(demoDoc('demo-fragments-linear.json'), {
      law: { kind: 'fraction', fraction: 0.5, region: 'drift' },
      channels: [{ neutralLoss: 'H2O', branching: 0.5 }, { mz: 500, charge: 1, branching: 0.5 }],
    });
    const run = simulate(preset);
    let tP = NaN;
    for (let i = 0; i < run.trace.fate.length; i++) if (run.trace.fate[i] === Fate.DETECTED) tP = run.trace.flightTime_s[i];
    expect(Number.isFinite(tP)).toBe(true);
    let n = 0;
    for (const p of run.fragments!.trace.products) {
      for (let i = 0; i < p.trace.fate.length; i++) {
        expect(p.trace.fate[i]).toBe(Fate.DETECTED);
        expect(rel(p.trace.flightTime_s[i], tP)).toBeLessThan(1e-12);
        n++;
      }
    }
    expect(n).toBe(2 * run.report.species[0].fates.decayed);
    expect(run.report.species[0].fates.decayed).toBeGreaterThan(800);
  });

  it('linear mode, decays in the accelerating source field: arrivals lie between the fragment ion\'s own and the precursor\'s (modelled, not dropped)', () => {
    const preset = monoenergetic(demoDoc('demo-fragments-linear.json'), { law: { kind: 'fraction', fraction: 1, region: 'source' }, channels: [{ mz: 500, charge: 1, branching: 1 }] }, 3000);
    const run = simulate(preset);
    const mzP = run.report.species[0].mz;
    const tP = traceSingleIon(run.compiled.model, mzP, 0, 0).t;
    const tOwn = traceSingleIon(run.compiled.model, 500, 0, 0).t;
    const frag = run.fragments!.trace.products[0].trace;
    expect(frag.fate.length).toBe(3000);
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = 0; i < frag.fate.length; i++) {
      expect(frag.fate[i]).toBe(Fate.DETECTED);
      lo = Math.min(lo, frag.flightTime_s[i]);
      hi = Math.max(hi, frag.flightTime_s[i]);
    }
    expect(lo).toBeGreaterThan(tOwn * (1 - 1e-9));
    expect(hi).toBeLessThan(tP);
    expect(hi - lo).toBeGreaterThan(0.5 * (tP - tOwn)); // spread across the gap, not bunched at one end
  });

  it('a lifetime law: decay times are exponential (Kolmogorov–Smirnov at 10^5 draws, 1 % level: D < 1.63/sqrt(n))', () => {
    const rng = new SeededRandom(11);
    const tau = 7e-6;
    const n = 100_000;
    const t = Float64Array.from({ length: n }, () => lifetimeDecayTime_s(tau, rng.uniform())).sort();
    let d = 0;
    for (let i = 0; i < n; i++) {
      const F = 1 - Math.exp(-t[i] / tau);
      d = Math.max(d, Math.abs(F - i / n), Math.abs(F - (i + 1) / n));
    }
    expect(d).toBeLessThan(1.63 / Math.sqrt(n));
    // And a distribution it must reject: τ 2 % off.
    let dWrong = 0;
    for (let i = 0; i < n; i++) dWrong = Math.max(dWrong, Math.abs(1 - Math.exp(-t[i] / (1.02 * tau)) - i / n));
    expect(dWrong).toBeGreaterThan(1.63 / Math.sqrt(n));
  });

  it('decay points of a lifetime law in the run follow the exponential truncated at the arrival (KS, 10^5 ions)', () => {
    const tau = 20e-6;
    const preset = monoenergetic(demoDoc('demo-fragments-linear.json'), { law: { kind: 'lifetime', lifetime_us: 20 }, channels: [{ mz: 500, charge: 1, branching: 1 }] }, 100_000);
    const run = simulate(preset);
    const arrival = run.fragments!.trace.products[0];
    const times = Float64Array.from(arrival.decayTime_s).sort();
    let T = 0;
    for (let i = 0; i < run.trace.fate.length; i++) if (run.trace.fate[i] === Fate.DETECTED) T = run.trace.flightTime_s[i];
    const n = times.length;
    expect(rel(n / 100_000, 1 - Math.exp(-T / tau))).toBeLessThan(0.02);
    const norm = 1 - Math.exp(-T / tau);
    let d = 0;
    for (let i = 0; i < n; i++) {
      const F = (1 - Math.exp(-times[i] / tau)) / norm;
      d = Math.max(d, Math.abs(F - i / n), Math.abs(F - (i + 1) / n));
    }
    expect(d).toBeLessThan(1.63 / Math.sqrt(n));
  });

  it('kinetic-energy release conserves momentum and energy and is isotropic', () => {
    const out = new Float64Array(3);
    const m1 = 700 * ATOMIC_MASS_CONSTANT_KG;
    const m2 = 300 * ATOMIC_MASS_CONSTANT_KG;
    const T = 0.05 * ELEMENTARY_CHARGE_C;
    const rng = new SeededRandom(5);
    let cos2 = 0;
    let cos = 0;
    const n = 20_000;
    for (let k = 0; k < n; k++) {
      releaseVelocity(out, T, m1, m2, rng.uniform(), rng.uniform());
      const u1 = Math.hypot(out[0], out[1], out[2]);
      const u2 = (m1 / m2) * u1; // product 2 takes −(m1/m2)·u1
      expect(rel(0.5 * m1 * u1 * u1 + 0.5 * m2 * u2 * u2, T)).toBeLessThan(1e-12);
      cos += out[0] / u1;
      cos2 += (out[0] / u1) ** 2;
    }
    expect(Math.abs(cos / n)).toBeLessThan(4 / Math.sqrt(3 * n)); // sd of cos θ is 1/sqrt(3)
    expect(Math.abs(cos2 / n - 1 / 3)).toBeLessThan(0.01);
  });

  it('KER broadening in linear mode: arrival sd = L·u1/(3·v²) for decays uniform along a drift of length L (derived; 3 %)', () => {
    // Δt ≈ −ℓ·u1·cos θ/v² for a decay ℓ before the detector; ℓ uniform on [0, L], cos θ uniform: sd = L·u1/(3v²).
    const preset = monoenergetic(demoDoc('demo-fragments-linear.json'), {
      law: { kind: 'fraction', fraction: 1, region: 'drift' },
      channels: [{ mz: 700, charge: 1, branching: 1 }],
      kineticEnergyRelease_meV: 200,
    }, 20_000);
    const run = simulate(preset);
    const frag = run.fragments!.trace.products[0].trace;
    const mzP = run.report.species[0].mz;
    const m1 = 700 * ATOMIC_MASS_CONSTANT_KG;
    const m2 = (mzP - 700) * ATOMIC_MASS_CONSTANT_KG;
    const u1 = Math.sqrt((2 * 0.2 * ELEMENTARY_CHARGE_C * m2) / (m1 * (m1 + m2)));
    const intact = simulate({ ...preset, ions: { ...preset.ions, species: preset.ions.species.map(({ decay: _, ...s }) => s) } });
    const v = intact.trace.finalSpeed_m_per_s[0];
    let mean = 0;
    for (const t of frag.flightTime_s) mean += t / frag.flightTime_s.length;
    let sq = 0;
    for (const t of frag.flightTime_s) sq += (t - mean) ** 2;
    const sd = Math.sqrt(sq / (frag.flightTime_s.length - 1));
    expect(rel(sd, (1.1 * u1) / (3 * v * v))).toBeLessThan(0.03);
  });

  it('every product has a fate, and the decayed precursors are accounted for', () => {
    const preset = parsePresetText(readFileSync('presets/demo-fragments-reflectron.json', 'utf8'));
    if (!preset.ok) throw new Error('demo');
    const run = simulate({ ...preset.value, run: { ...preset.value.run, ions: 4000 } }, { withSpectrum: true });
    for (const p of run.fragments!.trace.products) for (const f of p.trace.fate) expect(f).not.toBe(Fate.UNSET);
    for (const s of run.report.species) {
      if (!s.fragments) continue;
      const decays = s.fragments.reduce((a, c) => a + c.decays, 0);
      expect(decays).toBe(s.fates.decayed);
      for (const c of s.fragments) {
        const total = Object.values(c.fragment.fates).reduce((a, b) => a + b, 0);
        expect(total).toBe(c.decays);
      }
    }
    expect(run.report.species[2].fragments).toBeUndefined(); // the stable calibrant
    // The spectrum records the fragment ions too: its signal is that of every ion reaching the detector.
    let precursors = 0;
    for (let i = 0; i < run.trace.fate.length; i++) if (run.trace.fate[i] === Fate.DETECTED) precursors += run.trace.weight[i];
    let products = 0;
    for (const p of run.fragments!.trace.products) for (let i = 0; i < p.trace.fate.length; i++) if (p.trace.fate[i] === Fate.DETECTED) products += p.trace.weight[i];
    const recorded = run.analysis.spectrum!.intensity.reduce((a, b) => a + b, 0);
    expect(products).toBeGreaterThan(100);
    expect(rel(recorded, precursors + products)).toBeLessThan(1e-3);
  });
});

describe('decay section validation', () => {
  const bad = (edit: (d: Doc) => void): string[] => {
    const d = demoDoc();
    edit(d);
    const r = validatePreset(d);
    return r.ok ? [] : r.issues.map((i) => `${i.path}: ${i.message}`);
  };
  it('names the field and the rule in one line', () => {
    expect(bad((d) => (d.ions.species[0].decay.channels[0].branching = 0.1))).toEqual([expect.stringMatching(/^ions\.species\[0\]\.decay\.channels: branching fractions must sum to 1/)]);
    expect(bad((d) => (d.ions.species[0].decay.channels[2].mz = 5000))).toEqual([expect.stringMatching(/^ions\.species\[0\]\.decay\.channels\[2\]\.mz: gives a fragment of 5000 u/)]);
    expect(bad((d) => (d.ions.species[0].decay.channels[0].neutralLoss = 'Xe'))).toEqual([expect.stringMatching(/channels\[0\]\.neutralLoss: needs more Xe than the precursor ion/)]);
    expect(bad((d) => (d.ions.species[0].decay.law = { kind: 'lifetime', lifetime_us: 0 }))).toEqual([expect.stringMatching(/law\.lifetime_us: must be a number > 0/)]);
    expect(bad((d) => (d.ions.species[0].decay.channels[0].mz = 100))).toEqual([expect.stringMatching(/channels\[0\]\.mz: give either mz/)]);
    expect(bad((d) => (d.detector.behindMirror.distance_mm = 200))).toEqual([expect.stringMatching(/^detector\.behindMirror\.distance_mm: must be > the mirror depth \(350 mm\)/)]);
    expect(
      bad((d) => {
        d.mirror = { type: 'none' };
        delete d.detector.behindMirror;
        d.ions.species[1].decay.law.region = 'mirror';
      }),
    ).toEqual([expect.stringMatching(/species\[1\]\.decay\.law\.region: "mirror" needs a mirror/)]);
    expect(bad(() => {})).toEqual([]);
  });
});
