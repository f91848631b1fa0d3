/**
 * The decay products drawn in the 3D view (src/simulation/fragmentScene.ts): finite, inside the
 * analyser, and a recorded product's path ends where it was recorded — a reflectron fragment ion on
 * the detector beside the source, a neutral on the detector behind the mirror. Geometry of the
 * scene's own layout (src/simulation/scene/layout.ts); no external source needed for a drawing.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { runRequest } from '../../src/simulation/runOutput';
import { FragmentPathKind } from '../../src/simulation/fragmentSceneData';

function demo(name: string) {
  const r = parsePresetText(readFileSync(`presets/${name}`, 'utf8'));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return { preset: r.value, out: runRequest({ preset: r.value, ions: 2000, seed: 4, scene: {} }) };
}

describe('decay products in the 3D view', () => {
  it('draws reflectron fragment ions onto the detector and neutrals through the mirror to the detector behind it', () => {
    const { preset, out } = demo('demo-fragments-reflectron.json');
    const f = out.fragmentScene!;
    const layout = out.scene!.layout;
    expect(f.vertices).toBeGreaterThan(0);
    expect(f.vertices % 2).toBe(0);
    for (let i = 0; i < 3 * f.vertices; i++) expect(Number.isFinite(f.positions[i])).toBe(true);
    let ionsOnDetector = 0;
    let neutralsBehind = 0;
    const behind_mm = layout.mirrorEntrance_mm + preset.detector.behindMirror!.distance_mm;
    for (let v = 0; v < f.vertices; v++) {
      const x = f.positions[3 * v];
      const y = f.positions[3 * v + 1];
      if (f.kind[v] === FragmentPathKind.FRAGMENT_ION && f.recorded[v] && Math.abs(x - layout.detector.x_mm) < 0.5 && Math.abs(y - layout.detector.y_mm) < layout.detector.radius_mm) ionsOnDetector++;
      if (f.kind[v] === FragmentPathKind.NEUTRAL && f.recorded[v] && Math.abs(x - behind_mm) < 0.5) neutralsBehind++;
      // Nothing drawn behind the repeller or past the detector behind the mirror.
      expect(x).toBeGreaterThan(-1);
      expect(x).toBeLessThan(behind_mm + 1);
    }
    expect(ionsOnDetector).toBeGreaterThan(0);
    expect(neutralsBehind).toBeGreaterThan(0);
  });

  it('in linear mode draws products along the axis to the detector, and nothing without decays', () => {
    const { preset, out } = demo('demo-fragments-linear.json');
    const f = out.fragmentScene!;
    const layout = out.scene!.layout;
    let reached = 0;
    for (let v = 0; v < f.vertices; v++) if (f.recorded[v] && Math.abs(f.positions[3 * v] - layout.detector.x_mm) < 0.5) reached++;
    expect(reached).toBeGreaterThan(0);
    const doc = JSON.parse(JSON.stringify(preset));
    for (const s of doc.ions.species) delete s.decay;
    expect(runRequest({ preset: doc, ions: 300, seed: 4, scene: {} }).fragmentScene).toBeUndefined();
  });
});
