/**
 * Where every electrode of the analyser sits in the 3D view, from the compiled model, in mm; built in
 * the worker as part of a run (RunRequest.scene, ./runScene.ts).
 * Scene axes: x along the flight axis (the folded analyser frame of src/physics/trajectory.ts,
 * repeller at x = 0), y across it in the plane of a reflectron's fold, z the other transverse axis.
 * Axial positions and lengths are to scale. In reflectron mode the way out is tilted a little in y
 * so that the detector sits beside the source, as in a real folded flight path; transverse sizes of
 * electrodes are not in the preset and are drawn at plausible proportions.
 */
import type { AnalyserModel } from '../../physics/analyser';
import { sourceDepth_m } from '../../physics/analyser';
import { createExactPlan, prepareExactPlan } from '../../physics/exactEngine';
import { Fate } from '../../physics/fates';
import { createTrajectory, traceTrajectory } from '../../physics/trajectory';
import { MAX_MIRROR_RINGS, type ElectrodeShape, type FrameBox, type SceneLayout } from './sceneData';

export type { ElectrodeKind, ElectrodeShape, FrameBox, SceneLayout } from './sceneData';
export { MAX_MIRROR_RINGS } from './sceneData';

/** Penetration depth (m) of an ion that enters the mirror with kinetic energy eK (K in volts, sign-corrected). */
export function mirrorPenetration_m(model: AnalyserModel, kineticVolts: number): number {
  if (!model.mirror) return 0;
  const sign = model.polarity;
  let depth = 0;
  let entry = model.drift.potential_V;
  const startLevel = sign * model.drift.potential_V + kineticVolts; // potential energy per charge where the ion stops
  for (const stage of model.mirror.stages) {
    const a = sign * entry;
    const b = sign * stage.exitPotential_V;
    if (startLevel >= b || b <= a) {
      depth += stage.length_m;
      entry = stage.exitPotential_V;
      continue;
    }
    return depth + (stage.length_m * Math.max(0, startLevel - a)) / (b - a);
  }
  return depth;
}

