/**
 * Golden before/after check of the engine: seeded runs of every shipped preset and of engine
 * variants (tests/regression/presetGoldenRuns.ts), reduced to sha256 digests of the traced arrays
 * (flight time, fate, final speed, weight, detector-plane position), the axial paths drawn for the
 * first ions and single-ion traces, compared bit for bit with tests/regression/presetGolden.fixture.json,
 * which was written from the engine before the region-kernel refactor. Any changed number fails.
 * Rewrite the fixture (`npm run golden`) only when a number is meant to change, and say why in the commit.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { GOLDEN_FIXTURE_URL, goldenCases, shippedPresetNames, type GoldenFixture } from './presetGoldenRuns';

const fixture = JSON.parse(readFileSync(GOLDEN_FIXTURE_URL, 'utf8')) as GoldenFixture;
const cases = goldenCases();

describe('seeded runs match the golden fixture bit for bit', () => {
  it('covers every shipped preset and nothing stale', () => {
    for (const file of shippedPresetNames()) expect(Object.keys(cases)).toContain(`${file} default`);
    expect(Object.keys(cases).sort()).toEqual(Object.keys(fixture).sort());
  });
  for (const [name, run] of Object.entries(cases)) {
    it(name, () => {
      expect(run()).toEqual(fixture[name]);
    });
  }
});
