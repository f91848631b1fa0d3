/**
 * Solved-field preset pieces → electrode geometry, solved mirror model, checks, and the
 * ideal-grid equivalent used for comparisons.
 *
 * Potentials are solved relative to the drift potential (the housing is at the drift potential,
 * taken as the solver's 0 V), so a drift-tube voltage change needs no new solve either.
 *
 * Ideal-grid equivalent of the ring-stack mirror (our definition, for `--compare-ideal`): every
 * electrode is replaced by an ideal grid across the axis at its mid-plane, carrying its divider
 * potential; the back plate by an ideal plane at its front face. The axial potential is then
 * piecewise linear between those planes (a stack of uniform stages, exact in closed form). The
 * path from the solved region's entry plane to the entrance electrode's mid-plane is added to the
 * drift and return lengths, so both instruments have the same geometry along the axis.
 */
import type { ElectrodeSpec, FieldIssue } from '../fields/electrodes';
import { dividerFractions } from '../fields/electrodes';
import { friendlyNodeCount } from '../fields/mesh';
import type { MeshSpec } from '../fields/mesh';
import { createFieldMap } from '../fields/interpolate';
import { makeSolvedRegion } from '../fields/solvedRegion';
import { cachedUnitFields } from '../fields/unitFieldCache';
import { superpose } from '../fields/unitSolutions';
import type { SourceModel } from '../physics/analyser';
import type { SolvedMirrorModel } from '../physics/solvedMirror';
import type { SolvedSourceModel } from '../physics/solvedSource';
import { planePotential_V, settleTime_s } from '../physics/waveforms';
import { mmToM } from '../physics/units';
import type { SolvedMirrorSettings } from './fieldsSchema';
import type { PresetIssue } from './issues';
import type { Preset, PresetInput } from './schema';

export interface SolvedMirrorGeometry {
  readonly mesh: MeshSpec;
  /** Potentials relative to the drift potential. */
  readonly electrodes: ElectrodeSpec[];
  readonly entryZ_m: number;
  readonly farZ_m: number;
}

/** Extent along the axis, in mm from the entry plane, of the mirror's parts. */
function layoutAlongAxis_mm(m: SolvedMirrorSettings) {
  const entranceFrom = m.leadIn_mm;
  const entranceTo = entranceFrom + m.entrance.thickness_mm;
  const firstRing = entranceTo + m.rings.firstGap_mm;
  const lastRingEnd = firstRing + (m.rings.count - 1) * m.rings.pitch_mm + m.rings.thickness_mm;
  const backFrom = lastRingEnd + m.backPlate.gap_mm;
  const backTo = backFrom + m.backPlate.thickness_mm;
  return { entranceFrom, entranceTo, firstRing, lastRingEnd, backFrom, backTo };
}

export function solvedMirrorGeometry(m: SolvedMirrorSettings, driftPotential_V: number): SolvedMirrorGeometry {
  const a = layoutAlongAxis_mm(m);
  const spacing = m.mesh.spacing_mm;
  // Two spacings of housing behind the back plate, so that its rear face is not on the can's end row.
  const zMax_mm = a.backTo + 2 * spacing;
  const mesh: MeshSpec = {
    nr: friendlyNodeCount(m.mesh.wallRadius_mm, spacing),
    nz: friendlyNodeCount(zMax_mm, spacing),
    rMax_m: mmToM(m.mesh.wallRadius_mm),
    zMin_m: 0,
    zMax_m: mmToM(zMax_mm),
  };
  const outer = Math.max(m.rings.outerRadius_mm, m.entrance.apertureRadius_mm + spacing);
  const electrodes: ElectrodeSpec[] = [
    {
      kind: 'plate',
      name: 'entrance',
      potential_V: 0,
      z_m: mmToM(a.entranceFrom),
      thickness_m: mmToM(m.entrance.thickness_mm),
      apertureRadius_m: mmToM(m.entrance.apertureRadius_mm),
      outerRadius_m: mmToM(outer),
    },
    {
      kind: 'ringStack',
      name: 'rings',
      count: m.rings.count,
      firstZ_m: mmToM(a.firstRing),
      pitch_m: mmToM(m.rings.pitch_mm),
      thickness_m: mmToM(m.rings.thickness_mm),
      innerRadius_m: mmToM(m.rings.innerRadius_mm),
      outerRadius_m: mmToM(m.rings.outerRadius_mm),
      resistorRatios: m.rings.resistorRatios,
      startTiedTo: 'entrance',
      endTiedTo: 'backPlate',
    },
    {
      kind: 'plate',
      name: 'backPlate',
      potential_V: m.backPlate.potential_V - driftPotential_V,
      z_m: mmToM(a.backFrom),
      thickness_m: mmToM(m.backPlate.thickness_mm),
      apertureRadius_m: 0,
      outerRadius_m: mmToM(outer),
    },
  ];
  return { mesh, electrodes, entryZ_m: 0, farZ_m: mesh.zMax_m };
}

