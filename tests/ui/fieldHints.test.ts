/** Panel hints and validator checks quote the same limits: the hint is read from the validator, and the check refuses outside it. */
import { describe, expect, it } from 'vitest';
import { validatePreset } from '../../src/presets/load';
import { numberBoundsAt } from '../../src/presets/pathBounds';
import { boundsWords } from '../../src/presets/rangeWords';
import { FIELDS, speciesFields, type NumberField } from '../../src/ui/panel/fields';
import { cloneJson } from '../../src/ui/panel/presetPath';
import { DEMO_FILES, demoPreset } from './helpers';

describe('hints and checks', () => {
  it('the drift length of the report: the hint says > 1, as the check does', () => {
    const drift = FIELDS.find((f) => f.path === 'drift.length_mm') as NumberField;
    expect(drift.hint(demoPreset('demo-linear-delayed'))).toBe('allowed: > 1 and ≤ 50000 (mm)');
    const doc = cloneJson(demoPreset('demo-linear-delayed')) as { drift: { length_mm: number } };
    doc.drift.length_mm = 1;
    const r = validatePreset(doc);
    expect(r.ok ? [] : r.issues).toEqual([{ path: 'drift.length_mm', message: 'must be a number > 1 and ≤ 50000 mm' }]);
  });

  it('for every number control of every demo: a value past the hint is refused with the same bounds, and the bounds themselves behave as the hint says', () => {
    let checked = 0;
    const checkedPaths = new Set<string>();
    for (const name of DEMO_FILES) {
      const preset = demoPreset(name);
      const fields = [...FIELDS, ...preset.ions.species.flatMap((_s, i) => speciesFields(i))];
      for (const f of fields) {
        const doc = cloneJson(preset);
        if (f.kind !== 'number' || (f.visible && !f.visible(doc))) continue;
        const bounds = numberBoundsAt(f.path, doc);
        expect(bounds, f.path).not.toBeNull();
        const words = boundsWords(bounds!);
        expect(f.hint(doc), f.path).toContain(`allowed: ${words}`);
        const refusedAt = (value: number) => {
          const copy = cloneJson(preset);
          f.set(copy, value);
          const r = validatePreset(copy);
          return r.ok ? undefined : r.issues.find((i) => i.path === f.path.replace(/^ions\.species\[(\d+)\]/, 'ions.species[$1]'));
        };
        const above = refusedAt(bounds!.max + Math.max(1, Math.abs(bounds!.max)));
        expect(above?.message, f.path).toContain(words);
        const atMin = refusedAt(bounds!.min);
        checkedPaths.add(`${name}: ${f.path}`);
        // An exclusive minimum is refused with the same words; an inclusive one is not refused for its range.
        if (bounds!.exclusiveMin) expect(atMin?.message, f.path).toContain(words);
        else if (atMin) expect(atMin.message, f.path).not.toContain(words);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(100);
    expect(checkedPaths).toContain('demo-gridless-mirror: mirror.returnLength_mm');
  });
});
