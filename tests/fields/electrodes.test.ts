import { describe, expect, it } from 'vitest';
import { buildLayout, defaultDriveVoltages, dividerFractions, electrodePotentials, validateElectrodes } from '../../src/fields/electrodes';
import type { DomainBounds, ElectrodeSpec } from '../../src/fields/electrodes';
import { createFieldMap, createFieldSample, sampleField } from '../../src/fields/interpolate';
import { rasterize } from '../../src/fields/rasterize';
import { solvePotential } from '../../src/fields/unitSolutions';

const mm = 1e-3;
const bounds: DomainBounds = { rMax_m: 20 * mm, zMin_m: 0, zMax_m: 40 * mm };

function layoutOf(specs: ElectrodeSpec[]) {
  const result = buildLayout(specs, bounds);
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.layout;
}

describe('resistor-divider ring stack', () => {
  // Ohm's law for a series chain (voltage divider, any circuits text): the tap after resistors
  // R_0…R_{k} sits at V_start + (V_end − V_start) · ΣR_below / ΣR_total.
  it('places rings on the chain between the first and last ring (N − 1 resistors)', () => {
    // Ratios 1 : 2 : 3 over 0 → 600 V: taps at 0, 100, 300, 600 V (worked by hand).
    const fractions = dividerFractions([1, 2, 3], 4);
    expect(Array.from(fractions ?? [])).toEqual([0, 1 / 6, 3 / 6, 1]);
    const layout = layoutOf([
      {
        kind: 'ringStack',
        name: 'stack',
        count: 4,
        firstZ_m: 5 * mm,
        pitch_m: 5 * mm,
        thickness_m: 1 * mm,
        innerRadius_m: 5 * mm,
        outerRadius_m: 10 * mm,
        resistorRatios: [1, 2, 3],
        startPotential_V: 0,
        endPotential_V: 600,
      },
    ]);
    const potentials = electrodePotentials(layout, defaultDriveVoltages(layout), new Float64Array(4));
    [0, 100, 300, 600].forEach((v, k) => expect(potentials[k]).toBeCloseTo(v, 10));
    expect(layout.drives.map((d) => d.name)).toEqual(['stack.start', 'stack.end']);
  });

  it('ties external terminals to other electrodes (N + 1 resistors) and the solved field holds the ring potentials', () => {
    // 3 rings, ratios 2 : 1 : 1 : 4 from entrance (−100 V) to back plate (+700 V): ΣR = 8,
    // taps after 2, 3, 4 units → −100 + 800·(2/8, 3/8, 4/8) = 100, 200, 300 V (worked by hand).
    const specs: ElectrodeSpec[] = [
      { kind: 'plate', name: 'entrance', potential_V: -100, z_m: 2 * mm, thickness_m: 1 * mm, apertureRadius_m: 4 * mm, outerRadius_m: 15 * mm },
      {
        kind: 'ringStack',
        name: 'stack',
        count: 3,
        firstZ_m: 8 * mm,
        pitch_m: 6 * mm,
        thickness_m: 1.25 * mm,
        innerRadius_m: 6 * mm,
        outerRadius_m: 10 * mm,
        resistorRatios: [2, 1, 1, 4],
        startTiedTo: 'entrance',
        endTiedTo: 'back',
      },
      { kind: 'plate', name: 'back', potential_V: 700, z_m: 30 * mm, thickness_m: 1 * mm, apertureRadius_m: 0, outerRadius_m: 15 * mm },
    ];
    const layout = layoutOf(specs);
    expect(layout.drives.map((d) => d.name)).toEqual(['entrance', 'back']);
    const expected = [-100, 100, 200, 300, 700]; // layout keeps spec order, the stack expanded in place
    const names = layout.electrodes.map((e) => e.name);
    expect(names).toEqual(['entrance', 'stack[0]', 'stack[1]', 'stack[2]', 'back']);
    const potentials = electrodePotentials(layout, defaultDriveVoltages(layout), new Float64Array(5));
    expected.forEach((v, k) => expect(potentials[k]).toBeCloseTo(v, 10));

    const raster = rasterize({ ...bounds, nr: 33, nz: 65 }, layout);
    if (!raster.ok) throw new Error(JSON.stringify(raster.issues));
    const { potential_V } = solvePotential(raster.mesh);
    const sample = createFieldSample();
    for (let k = 0; k < 3; k++) {
      const ring = layout.electrodes[1 + k];
      const inside = sampleField(createFieldMap(raster.mesh, potential_V), 8 * mm, ring.zMin_m + 0.5 * mm, sample);
      expect(inside).toBe(1 + k);
      expect(sample.potential_V).toBeCloseTo(expected[1 + k], 9);
      expect(sample.fieldR_V_per_m).toBe(0);
    }
  });

  it('rejects divider data that does not fit', () => {
    expect(dividerFractions([1, 1], 4)).toBeNull();
    expect(dividerFractions([1, 0, 1], 4)).toBeNull();
    expect(dividerFractions([1, -2, 1], 4)).toBeNull();
  });
});

