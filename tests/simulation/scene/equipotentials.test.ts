import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compilePreset } from '../../../src/presets/compile';
import { validatePreset } from '../../../src/presets/load';
import { drawableModel, PROFILE_SLABS, solvedMirrorDepth_m } from '../../../src/simulation/scene/drawableModel';
import { EQUIPOTENTIAL_LEVELS, MAX_EQUIPOTENTIAL_SEGMENTS, fillEquipotentials } from '../../../src/simulation/scene/equipotentials';
import { buildLayout } from '../../../src/simulation/scene/layout';

const doc = JSON.parse(readFileSync(new URL('../../../presets/demo-gridless-mirror.json', import.meta.url), 'utf8'));

describe('solved mirror in the 3D view', () => {
  const checked = validatePreset(doc);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  const { model } = compilePreset(checked.value);
  const drawable = drawableModel(model);
  const layout = buildLayout(drawable.model, 40);

  it('is drawn as uniform slabs of its solved axis potential, and says so', () => {
    const stages = drawable.model.mirror!.stages;
    expect(stages).toHaveLength(PROFILE_SLABS);
    expect(drawable.model.mirror!.solved).toBeNull();
    expect(drawable.approximations.join(' ')).toMatch(/gridless mirror/);
    // The last slab ends at the back plate, whose potential the solved field holds there.
    const back = checked.value.mirror.type === 'solved' ? checked.value.mirror.backPlate.potential_V : NaN;
    expect(stages[PROFILE_SLABS - 1].exitPotential_V).toBeCloseTo(back, 6);
    const depth = stages.reduce((d, s) => d + s.length_m, 0);
    expect(depth).toBeCloseTo(solvedMirrorDepth_m(model.mirror!.solved!), 12);
  });

  it('equipotential lines: symmetric about the axis, inside the mirror, each vertex on one of the drawn levels', () => {
    const buffer = new Float32Array(12 * MAX_EQUIPOTENTIAL_SEGMENTS);
    const n = fillEquipotentials(model, layout, buffer);
    expect(n).toBeGreaterThan(4 * EQUIPOTENTIAL_LEVELS);
    expect(n % 4).toBe(0);
    const solved = model.mirror!.solved!;
    const axisY = layout.electrodes.find((e) => e.kind === 'tube')!.y_mm;
    const x0 = layout.mirrorEntrance_mm;
    const zMax_mm = solved.region.map.mesh.zMax_m * 1e3;
    const phi = solved.region.map.potential_V;
    const lo = phi.reduce((a, b) => Math.min(a, b), Infinity);
    const hi = phi.reduce((a, b) => Math.max(a, b), -Infinity);
    const step = (hi - lo) / EQUIPOTENTIAL_LEVELS;
    for (let v = 0; v < n; v += 4) {
      // Pairs: the segment above the axis, then its mirror image below.
      expect(buffer[3 * v]).toBe(buffer[3 * v + 6]);
      expect(buffer[3 * v + 1] - axisY).toBeCloseTo(axisY - buffer[3 * v + 7], 3);
      const x = buffer[3 * v];
      expect(x).toBeGreaterThanOrEqual(x0 - 1e-3);
      expect(x).toBeLessThanOrEqual(x0 + zMax_mm + 1e-3);
    }
    // Each vertex lies on a mesh-cell edge, where the node potential interpolated linearly along that
    // edge equals one of the levels (k + ½)·step above the minimum (marching squares; float32 positions).
    const mesh = solved.region.map.mesh;
    let checkedVertices = 0;
    for (let v = 0; v < n; v += 2) {
      const u = (Math.abs(buffer[3 * v + 1] - axisY) * 1e-3) / mesh.hr_m;
      const w = ((buffer[3 * v] - x0) * 1e-3 - mesh.zMin_m) / mesh.hz_m;
      const onColumn = Math.abs(u - Math.round(u)) < 1e-3;
      const onRow = Math.abs(w - Math.round(w)) < 1e-3;
      if (onColumn === onRow) continue; // a node corner: either edge
      const node = (i: number, j: number) => phi[j * mesh.nr + i];
      let value: number;
      if (onRow) {
        const j = Math.round(w);
        const i = Math.min(Math.floor(u), mesh.nr - 2);
        value = node(i, j) + (u - i) * (node(i + 1, j) - node(i, j));
      } else {
        const i = Math.round(u);
        const j = Math.min(Math.floor(w), mesh.nz - 2);
        value = node(i, j) + (w - j) * (node(i, j + 1) - node(i, j));
      }
      const k = (value - lo) / step - 0.5;
      expect(Math.abs(k - Math.round(k)) * step).toBeLessThan(0.5);
      checkedVertices++;
    }
    expect(checkedVertices).toBeGreaterThan(n / 4);
  });
});