/** Cross-field checks of a solved mirror (paths under `mirror.`). */
export function checkSolvedMirror(m: SolvedMirrorSettings, driftPotential_V: number): PresetIssue[] {
  const issues: PresetIssue[] = [];
  const r = m.rings;
  if (r.resistorRatios.length !== r.count + 1) {
    issues.push({ path: 'mirror.rings.resistorRatios', message: `needs count + 1 = ${r.count + 1} ratios (entrance → ring 0 … ring ${r.count - 1} → back plate); got ${r.resistorRatios.length}` });
  }
  if (r.count > 1 && r.pitch_mm <= r.thickness_mm) issues.push({ path: 'mirror.rings.pitch_mm', message: `must exceed the ring thickness (${r.thickness_mm} mm)` });
  if (r.outerRadius_mm <= r.innerRadius_mm) issues.push({ path: 'mirror.rings.outerRadius_mm', message: `must exceed the inner radius (${r.innerRadius_mm} mm)` });
  if (m.entrance.apertureRadius_mm + m.mesh.spacing_mm >= m.mesh.wallRadius_mm) {
    issues.push({ path: 'mirror.entrance.apertureRadius_mm', message: `must be below the housing radius minus one mesh spacing (${m.mesh.wallRadius_mm - m.mesh.spacing_mm} mm)` });
  }
  if (r.outerRadius_mm >= m.mesh.wallRadius_mm) issues.push({ path: 'mirror.rings.outerRadius_mm', message: `must be below the housing radius (${m.mesh.wallRadius_mm} mm): electrodes may not touch the grounded housing` });
  const thinnest = Math.min(m.entrance.thickness_mm, r.thickness_mm, m.backPlate.thickness_mm, r.firstGap_mm, m.backPlate.gap_mm, r.count > 1 ? r.pitch_mm - r.thickness_mm : Infinity);
  if (m.mesh.spacing_mm > thinnest) {
    issues.push({ path: 'mirror.mesh.spacing_mm', message: `must not exceed the thinnest electrode or gap (${thinnest} mm), or the mesh cannot resolve it` });
  }
  if (issues.length > 0) return issues;
  const g = solvedMirrorGeometry(m, driftPotential_V);
  if (g.mesh.nr * g.mesh.nz > 4_200_000) {
    issues.push({ path: 'mirror.mesh.spacing_mm', message: `gives a ${g.mesh.nr}×${g.mesh.nz} mesh; at most about 4.2 million nodes are allowed (use a coarser spacing)` });
    return issues;
  }
  // Geometry the solver refuses (overlaps, electrodes outside the housing): reported as is, under the mirror.
  const fields = cachedUnitFields(g.mesh, g.electrodes);
  if (!fields.ok) for (const issue of fields.issues) issues.push({ path: 'mirror', message: `${issue.path}: ${issue.message}` });
  return issues;
}

/** The solved mirror model: unit fields from the geometry cache, superposed with this preset's voltages. */
export function compileSolvedMirror(m: SolvedMirrorSettings, driftPotential_V: number): SolvedMirrorModel {
  const g = solvedMirrorGeometry(m, driftPotential_V);
  const fields = cachedUnitFields(g.mesh, g.electrodes);
  if (!fields.ok) throw new Error(`solved mirror geometry: ${fields.issues.map((i: FieldIssue) => `${i.path}: ${i.message}`).join('; ')}`);
  const set = fields.set;
  // Drive order follows the spec order: entrance (0 V relative), then the back plate.
  const driveVoltages_V = Float64Array.from(set.mesh.layout.drives, (d) => (d.name === 'backPlate' ? m.backPlate.potential_V - driftPotential_V : 0));
  const potential_V = superpose(set, driveVoltages_V, new Float64Array(set.mesh.nr * set.mesh.nz));
  return {
    region: makeSolvedRegion(createFieldMap(set.mesh, potential_V), g.entryZ_m, g.farZ_m),
    unitFields: set,
    driveVoltages_V,
    referencePotential_V: driftPotential_V,
  };
}

/**
 * The same instrument with ideal grids (definition in the module comment): a preset whose mirror
 * is a piecewise-linear ("table" profile) mirror and whose drift and return lengths include the
 * lead-in to the entrance electrode's mid-plane. Returns the preset unchanged when it has no solved region.
 */
export function idealGridEquivalent(preset: Preset): Preset {
  const withSource = idealSourceEquivalent(preset);
  return idealMirrorEquivalent(withSource);
}

