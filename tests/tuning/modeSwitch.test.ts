/**
 * Compare's switch to reflectron mode: the mirror starts at the Mamyrin et al. (1973) second-order
 * conditions, then the two mirror potentials and the delay are tuned together; the tuned reflectron
 * must beat both the linear setup it came from (least spectrum R over the species) and the untuned
 * switch (the template's potentials with the linear delay). That a tuned reflectron resolves better
 * than a linear analyser of the same source is common practice, no source.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';
import { applyReflectronTune, reflectronTuneRequest, switchMode } from '../../src/tuning/modeSwitch';
import { inProcessEngine } from './fixtures';

const load = (name: string): Preset => {
  const r = parsePresetText(readFileSync(`presets/${name}.json`, 'utf8'));
  if (!r.ok) throw new Error(name);
  return r.value;
};

describe('switching the linear demo to reflectron mode', () => {
  const linear = load('demo-linear-delayed');
  const sw = switchMode(linear, load('demo-reflectron-dual'));

  it('starts from the second-order mirror conditions and marks the untuned variant', () => {
    expect(sw.tuned).toBe(true);
    expect(sw.preset.mirror.type).toBe('dual');
    expect(sw.changes.join('\n')).toMatch(/second-order dual-stage conditions/);
    expect(sw.untuned.name).toContain('untuned');
  });

  it('the tuned reflectron beats the linear setup and the untuned switch, and says what changed', async () => {
    const request = reflectronTuneRequest(sw, { ions: 1500, restarts: 0 })!;
    const result = await inProcessEngine(2).optimise(request);
    const tuned = applyReflectronTune(linear, sw, request, result);
    expect(tuned.changes.join('\n')).toMatch(/source\.extraction\.delay_ns: 228 → [\d.]+ ns/);
    expect(tuned.changes.join('\n')).toMatch(/mirror\.backPlate_V: 22950 → [\d.]+ V/);
    const least = (p: Preset): number => Math.min(...simulate(p, { ions: 8000 }).report.species.map((s) => s.peak!.resolvingPower!));
    const [lin, reflectron, untuned] = [least(linear), least(tuned.preset), least(sw.untuned)];
    expect(reflectron).toBeGreaterThan(lin);
    expect(reflectron).toBeGreaterThan(untuned);
  }, 120_000);
});
