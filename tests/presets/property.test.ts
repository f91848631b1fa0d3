/**
 * Property-based tests (fast-check): generated and mutated presets go through the loader and the
 * engine. Each is either refused with messages naming a field, or runs to finite results with a
 * fate for every ion; no exception escapes and no key reaches an object's prototype.
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { Fate } from '../../src/physics/fates';
import { parsePresetText, validatePreset } from '../../src/presets/load';
import { simulate } from '../../src/simulation/run';

const base = JSON.parse(readFileSync(new URL('../../presets/demo-reflectron-dual.json', import.meta.url), 'utf8'));

/** Every leaf path of a JSON value. */
function leafPaths(node: unknown, prefix: (string | number)[] = []): (string | number)[][] {
  if (node === null || typeof node !== 'object') return [prefix];
  const entries = Array.isArray(node) ? node.map((v, i) => [i, v] as const) : Object.entries(node);
  return entries.flatMap(([k, v]) => leafPaths(v, [...prefix, k]));
}
const PATHS = leafPaths(base);

function setPath(doc: any, path: (string | number)[], value: unknown): void {
  let node = doc;
  for (const key of path.slice(0, -1)) node = node[key];
  node[path[path.length - 1]] = value;
}

const weirdValue = fc.oneof(
  fc.double({ noNaN: false }),
  fc.double({ min: -1e5, max: 1e5, noNaN: true }),
  fc.integer({ min: -10, max: 100_000 }),
  fc.constantFrom(0, -0, 1e-300, 1e300, Infinity, -Infinity, NaN, null, '', '12', true, [], {}),
  fc.string({ maxLength: 8 }),
);

const mutation = fc.record({
  path: fc.constantFrom(...PATHS),
  value: weirdValue,
  extraKey: fc.option(fc.constantFrom('__proto__', 'constructor', 'prototype', 'x_mm', 'toString'), { nil: undefined }),
  dropPath: fc.option(fc.constantFrom(...PATHS), { nil: undefined }),
  viaText: fc.boolean(),
});

/** Realistic numeric perturbations that stay mostly valid, so the engine sees many runnable presets. */
const scaling = fc.record({
  path: fc.constantFrom(...PATHS.filter((p) => typeof getPath(base, p) === 'number')),
  factor: fc.double({ min: -2, max: 3, noNaN: true }),
});
function getPath(doc: any, path: (string | number)[]): unknown {
  return path.reduce((n, k) => (n === undefined || n === null ? undefined : n[k]), doc);
}

function checkOutcome(doc: unknown, viaText: boolean): 'refused' | 'ran' {
  const loaded = viaText ? parsePresetText(JSON.stringify(doc)) : validatePreset(doc);
  if (!loaded.ok) {
    expect(loaded.issues.length).toBeGreaterThan(0);
    for (const issue of loaded.issues) {
      expect(issue.path.length).toBeGreaterThan(0);
      expect(issue.message.length).toBeGreaterThan(0);
    }
    return 'refused';
  }
  const result = simulate(loaded.value, { ions: 40 });
  const { fate, flightTime_s, finalSpeed_m_per_s } = result.trace;
  for (let i = 0; i < fate.length; i++) {
    expect(fate[i]).not.toBe(Fate.UNSET);
    expect(Number.isFinite(flightTime_s[i])).toBe(true);
    expect(Number.isFinite(finalSpeed_m_per_s[i])).toBe(true);
  }
  for (const s of result.report.species) {
    for (const v of [s.flightTime_ns, s.fwhm_ns, s.resolvingPower, s.transmission]) {
      expect(v === null || Number.isFinite(v)).toBe(true);
    }
  }
  return 'ran';
}

describe('presets under generated mutations', () => {
  it('10 000 mutated presets are each refused with named fields or run with every fate set', () => {
    const tally = { refused: 0, ran: 0 };
    fc.assert(
      fc.property(fc.oneof(mutation, scaling), (m) => {
        const doc = structuredClone(base);
        if ('factor' in m) {
          setPath(doc, m.path, (getPath(base, m.path) as number) * m.factor);
        } else {
          setPath(doc, m.path, m.value);
          if (m.dropPath) setPath(doc, m.dropPath, undefined);
          if (m.extraKey) {
            const target = getPath(doc, m.path.slice(0, -1));
            if (target && typeof target === 'object') Object.defineProperty(target, m.extraKey, { value: { polluted: 1 }, enumerable: true, configurable: true, writable: true });
          }
        }
        tally[checkOutcome(doc, 'viaText' in m ? m.viaText : true)]++;
        expect(({} as Record<string, unknown>).polluted).toBeUndefined();
      }),
      { numRuns: 10_000, seed: 20261202 },
    );
    // Both branches must be exercised for the property to mean anything.
    expect(tally.refused).toBeGreaterThan(1000);
    expect(tally.ran).toBeGreaterThan(1000);
  });
});
