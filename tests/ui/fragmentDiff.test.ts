/**
 * Compare's fragment rows (src/ui/compare/fragmentDiff.ts) on the two fragment demos: the same
 * analyser in reflectron mode (A) and linear mode (B). In linear mode a fragment formed in the
 * field-free drift keeps its precursor's velocity over the same path, so it arrives with the
 * precursor (t_f/t_p = 1; common practice, no source); in a reflectron the lighter fragment turns
 * earlier, t_f/t_p < 1, and shows at an apparent m/z between its true m/z and the precursor's.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { simulate } from '../../src/simulation/run';
import { diffFragments } from '../../src/ui/compare/fragmentDiff';

function report(name: string) {
  const r = parsePresetText(readFileSync(`presets/${name}`, 'utf8'));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return simulate(r.value, { ions: 6000, seed: 7 }).report;
}

describe('Compare: decay products of the reflectron and linear demos', () => {
  const a = report('demo-fragments-reflectron.json');
  const b = report('demo-fragments-linear.json');
  const rows = diffFragments(a, b);

  it('matches every product of both runs, one row each', () => {
    const products = a.species.reduce((n, s) => n + 2 * (s.fragments?.length ?? 0), 0);
    expect(rows.length).toBe(products);
    for (const r of rows) {
      expect(r.a).not.toBeNull();
      expect(r.b).not.toBeNull();
    }
  });

  it('shows the drift-formed fragment arriving with its precursor in linear mode and early, at its own apparent m/z, in the reflectron', () => {
    const r = rows.find((x) => x.role === 'fragment' && x.mz !== null && Math.abs(x.mz - 601.312) < 1e-3)!;
    expect(Math.abs(r.b!.relativeToPrecursor! - 1)).toBeLessThan(2e-4);
    expect(r.a!.relativeToPrecursor!).toBeLessThan(0.9);
    const precursorMz = a.species.find((s) => s.fragments?.some((c) => c.fragment.mz === r.mz))!.mz;
    expect(r.a!.apparentMz!).toBeGreaterThan(r.mz!);
    expect(r.a!.apparentMz!).toBeLessThan(precursorMz);
    // In linear mode the fragment's apparent m/z is its precursor's (it sits on the precursor peak).
    expect(Math.abs(r.b!.apparentMz! - precursorMz) / precursorMz).toBeLessThan(5e-4);
  });

  it('finds the reflectron neutrals on the detector behind the mirror', () => {
    const neutrals = rows.filter((x) => x.role === 'neutral');
    expect(neutrals.length).toBeGreaterThan(0);
    expect(neutrals.some((x) => x.a!.behindMirror)).toBe(true);
    expect(neutrals.every((x) => !x.b!.behindMirror)).toBe(true);
  });

  it('has no rows without decays', () => {
    const plain = { ...a, species: a.species.map((s) => ({ ...s, fragments: undefined })) };
    expect(diffFragments(plain, plain)).toEqual([]);
  });
});
