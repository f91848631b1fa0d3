import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../../src/presets/load';
import type { Preset } from '../../../src/presets/schema';
import { simulate } from '../../../src/simulation/run';

/**
 * A precursor flown to its decay point through a polynomial-profile mirror is integrated; the
 * integrator starts each solve from its previous first step. That memory must belong to one run:
 * a run's numbers may not depend on what the process traced before it (a worker serves many runs).
 * Self-consistency check, no outside source: the same preset and seed give the same bits.
 */
function fragmentsThroughPolynomialMirror(): Preset {
  const doc = JSON.parse(readFileSync('presets/demo-fragments-reflectron.json', 'utf8')) as Record<string, unknown>;
  doc.mirror = { type: 'profile', depth_mm: 350, profile: { kind: 'polynomial', coefficients_V: [26000, 3000] }, returnLength_mm: 500 };
  doc.run = { ...(doc.run as object), ions: 3000, seed: 3 };
  const r = parsePresetText(JSON.stringify(doc));
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.value;
}

function productTimes(preset: Preset): Float64Array[] {
  const result = simulate(preset, { analysis: 'peaks' });
  const products = result.fragments?.trace.products ?? [];
  return products.flatMap((p) => [Float64Array.from(p.trace.flightTime_s), Float64Array.from(p.decayTime_s)]);
}

describe('fragment flights through an integrated mirror', () => {
  it('give the same bits whatever the process traced before', () => {
    const preset = fragmentsThroughPolynomialMirror();
    const first = productTimes(preset);
    expect(first.reduce((n, a) => n + a.length, 0)).toBeGreaterThan(100);
    // Another run in between, with other ions, leaves the integrator's memory elsewhere.
    simulate({ ...preset, run: { ...preset.run, ions: 500, seed: 11 } }, { analysis: 'peaks' });
    const second = productTimes(preset);
    expect(second.length).toBe(first.length);
    let changed = 0;
    for (let b = 0; b < first.length; b++) for (let i = 0; i < first[b].length; i++) if (!Object.is(first[b][i], second[b][i])) changed++;
    expect(changed).toBe(0);
  });
});