export function buildLayout(model: AnalyserModel, detectorDiameter_mm?: number): SceneLayout {
  const src = model.source;
  const D = sourceDepth_m(src) * 1e3;
  const L = model.drift.length_m * 1e3;
  const mirror = model.mirror;
  const post = model.postAcceleration;
  const postGap = post ? post.gap_m * 1e3 : 0;
  const sourceRadius = Math.min(16, Math.max(6, 1.2 * D));
  const electrodes: ElectrodeShape[] = [];
  let largest = Math.abs(model.drift.potential_V);

  // Source: repeller plate, then one grid per following plane.
  electrodes.push({ kind: 'plate', x_mm: -0.4, y_mm: 0, length_mm: 0.8, radius_mm: sourceRadius, potential_V: src.planes[0].final_V, label: 'repeller' });
  let x = 0;
  for (let j = 0; j < src.stageLengths_m.length; j++) {
    x += src.stageLengths_m[j] * 1e3;
    const last = j === src.stageLengths_m.length - 1;
    electrodes.push({
      kind: 'grid',
      x_mm: x,
      y_mm: 0,
      length_mm: 0,
      radius_mm: sourceRadius,
      potential_V: src.planes[j + 1].final_V,
      label: last ? 'ground grid' : 'extraction grid',
    });
  }
  for (const p of src.planes) largest = Math.max(largest, Math.abs(p.final_V), Math.abs(p.hold_V));

  const mirrorEntrance = D + L;
  let slope = 0;
  let detX: number;
  let detY = 0;
  let tubeY = 0;
  let tubeRadius = Math.max(18, sourceRadius + 6);
  let totalDepth = 0;
  if (mirror) {
    for (const s of mirror.stages) totalDepth += s.length_m * 1e3;
    const nominalK = model.polarity * (src.planes[0].final_V - model.drift.potential_V);
    const turn = mirrorPenetration_m(model, nominalK) * 1e3;
    const R = mirror.returnLength_m * 1e3;
    const targetOffset = Math.max(30, 0.03 * (L + R));
    // y grows as v_drift·(t − t_exit): a nominal ion from rest at the repeller sets the scale so that it
    // lands on the detector centre (the product is the same for every m/z at the same energy).
    const nominal = traceTrajectory(createTrajectory(), prepareExactPlan(createExactPlan(), model, 1000), 0, 0);
    const flown = nominal.fate === Fate.DETECTED ? nominal.driftSpeed_m_per_s * (nominal.flightTime_s - nominal.sourceExit_s) * 1e3 : 0;
    slope = targetOffset / (flown > 0 ? flown : L + R + 4 * Math.max(turn, 1));
    detX = mirrorEntrance - R - postGap;
    detY = targetOffset;
    tubeY = detY / 2;
    tubeRadius = detY / 2 + Math.max(14, sourceRadius + 4);
    electrodes.push({ kind: 'tube', x_mm: D + L / 2, y_mm: tubeY, length_mm: L, radius_mm: tubeRadius, potential_V: model.drift.potential_V, label: 'drift tube' });
    electrodes.push({ kind: 'grid', x_mm: mirrorEntrance, y_mm: tubeY, length_mm: 0, radius_mm: tubeRadius, potential_V: model.drift.potential_V, label: 'mirror entrance grid' });
    // Ring electrodes along each stage, potentials graded linearly (uniform field), then the closing grid or back plate.
    let at = mirrorEntrance;
    let entryV = model.drift.potential_V;
    const ringPitch = Math.max(totalDepth / MAX_MIRROR_RINGS, Math.min(12, totalDepth / 8));
    mirror.stages.forEach((stage, j) => {
      const len = stage.length_m * 1e3;
      const rings = Math.max(1, Math.round(len / ringPitch));
      for (let r = 0; r < rings; r++) {
        const f = (r + 0.5) / rings;
        electrodes.push({
          kind: 'ring',
          x_mm: at + f * len,
          y_mm: tubeY,
          length_mm: Math.min(0.45 * (len / rings), 6),
          radius_mm: tubeRadius,
          potential_V: entryV + f * (stage.exitPotential_V - entryV),
          label: `mirror stage ${j + 1}`,
        });
      }
      at += len;
      const last = j === mirror.stages.length - 1;
      electrodes.push({
        kind: last ? 'plate' : 'grid',
        x_mm: last ? at + 0.8 : at,
        y_mm: tubeY,
        length_mm: last ? 1.6 : 0,
        radius_mm: tubeRadius,
        potential_V: stage.exitPotential_V,
        label: last ? 'back plate' : 'intermediate grid',
      });
      largest = Math.max(largest, Math.abs(stage.exitPotential_V));
      entryV = stage.exitPotential_V;
    });
  } else {
    detX = D + L + postGap;
    electrodes.push({ kind: 'tube', x_mm: D + L / 2, y_mm: 0, length_mm: L, radius_mm: tubeRadius, potential_V: model.drift.potential_V, label: 'drift tube' });
  }
  const detRadius = Math.min(detectorDiameter_mm ? detectorDiameter_mm / 2 : 10, tubeRadius);
  if (post) {
    const gridX = mirror ? detX + postGap : detX - postGap;
    electrodes.push({ kind: 'grid', x_mm: gridX, y_mm: detY, length_mm: 0, radius_mm: detRadius * 1.3, potential_V: model.drift.potential_V, label: 'detector grid' });
    largest = Math.max(largest, Math.abs(post.potential_V));
  }
  electrodes.push({
    kind: 'detector',
    x_mm: mirror ? detX - 0.6 : detX + 0.6,
    y_mm: detY,
    length_mm: 1.2,
    radius_mm: detRadius,
    potential_V: post ? post.potential_V : model.drift.potential_V,
    label: 'detector',
  });

  const minX = -2;
  const maxX = mirror ? mirrorEntrance + totalDepth + 2 : detX + 2;
  const midY = tubeY;
  const all: FrameBox = { centre: [(minX + maxX) / 2, midY, 0], half: [(maxX - minX) / 2, tubeRadius, tubeRadius] };
  const source: FrameBox = { centre: [D / 2, 0, 0], half: [Math.max(D * 0.8, 6), sourceRadius * 1.2, sourceRadius * 1.2] };
  const far: FrameBox = mirror
    ? { centre: [mirrorEntrance + totalDepth / 2, tubeY, 0], half: [Math.max(totalDepth * 0.7, 20), tubeRadius * 1.1, tubeRadius * 1.1] }
    : { centre: [detX - 15, 0, 0], half: [25, tubeRadius, tubeRadius] };
  return {
    electrodes,
    reflectron: mirror !== null,
    slope,
    sourceDepth_mm: D,
    mirrorEntrance_mm: mirrorEntrance,
    detector: { x_mm: detX, y_mm: detY, radius_mm: detRadius },
    laneSpacing_mm: Math.min(2.5, sourceRadius / 5),
    largestPotential_V: largest,
    frames: { all, source, far },
  };
}