function idealMirrorEquivalent(preset: Preset): Preset {
  const m = preset.mirror;
  if (m.type !== 'solved') return preset;
  const a = layoutAlongAxis_mm(m);
  const entranceMid = (a.entranceFrom + a.entranceTo) / 2;
  const vDrift = preset.drift.potential_V;
  const fractions = dividerFractions(m.rings.resistorRatios, m.rings.count) ?? new Float64Array(m.rings.count);
  const points: [number, number][] = [];
  for (let k = 0; k < m.rings.count; k++) {
    const mid = a.firstRing + k * m.rings.pitch_mm + m.rings.thickness_mm / 2;
    points.push([mid - entranceMid, vDrift + fractions[k] * (m.backPlate.potential_V - vDrift)]);
  }
  const depth_mm = a.backFrom - entranceMid;
  points.push([depth_mm, m.backPlate.potential_V]);
  // Planes inside a run of equal field strength change nothing: merge them (the exact engine takes a few stages only).
  const merged: [number, number][] = [];
  let prev: [number, number] = [0, vDrift];
  for (let k = 0; k < points.length; k++) {
    const next = points[k + 1];
    const here = points[k];
    const slopeIn = (here[1] - prev[1]) / (here[0] - prev[0]);
    const collinear = next !== undefined && Math.abs((next[1] - here[1]) / (next[0] - here[0]) - slopeIn) <= 1e-9 * Math.abs(slopeIn);
    if (!collinear) {
      merged.push(here);
      prev = here;
    }
  }
  const ideal: PresetInput['mirror'] = {
    type: 'profile',
    depth_mm,
    profile: { kind: 'table', points: merged },
    returnLength_mm: m.returnLength_mm + entranceMid,
  };
  return { ...preset, drift: { ...preset.drift, length_mm: preset.drift.length_mm + entranceMid }, mirror: ideal as Preset['mirror'] };
}

/**
 * Ideal-grid equivalent of a solved source: each plate becomes an ideal grid at its upstream face
 * (repeller at its face), so the first gap is unchanged, the second gains the extraction plate's
 * thickness, and the ground plate's thickness plus the exit length join the drift.
 */
function idealSourceEquivalent(preset: Preset): Preset {
  const solved = preset.source.solved;
  if (!solved || !preset.source.extractionGrid) return preset;
  const { solved: _dropped, ...source } = preset.source;
  return {
    ...preset,
    source: { ...source, groundGrid: { ...source.groundGrid, gap_mm: source.groundGrid.gap_mm + solved.extractionThickness_mm } },
    drift: { ...preset.drift, length_mm: preset.drift.length_mm + solved.groundThickness_mm + solved.exitLength_mm },
  };
}

export interface SolvedSourceGeometry extends SolvedMirrorGeometry {
  readonly repellerFaceZ_m: number;
}

/** Plates along the axis from the mesh start (mm): repeller, extraction plate, ground plate, exit plane. */
export function solvedSourceGeometry(preset: Preset): SolvedSourceGeometry | null {
  const s = preset.source.solved;
  const grid = preset.source.extractionGrid;
  if (!s || !grid) return null;
  const vDrift = preset.drift.potential_V;
  const h = s.mesh.spacing_mm;
  const repellerFrom = 2 * h;
  const face = repellerFrom + s.repellerThickness_mm;
  const extractionFrom = face + grid.gap_mm;
  const extractionTo = extractionFrom + s.extractionThickness_mm;
  const groundFrom = extractionTo + preset.source.groundGrid.gap_mm;
  const groundTo = groundFrom + s.groundThickness_mm;
  const far = groundTo + s.exitLength_mm;
  const zMax = far + 2 * h;
  const mesh: MeshSpec = {
    nr: friendlyNodeCount(s.mesh.wallRadius_mm, h),
    nz: friendlyNodeCount(zMax, h),
    rMax_m: mmToM(s.mesh.wallRadius_mm),
    zMin_m: 0,
    zMax_m: mmToM(zMax),
  };
  const plate = (name: string, from: number, thickness: number, aperture: number, potential_V: number): ElectrodeSpec => ({
    kind: 'plate',
    name,
    potential_V,
    z_m: mmToM(from),
    thickness_m: mmToM(thickness),
    apertureRadius_m: mmToM(aperture),
    outerRadius_m: mmToM(s.plateRadius_mm),
  });
  const electrodes: ElectrodeSpec[] = [
    plate('repeller', repellerFrom, s.repellerThickness_mm, 0, preset.source.repeller.potential_V - vDrift),
    plate('extraction', extractionFrom, s.extractionThickness_mm, s.extractionAperture_mm, grid.potential_V - vDrift),
    plate('ground', groundFrom, s.groundThickness_mm, s.groundAperture_mm, 0),
  ];
  return { mesh, electrodes, entryZ_m: 0, farZ_m: mmToM(far), repellerFaceZ_m: mmToM(face) };
}