// Input checks (common practice, no source): impossible geometry comes back as {path, message}, never a throw.
describe('geometry validation', () => {
  const plate = (over: Partial<Record<string, unknown>> = {}): ElectrodeSpec =>
    ({ kind: 'plate', name: 'p', potential_V: 10, z_m: 5 * mm, thickness_m: 1 * mm, apertureRadius_m: 2 * mm, outerRadius_m: 10 * mm, ...over }) as ElectrodeSpec;

  it('accepts a sound layout', () => {
    expect(validateElectrodes([plate()], bounds)).toEqual([]);
  });

  it('reports non-positive sizes with their paths', () => {
    const issues = validateElectrodes(
      [
        plate({ thickness_m: 0 }),
        plate({ name: 'q', z_m: 10 * mm, apertureRadius_m: 12 * mm }),
        { kind: 'tube', name: 't', potential_V: 0, radius_m: -1, wallThickness_m: 1 * mm, zFrom_m: 0, zTo_m: 1 * mm },
        { kind: 'ring', name: 'r', potential_V: 0, innerRadius_m: 3 * mm, outerRadius_m: 4 * mm, zFrom_m: 30 * mm, zTo_m: 30 * mm },
      ],
      bounds,
    );
    const paths = issues.map((i) => i.path);
    expect(paths).toContain('electrodes[0].thickness_m');
    expect(paths).toContain('electrodes[1].outerRadius_m');
    expect(paths).toContain('electrodes[2].radius_m');
    expect(paths).toContain('electrodes[3].zTo_m');
  });

  it('reports electrodes outside the mesh and touching or overlapping electrodes', () => {
    const issues = validateElectrodes(
      [
        plate({ outerRadius_m: 25 * mm }),
        plate({ name: 'low', z_m: -1 * mm }),
        { kind: 'ring', name: 'r1', potential_V: 0, innerRadius_m: 12 * mm, outerRadius_m: 15 * mm, zFrom_m: 20 * mm, zTo_m: 22 * mm },
        { kind: 'ring', name: 'r2', potential_V: 5, innerRadius_m: 14 * mm, outerRadius_m: 18 * mm, zFrom_m: 21 * mm, zTo_m: 25 * mm },
        { kind: 'gridPlane', name: 'g', potential_V: 5, z_m: 21.5 * mm },
      ],
      bounds,
    );
    const text = issues.map((i) => `${i.path}: ${i.message}`).join('\n');
    expect(text).toMatch(/electrodes\[0\]: p reaches r/);
    expect(text).toMatch(/electrodes\[1\]: low spans z/);
    expect(text).toMatch(/r2 touches or overlaps r1/);
    expect(text).toMatch(/g touches or overlaps r1/);
  });

  it('lets parts of one conductor touch (tube closed by its end plate) but not overlap', () => {
    const tube: ElectrodeSpec = { kind: 'tube', name: 'tube', potential_V: 0, radius_m: 8 * mm, wallThickness_m: 1 * mm, zFrom_m: 5 * mm, zTo_m: 20 * mm };
    const cap = (source: { potential_V: number } | { tiedTo: string }, z_m: number): ElectrodeSpec => ({
      kind: 'plate',
      name: 'cap',
      z_m,
      thickness_m: 1 * mm,
      apertureRadius_m: 2 * mm,
      outerRadius_m: 9 * mm,
      ...source,
    });
    // Separate voltage sources may not touch, even at equal voltage (they could be set apart later).
    expect(validateElectrodes([tube, cap({ potential_V: 0 }, 20 * mm)], bounds).map((i) => i.message)).toEqual(['cap touches or overlaps tube']);
    expect(validateElectrodes([tube, cap({ tiedTo: 'tube' }, 20 * mm)], bounds)).toEqual([]);
    expect(validateElectrodes([tube, cap({ tiedTo: 'tube' }, 19.5 * mm)], bounds).map((i) => i.message)).toEqual(['cap overlaps tube']);
    expect(validateElectrodes([tube, cap({ tiedTo: 'nobody' }, 20 * mm)], bounds).map((i) => i.path)).toEqual(['electrodes[1].tiedTo']);
    expect(validateElectrodes([tube, { ...cap({ tiedTo: 'tube' }, 20 * mm), potential_V: 3 } as ElectrodeSpec], bounds).map((i) => i.path)).toEqual([
      'electrodes[1].potential_V',
    ]);
    const layout = layoutOf([tube, cap({ tiedTo: 'tube' }, 20 * mm)]);
    expect(layout.drives.length).toBe(1);
    const raster = rasterize({ ...bounds, nr: 33, nz: 65 }, layout);
    expect(raster.ok).toBe(true);
    if (!raster.ok) return;
    const { potential_V } = solvePotential(raster.mesh, [250, 250]);
    const sample = createFieldSample();
    expect(sampleField(createFieldMap(raster.mesh, potential_V), 8.5 * mm, 20.5 * mm, sample)).toBeGreaterThanOrEqual(0);
    expect(sample.potential_V).toBe(250);
  });

  it('reports ring-stack mistakes: count, resistor count, pitch, terminals', () => {
    const stack = (over: Record<string, unknown>): ElectrodeSpec =>
      ({
        kind: 'ringStack',
        name: 's',
        count: 3,
        firstZ_m: 5 * mm,
        pitch_m: 5 * mm,
        thickness_m: 1 * mm,
        innerRadius_m: 5 * mm,
        outerRadius_m: 8 * mm,
        resistorRatios: [1, 1],
        startPotential_V: 0,
        endPotential_V: 100,
        ...over,
      }) as ElectrodeSpec;
    expect(validateElectrodes([stack({})], bounds)).toEqual([]);
    const paths = (over: Record<string, unknown>) => validateElectrodes([stack(over)], bounds).map((i) => i.path);
    expect(paths({ count: 0 })).toContain('electrodes[0].count');
    expect(paths({ count: 2.5 })).toContain('electrodes[0].count');
    expect(paths({ resistorRatios: [1, 1, 1] })).toContain('electrodes[0].resistorRatios');
    expect(paths({ resistorRatios: [1, -1] })).toContain('electrodes[0].resistorRatios[1]');
    expect(paths({ pitch_m: 1 * mm })).toContain('electrodes[0].pitch_m');
    expect(paths({ startTiedTo: 'x' })).toContain('electrodes[0].startPotential_V');
    expect(paths({ startPotential_V: undefined, startTiedTo: 'nobody' })).toContain('electrodes[0].startTiedTo');
  });

  it('never throws on malformed input', () => {
    const junk = [null, 'plate', { kind: 'blob', name: 'b' }, { kind: 'plate', name: '' }, { kind: 'ring', name: 'n', potential_V: NaN }] as unknown as ElectrodeSpec[];
    let issues: ReturnType<typeof validateElectrodes> = [];
    expect(() => (issues = validateElectrodes(junk, bounds))).not.toThrow();
    expect(issues.length).toBeGreaterThanOrEqual(5);
    expect(validateElectrodes([plate(), plate()], bounds).some((i) => /duplicate/.test(i.message))).toBe(true);
    expect(validateElectrodes([plate()], { rMax_m: -1, zMin_m: 0, zMax_m: 0 }).length).toBeGreaterThan(0);
    expect(() => buildLayout('nope' as unknown as ElectrodeSpec[], bounds)).not.toThrow();
  });
});
