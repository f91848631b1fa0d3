/**
 * What a tune reports and recommends: the preset's own settings beside the start and the result, the
 * figure the optimiser minimised (recomputed here from an independent run of the recommended preset),
 * and never a setting worse than the preset's unless asked for.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { simulate } from '../../src/simulation/run';
import { INFEASIBLE_COST, resolvingPowerBy, resolveObjective } from '../../src/tuning/objective';
import { chooseRecommendation, figureOfCost } from '../../src/tuning/tuneVerdict';
import { inProcessEngine } from './fixtures';

function demo(file: string): Preset {
  const r = parsePresetText(readFileSync(new URL(`../../presets/${file}`, import.meta.url), 'utf8'));
  if (!r.ok) throw new Error('demo preset invalid');
  return r.value;
}

describe('the recommendation rule', () => {
  it('keeps the preset on a tie or when it scores better, unless asked; then says the result is worse', () => {
    expect(chooseRecommendation(-100, -120)).toEqual({ keepPreset: false, worseThanPreset: false });
    expect(chooseRecommendation(-120, -100)).toEqual({ keepPreset: true, worseThanPreset: false });
    expect(chooseRecommendation(-100, -100)).toEqual({ keepPreset: true, worseThanPreset: false });
    expect(chooseRecommendation(-120, -100, true)).toEqual({ keepPreset: false, worseThanPreset: true });
    expect(chooseRecommendation(-100, -100, true)).toEqual({ keepPreset: false, worseThanPreset: false });
    // An infeasible preset (transmission below the constraint) never beats a feasible result.
    expect(chooseRecommendation(INFEASIBLE_COST * 1.2, -50)).toEqual({ keepPreset: false, worseThanPreset: false });
  });
  it('the figure is the cost read back: R for maximised objectives, the width for min-fwhm, null when infeasible', () => {
    const preset = demo('demo-linear-delayed.json');
    const r = resolveObjective({ name: 'max-r-at-mz', targetMz: 1336.700811018173 }, preset);
    const w = resolveObjective({ name: 'min-fwhm', targetMz: 1336.700811018173 }, preset);
    expect(figureOfCost(r, -5000)).toBe(5000);
    expect(figureOfCost(w, 1.5)).toBe(1.5);
    expect(figureOfCost(r, INFEASIBLE_COST * 2)).toBeNull();
  });
});

describe('a tune against the preset itself', () => {
  const preset = demo('demo-linear-delayed.json');
  const ions = 600;
  const objective = { name: 'max-r-at-mz' as const, targetMz: 1336.700811018173 };

  it('keeps the preset when the bounds hold nothing better, and reports the same figure as an independent run', async () => {
    // The demo's delay (228 ns) lies outside 100–150 ns, where the time-lag focus is not.
    const r = await inProcessEngine(2).optimise({ preset, parameters: [{ path: 'source.extraction.delay_ns', min: 100, max: 150 }], objective, ions, criterion: 'ideal' });
    expect(r.recommendation).toBe('preset');
    expect(r.best).toEqual([228]);
    expect(r.tunedPreset).toEqual(preset);
    expect(r.objective).toBe(r.presetObjective);
    expect(r.searchObjective!).toBeLessThan(r.presetObjective!);
    expect(r.searchBest![0]).toBeGreaterThanOrEqual(100);
    expect(r.searchBest![0]).toBeLessThanOrEqual(150);
    expect(r.flatness[0].low).toBeLessThan(228);
    expect(r.flatness[0].high).toBeGreaterThan(228);
    // The reported figure is R = t/(2·2.355·sd) (the optimised width), recomputed from a fresh run.
    const own = simulate(preset, { ions, seed: preset.run.seed, analysis: false }).report.species[1];
    expect(r.measure).toBe('sd');
    expect(r.presetObjective).toBe(resolvingPowerBy(own, 'sd'));
    expect(r.presetSpecies?.map((s) => s.transmission)).toEqual(simulate(preset, { ions, analysis: false }).report.species.map((s) => s.transmission));
    expect(r.startSpecies).toHaveLength(4);
  });

  it('gives the search result when asked, and flags it as worse than the preset', async () => {
    const r = await inProcessEngine(2).optimise({ preset, parameters: [{ path: 'source.extraction.delay_ns', min: 100, max: 150 }], objective, ions, criterion: 'ideal', allowWorse: true });
    expect(r.recommendation).toBe('tuned');
    expect(r.worseThanPreset).toBe(true);
    expect(r.best[0]).toBeLessThanOrEqual(150);
    expect(r.objective!).toBeLessThan(r.presetObjective!);
  });

  it('a tune whose bounds hold the preset never reports less than the preset, and its figure is what a fresh run of the result gives', async () => {
    const dual = demo('demo-reflectron-dual.json');
    const r = await inProcessEngine(2).optimise({
      preset: dual,
      parameters: [
        { path: 'mirror.intermediateGrid_V', min: 13000, max: 15500 },
        { path: 'mirror.backPlate_V', min: 21500, max: 24000 },
      ],
      objective: { name: 'max-min-r-over-range', range: [1000, 2500] },
      ions: 1500,
      criterion: 'ideal',
      restarts: 1,
    });
    expect(r.presetValues).toEqual([14167, 22950]);
    expect(r.objective!).toBeGreaterThanOrEqual(r.presetObjective!);
    const rerun = simulate(r.tunedPreset, { ions: 1500, seed: dual.run.seed, analysis: false }).report.species;
    expect(r.objective).toBe(Math.min(...rerun.filter((s) => s.mz >= 1000 && s.mz <= 2500).map((s) => resolvingPowerBy(s, 'sd')!)));
  });
});