/** Cross-field checks of a solved source (paths under `source.`). */
export function checkSolvedSource(preset: Preset): PresetIssue[] {
  const s = preset.source.solved;
  if (!s) return [];
  const issues: PresetIssue[] = [];
  if (!preset.source.extractionGrid) {
    issues.push({ path: 'source.solved', message: 'needs a two-stage source (source.extractionGrid gives the extraction electrode its gap and potential)' });
    return issues;
  }
  for (const key of ['extractionAperture_mm', 'groundAperture_mm'] as const) {
    if (s[key] >= s.plateRadius_mm) issues.push({ path: `source.solved.${key}`, message: `must be below the plate radius (${s.plateRadius_mm} mm)` });
  }
  if (s.plateRadius_mm >= s.mesh.wallRadius_mm) issues.push({ path: 'source.solved.plateRadius_mm', message: `must be below the housing radius (${s.mesh.wallRadius_mm} mm)` });
  const thinnest = Math.min(s.repellerThickness_mm, s.extractionThickness_mm, s.groundThickness_mm, preset.source.extractionGrid.gap_mm, preset.source.groundGrid.gap_mm);
  if (s.mesh.spacing_mm > thinnest) issues.push({ path: 'source.solved.mesh.spacing_mm', message: `must not exceed the thinnest plate or gap (${thinnest} mm)` });
  if (issues.length > 0) return issues;
  const g = solvedSourceGeometry(preset)!;
  if (g.mesh.nr * g.mesh.nz > 4_200_000) {
    issues.push({ path: 'source.solved.mesh.spacing_mm', message: `gives a ${g.mesh.nr}×${g.mesh.nz} mesh; at most about 4.2 million nodes are allowed (use a coarser spacing)` });
    return issues;
  }
  const fields = cachedUnitFields(g.mesh, g.electrodes);
  if (!fields.ok) for (const issue of fields.issues) issues.push({ path: 'source.solved', message: `${issue.path}: ${issue.message}` });
  return issues;
}

/**
 * The solved source: unit fields from the geometry cache; the repeller and extraction drives follow
 * the source's waveform (planes 0 and 1 of `timing`), the ground plate stays at the drift potential.
 */
export function compileSolvedSource(preset: Preset, timing: SourceModel): SolvedSourceModel | null {
  const g = solvedSourceGeometry(preset);
  if (!g) return null;
  const fields = cachedUnitFields(g.mesh, g.electrodes);
  if (!fields.ok) throw new Error(`solved source geometry: ${fields.issues.map((i: FieldIssue) => `${i.path}: ${i.message}`).join('; ')}`);
  const set = fields.set;
  const vDrift = preset.drift.potential_V;
  const driveOf = (name: string) => set.mesh.layout.drives.findIndex((d) => d.name === name);
  const repellerDrive = driveOf('repeller');
  const extractionDrive = driveOf('extraction');
  const voltagesAt = (t: number, out: Float64Array): void => {
    out.fill(0);
    out[repellerDrive] = planePotential_V(timing, 0, t) - vDrift;
    out[extractionDrive] = planePotential_V(timing, 1, t) - vDrift;
  };
  const settle_s = settleTime_s(timing);
  const driveVoltages_V = new Float64Array(set.mesh.layout.drives.length);
  voltagesAt(Infinity, driveVoltages_V);
  const potential_V = superpose(set, driveVoltages_V, new Float64Array(set.mesh.nr * set.mesh.nz));
  let hi = 0;
  let lo = 0;
  for (const plane of [timing.planes[0], timing.planes[1]]) {
    for (const v of [plane.hold_V - vDrift, plane.final_V - vDrift]) {
      hi = Math.max(hi, v);
      lo = Math.min(lo, v);
    }
  }
  const repellerIndex = set.mesh.layout.electrodes.findIndex((e) => e.name === 'repeller');
  const region = makeSolvedRegion(createFieldMap(set.mesh, potential_V), g.entryZ_m, g.farZ_m, {
    unitFields: set,
    voltagesAt,
    settle_s,
    potentialSpan_V: hi - lo,
  });
  return {
    region,
    unitFields: set,
    driveVoltages_V,
    referencePotential_V: vDrift,
    repellerIndex,
    // The face as the electrode holds it (not recomputed from mm, which could land an ulp inside the metal).
    repellerFaceZ_m: set.mesh.layout.electrodes[repellerIndex].zMax_m,
    timing,
  };
}
