import { describe, expect, it } from 'vitest';
import { createExactPlan, prepareExactPlan } from '../../src/physics/exactEngine';
import { createTrajectory, Region, traceTrajectory } from '../../src/physics/trajectory';
import { compilePreset } from '../../src/presets/compile';
import { mzRampPositions, potentialRgb, rampRgb, rgbToCss } from '../../src/ui/colors';
import { buildLayout, mirrorPenetration_m } from '../../src/simulation/scene/layout';
import { traceDrawnPaths } from '../../src/simulation/scene/drawnPaths';
import { createDrawnIons, fillPaths, pathVertexBudget, positionAt, unpackDrawnIons } from '../../src/ui/scene/paths';
import { demoPreset } from './helpers';

describe('3D layout', () => {
  it('places the electrodes of the dual-stage demo to scale', () => {
    const { model } = compilePreset(demoPreset('demo-reflectron-dual'));
    const layout = buildLayout(model, 40);
    const at = (label: string): number[] => layout.electrodes.filter((e) => e.label === label).map((e) => e.x_mm);
    expect(at('repeller')[0]).toBeLessThan(0);
    expect(at('extraction grid')).toEqual([3]);
    expect(at('ground grid')).toEqual([13]);
    expect(at('mirror entrance grid')).toEqual([1013]);
    expect(at('intermediate grid')).toEqual([1043]);
    expect(at('back plate')[0]).toBeCloseTo(1143.8, 9);
    expect(layout.detector.x_mm).toBe(1013 - 800);
    expect(layout.detector.radius_mm).toBe(20);
    // Mirror rings sit inside their stages, graded in potential from the entrance to the back plate.
    const rings = layout.electrodes.filter((e) => e.kind === 'ring');
    expect(rings.length).toBeGreaterThan(5);
    for (const r of rings) expect(r.x_mm > 1013 && r.x_mm < 1143).toBe(true);
    expect(rings[0].potential_V).toBeLessThan(rings[rings.length - 1].potential_V);
  });

  it('a uniform-field mirror turns an ion at depth d·K/V (textbook: energy balance in a uniform field)', () => {
    const preset = demoPreset('demo-reflectron-single');
    const { model } = compilePreset(preset);
    const back_V = preset.mirror.type === 'single' ? preset.mirror.backPlate_V : NaN;
    // Single stage, 350 mm to the back plate; an ion with 20 000 eV turns at 350·20 000/V_back mm.
    expect(mirrorPenetration_m(model, 20_000) * 1e3).toBeCloseTo((350 * 20_000) / back_V, 9);
    expect(mirrorPenetration_m(model, back_V + 1_000) * 1e3).toBeCloseTo(350, 9); // passes through
    // The exact trajectory of a real ion agrees: it starts near the repeller at rest after the delay.
    const repeller_V = preset.source.repeller.potential_V;
    const plan = prepareExactPlan(createExactPlan(), model, 1336.7008);
    const tr = traceTrajectory(createTrajectory(), plan, 0, 400);
    const turn = Array.from(tr.region.subarray(0, tr.count)).indexOf(Region.MIRROR_OUT);
    const depth = (tr.x0_m[turn] - 0.013 - 0.7) * 1e3;
    // Its energy is the potential where it stood when the pulse came: it drifted 400 m/s × delay.
    const delay_s = model.source.delay_s;
    const grid_V = preset.source.extractionGrid!.potential_V;
    const energy_eV = repeller_V - ((repeller_V - grid_V) * 400 * delay_s) / 3e-3;
    expect(Math.abs(depth - mirrorPenetration_m(model, energy_eV) * 1e3)).toBeLessThan(0.05);
  });

  it('drawn paths fit their vertex budget and packets sit on the paths', () => {
    const compiled = compilePreset(demoPreset('demo-reflectron-dual'));
    const layout = buildLayout(compiled.model);
    const ions = unpackDrawnIons(createDrawnIons(), traceDrawnPaths(compiled));
    expect(ions.count).toBe(4 * 160);
    const budget = pathVertexBudget(ions);
    const positions = new Float32Array(3 * budget);
    const colours = new Float32Array(3 * budget);
    expect(fillPaths(ions, layout, positions, colours, budget)).toBe(budget);
    const out = new Float32Array(3);
    positionAt(ions, layout, 0, ions.pool[0].flightTime_s, out, 0);
    expect(out[0]).toBeCloseTo(layout.detector.x_mm, 3);
    // Ions land on the detector face, within its radius, spread by their start energies.
    expect(Math.abs(out[1] - layout.detector.y_mm)).toBeLessThan(layout.detector.radius_mm);
  });

  it('colours run along our ramp by log m/z and by potential sign', () => {
    expect(rgbToCss(rampRgb(0))).toBe('#5ac8ff');
    expect(rgbToCss(rampRgb(1))).toBe('#e36ad0');
    const ramp = mzRampPositions([100, 1000, 10_000]);
    expect(ramp[0]).toBe(0);
    expect(ramp[1]).toBeCloseTo(0.5, 12);
    expect(ramp[2]).toBe(1);
    expect(mzRampPositions([500])).toEqual([0.5]);
    const plus = potentialRgb(20_000, 20_000);
    const minus = potentialRgb(-20_000, 20_000);
    expect(plus[0]).toBeGreaterThan(plus[2]);
    expect(minus[2]).toBeGreaterThan(minus[0]);
  });
});
