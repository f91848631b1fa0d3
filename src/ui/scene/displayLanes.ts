/**
 * Display lanes of a linear setup. Every species flies the same path (t ∝ sqrt(m/z), the geometry
 * does not depend on m/z), so in linear mode the species' bundles lie on top of each other and only
 * the packets' timing differs. For display only, the bundles fan out after the source: species i of
 * n is shifted across the axis (scene y, the screen's vertical) by (i − (n−1)/2)·spacing·f, where f
 * grows from 0 at the source to 1 at the detector, so they start together (as they do) and reach
 * the detector in separate lanes spanning 80 % of the drift tube's diameter. 0 in reflectron mode,
 * whose return leg is already drawn tilted.
 */
export interface DisplayLanes {
  /** Lane spacing at the detector (mm); 0 when no lanes are drawn. */
  readonly spacing_mm: number;
  /** Axial positions (mm) where the fan starts (the source's exit) and where it is complete (the detector). */
  readonly from_mm: number;
  readonly to_mm: number;
  readonly count: number;
}

export function displayLanes(layout: { readonly reflectron: boolean; readonly sourceDepth_mm: number; readonly detector: { readonly x_mm: number }; readonly electrodes: readonly { readonly kind: string; readonly radius_mm: number }[] }, count: number): DisplayLanes {
  const tube = layout.electrodes.find((e) => e.kind === 'tube');
  const from_mm = layout.sourceDepth_mm;
  const to_mm = layout.detector.x_mm;
  if (layout.reflectron || count < 2 || !tube || !(to_mm > from_mm)) return { spacing_mm: 0, from_mm, to_mm, count };
  return { spacing_mm: (0.8 * 2 * tube.radius_mm) / (count - 1), from_mm, to_mm, count };
}

/** The display shift across the axis (mm) of species `index` at axial position x (mm). */
export function laneShift_mm(lanes: DisplayLanes, index: number, x_mm: number): number {
  if (lanes.spacing_mm === 0) return 0;
  const f = Math.min(Math.max((x_mm - lanes.from_mm) / (lanes.to_mm - lanes.from_mm), 0), 1);
  return (index - (lanes.count - 1) / 2) * lanes.spacing_mm * f;
}
