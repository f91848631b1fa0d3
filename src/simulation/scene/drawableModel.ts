/**
 * The electrode layout of the 3D view (./layout.ts) is drawn from ideal-grid stages: a mirror without
 * stages of its own is drawn from a close stand-in, a shaped or gridless mirror as uniform slabs whose
 * boundary potentials are the field's own on the axis (so the rings and the nominal turning depth
 * are right to within a slab's linear interpolation), an aperture source with ideal grids at its
 * plates. The drawn ion paths do not use it: they are flown by the run's own kernels
 * (./drawnPaths.ts), and the table and spectrum always come from the engine itself.
 */
import { createFieldSample, sampleField } from '../../fields/interpolate';
import type { AnalyserModel, MirrorStage } from '../../physics/analyser';
import type { SolvedMirrorModel } from '../../physics/solvedMirror';

/** Entry plane to the front face of the last solid electrode reaching the axis (the back plate). */
export function solvedMirrorDepth_m(solved: SolvedMirrorModel): number {
  let face = solved.region.farZ_m;
  for (const e of solved.region.map.mesh.layout.electrodes) if (!e.transparent && e.rMin_m === 0) face = Math.min(face, e.zMin_m);
  return face - solved.region.entryZ_m;
}

/** Slabs for a shaped mirror (the exact plan holds at most 8 stages). */
export const PROFILE_SLABS = 8;

export interface DrawableModel {
  readonly model: AnalyserModel;
  /** What was replaced by a stand-in, for the legend; empty when the drawing is exact. */
  readonly approximations: readonly string[];
}

export function profilePotential_V(driftPotential_V: number, coefficients_V: ArrayLike<number>, u: number): number {
  let v = driftPotential_V;
  let power = u;
  for (let k = 0; k < coefficients_V.length; k++) {
    v += coefficients_V[k] * power;
    power *= u;
  }
  return v;
}

export function drawableModel(model: AnalyserModel): DrawableModel {
  const approximations: string[] = [];
  let source = model.source;
  if (source.solved) {
    // An aperture (solved) source is drawn with ideal grids at the plates' positions.
    source = { ...source, solved: null };
    approximations.push('aperture source drawn with ideal grids');
  }
  let mirror = model.mirror;
  if (mirror && mirror.solved) {
    // A gridless (solved) mirror: slabs whose boundary potentials are the solved potential on the axis.
    const solved = mirror.solved;
    const depth_m = solvedMirrorDepth_m(mirror.solved);
    const sample = createFieldSample();
    const stages: MirrorStage[] = [];
    for (let k = 1; k <= PROFILE_SLABS; k++) {
      sampleField(solved.region.map, 0, solved.region.entryZ_m + (k * depth_m) / PROFILE_SLABS, sample);
      stages.push({ length_m: depth_m / PROFILE_SLABS, exitPotential_V: solved.referencePotential_V + sample.potential_V });
    }
    mirror = { ...mirror, stages, profile: null, solved: null, innerGridTransmission: stages.slice(1).map(() => 1) };
    approximations.push(`gridless mirror drawn as ${PROFILE_SLABS} uniform slabs of its solved axis potential`);
  } else if (mirror && mirror.profile) {
    const { depth_m, coefficients_V } = mirror.profile;
    const stages: MirrorStage[] = [];
    for (let k = 1; k <= PROFILE_SLABS; k++) {
      stages.push({ length_m: depth_m / PROFILE_SLABS, exitPotential_V: profilePotential_V(model.drift.potential_V, coefficients_V, k / PROFILE_SLABS) });
    }
    mirror = { ...mirror, stages, profile: null, innerGridTransmission: stages.slice(1).map(() => 1) };
    approximations.push(`shaped mirror drawn as ${PROFILE_SLABS} uniform slabs`);
  } else if (mirror && mirror.stages.length > PROFILE_SLABS) {
    // A long tabulated mirror: resample its piecewise-linear potential at the slab boundaries.
    const xs = [0];
    const vs = [model.drift.potential_V];
    for (const st of mirror.stages) {
      xs.push(xs[xs.length - 1] + st.length_m);
      vs.push(st.exitPotential_V);
    }
    const depth = xs[xs.length - 1];
    const at = (x: number): number => {
      let i = 1;
      while (i < xs.length - 1 && xs[i] < x) i++;
      const f = (x - xs[i - 1]) / (xs[i] - xs[i - 1]);
      return vs[i - 1] + f * (vs[i] - vs[i - 1]);
    };
    const stages: MirrorStage[] = [];
    for (let k = 1; k <= PROFILE_SLABS; k++) stages.push({ length_m: depth / PROFILE_SLABS, exitPotential_V: at((k * depth) / PROFILE_SLABS) });
    mirror = { ...mirror, stages, innerGridTransmission: stages.slice(1).map(() => 1) };
    approximations.push(`tabulated mirror drawn as ${PROFILE_SLABS} uniform slabs`);
  }
  if (!approximations.length) return { model, approximations };
  return { model: { ...model, source, mirror, forceIntegrator: false }, approximations };
}
