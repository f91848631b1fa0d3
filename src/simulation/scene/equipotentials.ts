/**
 * Equipotential lines of solved-field regions in the 3D view's cut plane (z = 0 of the scene):
 * contours of the superposed potential (src/fields/contours.ts), drawn on both sides of the axis at
 * true scale (computed in the worker as part of a run): a solved mirror with its entry plane at the layout's mirror entrance, a solved source
 * with the repeller face at the scene origin. The contour buffer is
 * allocated once; the scene owns the vertex buffer it is copied into.
 */
import { createContourBuffer, evenLevels, extractContours } from '../../fields/contours';
import type { FieldMap } from '../../fields/interpolate';
import type { AnalyserModel } from '../../physics/analyser';
import { EQUIPOTENTIAL_LEVELS, MAX_EQUIPOTENTIAL_SEGMENTS, type SceneLayout } from './sceneData';

export { EQUIPOTENTIAL_LEVELS, MAX_EQUIPOTENTIAL_SEGMENTS } from './sceneData';

const contours = createContourBuffer(MAX_EQUIPOTENTIAL_SEGMENTS);
const levels = new Float64Array(EQUIPOTENTIAL_LEVELS);

/**
 * Write line-segment vertices (x, y, z per vertex, two vertices per segment) into `out` and return
 * the vertex count; 0 when the model has no solved region. `out` needs 12·MAX_EQUIPOTENTIAL_SEGMENTS floats.
 */
export function fillEquipotentials(model: AnalyserModel, layout: SceneLayout, out: Float32Array): number {
  let v = 0;
  const mirror = model.mirror?.solved ?? null;
  if (mirror) {
    // The mirror is drawn centred on the drift tube's axis in the scene, its entry plane at the mirror entrance.
    const axisY = layout.electrodes.find((e) => e.kind === 'tube')?.y_mm ?? 0;
    v = appendRegion(mirror.region.map, layout.mirrorEntrance_mm - mirror.region.entryZ_m * 1e3, axisY, out, v);
  }
  const source = model.source.solved ?? null;
  if (source) v = appendRegion(source.region.map, -source.repellerFaceZ_m * 1e3, 0, out, v);
  return v;
}

function appendRegion(map: FieldMap, x0_mm: number, axisY_mm: number, out: Float32Array, start: number): number {
  evenLevels(map.potential_V, EQUIPOTENTIAL_LEVELS, levels);
  const n = extractContours(map.mesh, map.potential_V, levels, contours);
  const seg = contours.segments;
  let v = start;
  for (let s = 0; s < n && 3 * (v + 4) <= out.length; s++) {
    const r1 = seg[4 * s] * 1e3;
    const z1 = seg[4 * s + 1] * 1e3;
    const r2 = seg[4 * s + 2] * 1e3;
    const z2 = seg[4 * s + 3] * 1e3;
    for (let side = 1; side >= -1; side -= 2) {
      out[3 * v] = x0_mm + z1;
      out[3 * v + 1] = axisY_mm + side * r1;
      out[3 * v + 2] = 0;
      out[3 * v + 3] = x0_mm + z2;
      out[3 * v + 4] = axisY_mm + side * r2;
      out[3 * v + 5] = 0;
      v += 2;
    }
  }
  return v;
}
