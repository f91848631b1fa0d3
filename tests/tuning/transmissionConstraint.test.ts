/**
 * The per-species transmission constraint of a tune (common practice, no source: a tuned method may
 * not trade ions of any species for a narrower peak). The physics of the scenario is textbook: in a
 * retarding hold field E an ion of start speed v turns and is back on the repeller after 2·m·v/(q·E),
 * so light species strike the repeller first as the delay grows, while the heavy species a longer
 * delay focuses barely lose any.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { simulate } from '../../src/simulation/run';
import { formatTuneTable } from '../../src/cli/tuningFormat';
import { parseTuningArgs } from '../../src/cli/tuningArgs';
import {
  checkTransmission,
  constraintOf,
  DEFAULT_TRANSMISSION_SHARE,
  describeConstraint,
  transmissionFindings,
  transmissionFloors,
  transmissionShortfall,
} from '../../src/tuning/transmissionConstraint';
import { inProcessEngine, valid } from './fixtures';

describe('the constraint itself', () => {
  it('defaults to 99 % of each species\' current transmission; an absolute floor or another share on request; not both', () => {
    expect(constraintOf({})).toEqual({ kind: 'share', share: 0.99 });
    expect(DEFAULT_TRANSMISSION_SHARE).toBe(0.99);
    expect(constraintOf({ minTransmission: 0.5 })).toEqual({ kind: 'floor', floor: 0.5 });
    expect(constraintOf({ keepTransmission: 0.9 })).toEqual({ kind: 'share', share: 0.9 });
    expect(() => constraintOf({ minTransmission: 0.5, keepTransmission: 0.9 })).toThrow(/not both/);
    expect(() => constraintOf({ keepTransmission: 1.2 })).toThrow(/keepTransmission: must be a fraction from 0 to 1 \(got 1.2\)/);
    expect(() => constraintOf({ minTransmission: -0.1 })).toThrow(/minTransmission/);
  });
  it('gives every species with abundance its own floor and sums the shortfalls', () => {
    const floors = transmissionFloors({ kind: 'share', share: 0.99 }, [1, 0.5, 0.8], [1, 1, 0]);
    expect(floors).toEqual([0.99, 0.495, 0]);
    expect(transmissionFloors({ kind: 'floor', floor: 0.7 }, [0, 0, 0], [1, 1, 0])).toEqual([0.7, 0.7, 0]);
    expect(transmissionShortfall(floors, (i) => [1, 0.5, 0][i])).toBe(0);
    expect(transmissionShortfall(floors, (i) => [0.9, 0.4, 0][i])).toBeCloseTo(0.09 + 0.095, 12);
    expect(transmissionShortfall(undefined, () => 0)).toBe(0);
  });
  it('names the species below its floor, or the one that binds', () => {
    const sp = (mz: number, transmission: number) => ({ mz, label: `s${mz}`, transmission, flightTime_ns: 1, fwhm_ns: 1, resolvingPower: 1 });
    const refused = checkTransmission([0.9, 0.9], [sp(100, 0.95), sp(200, 0.7)]);
    expect(refused.violated.map((m) => m.mz)).toEqual([200]);
    expect(transmissionFindings(refused)[0]).toMatch(/^REFUSED: .*s200 \(m\/z 200\.0000\) keeps 70\.0 % against its floor 90\.0 %/);
    const binding = checkTransmission([0.9, 0.9], [sp(100, 0.905), sp(200, 0.99)]);
    expect(binding.violated).toEqual([]);
    expect(binding.binding?.mz).toBe(100);
    expect(transmissionFindings(binding)[0]).toMatch(/binds: s100 \(m\/z 100\.0000\) keeps 90\.5 %, its floor is 90\.0 %/);
    expect(transmissionFindings(checkTransmission([0.5, 0.5], [sp(100, 0.9), sp(200, 0.9)]))).toEqual([]);
    expect(describeConstraint({ kind: 'share', share: 0.99 })).toBe("every species keeps at least 99.0 % of its transmission at the preset's settings");
  });
});

describe('the CLI flags', () => {
  const tune = ['presets/demo-linear-delayed.json', '--tune', 'source.extraction.delay_ns', '--target-mz', '1336.7'];
  const issues = (argv: string[]) => {
    const r = parseTuningArgs(argv);
    return r.ok ? [] : r.issues.map((i) => `${i.path}: ${i.message}`);
  };
  it('--keep-transmission and --min-transmission take a fraction, apply to tunes only, and not together', () => {
    const ok = parseTuningArgs([...tune, '--keep-transmission', '0.95']);
    expect(ok.ok && ok.args.keepTransmission).toBe(0.95);
    expect(issues([...tune, '--keep-transmission', '99'])).toEqual(['--keep-transmission: must be a fraction from 0 to 1 of each species\' current transmission (got "99")']);
    expect(issues([...tune, '--keep-transmission', '0.9', '--min-transmission', '0.5'])).toEqual([
      '--keep-transmission: give either --min-transmission (an absolute floor) or --keep-transmission (a share of the current transmission), not both',
    ]);
    expect(issues(['presets/demo-linear-delayed.json', '--scan', 'source.extraction.delay_ns=100:200:3', '--keep-transmission', '0.9'])).toEqual(['--keep-transmission: applies to --tune only']);
  });
});

describe('a tune that would buy R for the heavy species with ions of the light one', () => {
  // The linear demo with a retarding hold field (repeller 50 V below the extraction grid during the delay).
  const doc = JSON.parse(readFileSync(new URL('../../presets/demo-linear-delayed.json', import.meta.url), 'utf8'));
  doc.source.repeller.hold_V = 18750;
  const preset = valid(doc);
  const heavy = preset.ions.species[3].mz; // valquorin-22, m/z 2508
  const ions = 2000;
  const request = { preset, parameters: [{ path: 'source.extraction.delay_ns', min: 150, max: 400 }], objective: { name: 'max-r-at-mz' as const, targetMz: heavy }, ions, criterion: 'ideal' as const };
  const transmissions = (p: typeof preset) => simulate(p, { ions, analysis: false }).report.species.map((s) => s.transmission);

  it('by default every species keeps 99 % of its transmission, and the light species that binds is named', async () => {
    const before = transmissions(preset);
    const r = await inProcessEngine(2).optimise(request);
    expect(r.recommendation).toBe('tuned');
    const after = transmissions(r.tunedPreset); // an independent run of the recommended preset
    after.forEach((t, i) => expect(t).toBeGreaterThanOrEqual(0.99 * before[i] - 1e-12));
    expect(r.transmissionFloors).toEqual(before.map((t) => 0.99 * t));
    expect(r.transmissionBinding?.label).toBe('kelvatide-10 (invented)');
    expect(r.transmissionViolated).toEqual([]);
    const table = formatTuneTable(preset.name, ions, preset.run.seed, request.objective, r);
    expect(table).toContain("transmission constraint: every species keeps at least 99.0 % of its transmission at the preset's settings");
    expect(table).toMatch(/The transmission constraint binds: kelvatide-10 \(invented\) \(m\/z 1058\.5629\) keeps/);
  }, 120_000);

  it('without a floor the same search loses more than 5 % of the light species (what the default prevents)', async () => {
    const before = transmissions(preset);
    const r = await inProcessEngine(2).optimise({ ...request, minTransmission: 0 });
    const after = transmissions(r.tunedPreset);
    expect(after[0]).toBeLessThan(0.95 * before[0]);
    expect(after[3]).toBeGreaterThan(0.99 * before[3]); // the target itself keeps its ions: a target-only rule would accept this
  }, 120_000);

  it('an absolute floor no setting meets is refused, naming the species', async () => {
    const r = await inProcessEngine(2).optimise({ ...request, parameters: [{ path: 'source.extraction.delay_ns', min: 228, max: 400 }], minTransmission: 0.99 });
    expect(r.feasible).toBe(false);
    expect(r.transmissionViolated?.map((m) => m.label)).toContain('kelvatide-10 (invented)');
    const table = formatTuneTable(preset.name, ions, preset.run.seed, request.objective, r);
    expect(table).toMatch(/REFUSED: no setting tried meets the transmission constraint; kelvatide-10 \(invented\) \(m\/z 1058\.5629\) keeps/);
  }, 120_000);
});
