import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';

type Doc = Record<string, any>;

function demo(name: string, edit: (doc: Doc) => void = () => {}): Preset {
  const doc = JSON.parse(readFileSync(`presets/${name}`, 'utf8')) as Doc;
  doc.run = { ...doc.run, ions: 4000 };
  edit(doc);
  const r = parsePresetText(JSON.stringify(doc));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

describe('fragment peaks in the simulated spectrum (FWHM and R per channel)', () => {
  it('reflectron demo: every charged fragment of a lifetime law (decays all along the path) gets a spectrum FWHM and R', () => {
    const preset = demo('demo-fragments-reflectron.json');
    const run = simulate(preset);
    const species = run.report.species[0];
    const pulse_ns = preset.acquisition!.pulseWidth_ns;
    for (const c of species.fragments!) {
      const p = c.fragment;
      expect(p.peak, c.label).not.toBeNull();
      expect(p.peak!.fwhm_ns, c.label).not.toBeNull();
      // R = t/(2Δt) at FWHM (IUPAC 2013, m/Δm with m ∝ t²).
      expect(p.peak!.resolvingPower).toBeCloseTo(p.peak!.centroid_ns / (2 * p.peak!.fwhm_ns!), 6);
      // The recorded peak is the ions' own width broadened by the detector pulse: not narrower than the pulse or
      // (less shot noise) the ions' robust width. The ideal figure is gaussian-equivalent (76 % interval), the
      // out-of-focus fragment peak is skewed on a continuum of fragments formed in the mirror, so its true
      // half-maximum width may be up to a few times wider (common practice, no source).
      expect(p.peak!.fwhm_ns!).toBeGreaterThan(Math.max(0.8 * p.fwhm_ns!, pulse_ns));
      expect(p.peak!.fwhm_ns!).toBeLessThan(3 * (p.fwhm_ns! + pulse_ns));
      // Formed in the field-free drift, a fragment turns earlier: its peak is below the precursor's m/z.
      expect(p.apparentMz!).toBeLessThan(species.mz - 1);
    }
  });

  it('reflectron: products formed after the mirror land on the precursor peak and are reported as unresolved from it', () => {
    const run = simulate(demo('demo-fragments-reflectron.json', (doc) => {
      doc.ions.species[0].decay = { law: { kind: 'fraction', fraction: 0.3, region: 'returnDrift' }, channels: [{ mz: 714.381, charge: 1, branching: 1 }] };
    }));
    const p = run.report.species[0].fragments![0].fragment;
    expect(p.detected).toBeGreaterThan(0);
    expect(p.peak).toBeNull();
    expect(p.peakNote).toMatch(/unresolved from the precursor/);
  });
});
