/**
 * Fragment peaks in the app's spectrum (src/ui/charts/fragmentPeaks.ts via buildRunView): the run's
 * decay products reach the page in RunOutput.products and become dashed series of their own.
 * Physics checked: in a linear analyser a fragment formed in the field-free drift keeps its
 * precursor's velocity and so arrives with it (t = L/v for both; common practice, no source); in a
 * reflectron it turns earlier and shows at an apparent m/z below its precursor's.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { Fate } from '../../src/physics/fates';
import { parsePresetText } from '../../src/presets/load';
import { runOutputTransferables, runRequest } from '../../src/simulation/runOutput';
import { buildRunView } from '../../src/ui/results/runView';

function demo(name: string, ions: number) {
  const r = parsePresetText(readFileSync(`presets/${name}`, 'utf8'));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return runRequest({ preset: r.value, ions, seed: 5 });
}

function median(values: number[]): number {
  const v = [...values].sort((a, b) => a - b);
  return v[v.length >> 1];
}

describe('fragment series in the page spectrum', () => {
  const refl = demo('demo-fragments-reflectron.json', 6000);
  const colours = refl.report.species.map(() => '#8fd0ff');

  it('carries every product ion, transferably, with a channel row each', () => {
    const p = refl.products!;
    expect(p).toBeDefined();
    const decayed = refl.report.fates.decayed;
    // Two products per decay.
    expect(p.fate.length).toBe(2 * decayed);
    for (let i = 0; i < p.fate.length; i++) {
      expect(p.channel[i]).toBeLessThan(p.channels.length);
      expect(p.fate[i]).not.toBe(Fate.UNSET);
      expect(p.decayTime_s[i]).toBeLessThanOrEqual(p.flightTime_s[i]);
    }
    const buffers = runOutputTransferables(refl);
    for (const a of [p.flightTime_s, p.fate, p.channel, p.detectorX_m, p.detectorY_m, p.decayTime_s]) expect(buffers).toContain(a.buffer);
  });

  it('adds dashed product series after the precursors, holding exactly the recorded product ions', () => {
    const view = buildRunView(refl, colours);
    const s = view.spectrum;
    const species = refl.report.species.length;
    expect(s.labels.slice(species)).toEqual([expect.stringMatching(/^fragment ions/), expect.stringMatching(/^behind-mirror detector/), expect.stringMatching(/^neutrals/)]);
    expect(s.dashed!.slice(0, species).every((d) => !d)).toBe(true);
    expect(s.dashed!.slice(species).every((d) => d)).toBe(true);
    const p = refl.products!;
    let recorded = 0;
    for (const f of p.fate) if (f === Fate.DETECTED || f === Fate.DETECTED_BEHIND_MIRROR) recorded++;
    expect(s.speciesStart[s.labels.length] - s.speciesStart[species]).toBe(recorded);
    expect(s.peaks.length).toBe(s.labels.length);
    // The default view holds every precursor and the backbone fragment, but not the slowest neutrals' tail.
    const [lo, hi] = s.defaultExtent!.time!;
    for (const sp of refl.report.species) expect(sp.flightTime_ns! / 1000).toBeLessThan(hi);
    expect(lo).toBeLessThan(20);
    expect(s.labels.some((l) => /beyond the view/.test(l))).toBe(true);
  });

  it('labels the reflectron backbone fragment with its true m/z and its own apparent m/z, where its ions lie on the page axis', () => {
    const view = buildRunView(refl, colours);
    const s = view.spectrum;
    const row = refl.products!.channels.find((c) => c.role === 'fragment' && c.mz !== null && Math.abs(c.mz - 601.312) < 1e-3)!;
    const mark = s.marks!.find((m) => m.text.startsWith('m/z 601.3'))!;
    expect(mark.text).toBe(`m/z 601.3 → apparent ${row.apparentMz!.toFixed(1)}`);
    // The page's per-ion m/z (its calibration) and the report's apparent m/z (peak centroid) agree.
    expect(Math.abs(mark.mz! - row.apparentMz!) / row.apparentMz!).toBeLessThan(0.01);
    // A fragment that turns early reads heavier than it is, but lighter than its precursor (m/z 1336.7).
    expect(mark.mz!).toBeGreaterThan(601.312 * 1.05);
    expect(mark.mz!).toBeLessThan(1336.7);
  });

  it('in linear mode puts the drift-formed fragment on the precursor peak', () => {
    const lin = demo('demo-fragments-linear.json', 6000);
    const view = buildRunView(lin, lin.report.species.map(() => '#8fd0ff'));
    const s = view.spectrum;
    const precursor = lin.report.species.findIndex((sp) => Math.abs(sp.mz - 1336.7) < 0.1);
    const tP = lin.report.species[precursor].flightTime_ns! / 1000;
    const mark = s.marks!.find((m) => m.text.startsWith('m/z 601.3'))!;
    // Same velocity over the same drift: within the precursor peak's own width (a few ns in 40 µs, plus the release).
    expect(Math.abs(mark.time_us! - tP) / tP).toBeLessThan(2e-4);
    // Neutrals formed in the source during the extraction delay keep their thermal speed: a slow tail, counted in the label.
    expect(s.labels[s.labels.length - 1]).toMatch(/^neutrals/);
    const arrivals = Array.from(s.time_us.subarray(s.speciesStart[s.labels.length - 1], s.speciesStart[s.labels.length]));
    expect(Math.abs(median(arrivals) - tP) / tP).toBeLessThan(0.2);
  });

  it('leaves a run without decays as it was', () => {
    const r = parsePresetText(readFileSync('presets/demo-fragments-linear.json', 'utf8'));
    if (!r.ok) throw new Error('preset');
    const doc = JSON.parse(JSON.stringify(r.value));
    for (const sp of doc.ions.species) delete sp.decay;
    const out = runRequest({ preset: doc, ions: 600, seed: 2 });
    expect(out.products).toBeUndefined();
    const view = buildRunView(out, out.report.species.map(() => '#fff'));
    expect(view.spectrum.labels.length).toBe(out.report.species.length);
    expect(view.spectrum.dashed).toBeUndefined();
  });
});
