/**
 * Linear-mode display lanes of the 3D view: every species flies the same path in a linear analyser
 * (t = L·sqrt(m/(2zeU)): the geometry does not depend on m/z), so the drawing fans the species out
 * after the source into lanes that are apart at the detector; reflectron drawings keep their tilt.
 */
import { describe, expect, it } from 'vitest';
import { compilePreset } from '../../src/presets/compile';
import { drawableModel } from '../../src/simulation/scene/drawableModel';
import { buildLayout } from '../../src/simulation/scene/layout';
import { displayLanes, laneShift_mm } from '../../src/ui/scene/displayLanes';
import { demoPreset } from './helpers';

const layoutOf = (name: 'demo-linear-delayed' | 'demo-reflectron-dual') => buildLayout(drawableModel(compilePreset(demoPreset(name)).model).model, 40);

describe('display lanes', () => {
  it('linear: start together at the source, reach the detector one spacing apart, inside the tube', () => {
    const layout = layoutOf('demo-linear-delayed');
    const tube = layout.electrodes.find((e) => e.kind === 'tube')!;
    const lanes = displayLanes(layout, 4);
    expect(lanes.spacing_mm).toBeCloseTo((0.8 * 2 * tube.radius_mm) / 3, 12);
    const at = (x: number) => [0, 1, 2, 3].map((i) => laneShift_mm(lanes, i, x));
    expect(at(0).every((y) => y === 0)).toBe(true);
    expect(at(layout.sourceDepth_mm).every((y) => y === 0)).toBe(true);
    const end = at(layout.detector.x_mm);
    for (let i = 1; i < 4; i++) expect(end[i] - end[i - 1]).toBeCloseTo(lanes.spacing_mm, 12);
    expect(end[0]).toBeCloseTo(-end[3], 12);
    expect(Math.max(...end.map(Math.abs))).toBeLessThanOrEqual(tube.radius_mm);
    // Beyond the detector the lanes stay where they are (ions are held at their path ends).
    expect(at(layout.detector.x_mm + 100)).toEqual(end);
    const mid = at((layout.sourceDepth_mm + layout.detector.x_mm) / 2);
    mid.forEach((y, i) => expect(y).toBeCloseTo(end[i] / 2, 9));
  });

  it('no lanes for one species or in reflectron mode', () => {
    expect(displayLanes(layoutOf('demo-linear-delayed'), 1).spacing_mm).toBe(0);
    const reflectron = displayLanes(layoutOf('demo-reflectron-dual'), 4);
    expect(reflectron.spacing_mm).toBe(0);
    expect(laneShift_mm(reflectron, 3, 500)).toBe(0);
  });
});
