/**
 * Preset (user units, validated shape) → analyser model and population spec (SI). Also the checks
 * that span several fields (a start position beyond the first grid, an empty population...),
 * each reported with the path of the field to change and the allowed range.
 */
import type { AnalyserModel, ElectrodeDrive, MirrorModel, RiseModel, WaveformTable } from '../physics/analyser';
import { ELEMENTARY_CHARGE_C } from '../physics/constants';
import { mmToM, nsToS } from '../physics/units';
import type { SpeciesInfo } from '../ions/ensemble';
import { NO_TRANSVERSE, type PopulationSpec, type StartPositionSpec, type StartVelocitySpec, type TransverseSpec } from '../ions/population';
import { checkSolvedMirror, checkSolvedSource, compileSolvedMirror, compileSolvedSource } from './compileFields';
import type { SolvedSourceModel } from '../physics/solvedSource';
import type { PresetIssue } from './issues';
import { isotopeBlocks, resolveChemistry } from './speciesChemistry';
import { checkIonLoad } from './ionLoadChecks';
import { checkFragments } from './compileFragments';
import type { Preset } from './schema';
import { checkTolerances } from '../tolerance/checks';

/** Longest flight followed before an ion is reported as timed out. */
export const MAX_FLIGHT_TIME_S = 0.1;

export interface CompiledPreset {
  readonly model: AnalyserModel;
  readonly population: PopulationSpec;
}

export function firstStageGap_mm(preset: Preset): number {
  return preset.source.extractionGrid ? preset.source.extractionGrid.gap_mm : preset.source.groundGrid.gap_mm;
}

/** Cross-field checks; an empty list means the preset can be compiled and run. */
export function checkPreset(preset: Preset): PresetIssue[] {
  const issues: PresetIssue[] = [];
  const gap = firstStageGap_mm(preset);
  const gapName = preset.source.extractionGrid ? 'source.extractionGrid.gap_mm' : 'source.groundGrid.gap_mm';
  const inside = `must lie inside the first source stage: ≥ 0 and < ${gap} mm (${gapName})`;
  const pos = preset.ions.startPosition;
  if (pos.kind === 'surface' && pos.position_mm >= gap) issues.push({ path: 'ions.startPosition.position_mm', message: inside });
  if (pos.kind === 'uniform') {
    if (pos.to_mm >= gap) issues.push({ path: 'ions.startPosition.to_mm', message: inside });
    if (pos.from_mm > pos.to_mm) {
      issues.push({ path: 'ions.startPosition.from_mm', message: `must be ≤ ions.startPosition.to_mm (${pos.to_mm} mm)` });
    }
  }
  if (pos.kind === 'gaussian' && pos.mean_mm >= gap) issues.push({ path: 'ions.startPosition.mean_mm', message: inside });
  const vel = preset.ions.startVelocity;
  if (vel.kind === 'normal' && vel.minimum_m_per_s !== undefined) {
    const ceiling = vel.mean_m_per_s + 3 * vel.sd_m_per_s;
    if (vel.minimum_m_per_s > ceiling) {
      issues.push({
        path: 'ions.startVelocity.minimum_m_per_s',
        message: `must be ≤ mean + 3·sd = ${ceiling} m/s, or almost every draw is refused`,
      });
    }
  }
  const calibrants = preset.analysis?.calibrantMz ?? [];
  calibrants.forEach((mz, i) => {
    if (!preset.ions.species.some((s) => Math.abs(s.mz - mz) <= 0.5)) {
      issues.push({ path: `analysis.calibrantMz[${i}]`, message: `matches no species within 0.5 Th (m/z ${mz})` });
    }
  });
  const needed = preset.analysis?.quadraticCalibration ? 3 : 2;
  if (calibrants.length > 0 && calibrants.length < needed) {
    issues.push({ path: 'analysis.calibrantMz', message: `needs at least ${needed} calibrants for this calibration law` });
  }
  const m = preset.mirror;
  if (m.type === 'profile' && m.profile.kind === 'table') {
    const last = m.profile.points[m.profile.points.length - 1][0];
    if (last !== m.depth_mm) {
      issues.push({ path: 'mirror.profile.points', message: `the last point's depth (${last} mm) must equal mirror.depth_mm (${m.depth_mm} mm), where the back plate is` });
    }
  }
  if (m.type === 'solved') issues.push(...checkSolvedMirror(m, preset.drift.potential_V));
  if (preset.source.solved) issues.push(...checkSolvedSource(preset));
  const acq = preset.acquisition;
  if (acq && acq.recordLength_us !== undefined && (acq.recordLength_us * 1e3) / acq.sampleInterval_ns > 1 << 24) {
    issues.push({ path: 'acquisition.recordLength_us', message: `gives more than ${1 << 24} samples at this sample interval` });
  }
  issues.push(...checkTolerances(preset));
  if (!preset.ions.species.some((s) => s.abundance > 0)) {
    issues.push({ path: 'ions.species', message: 'at least one species needs an abundance > 0' });
  }
  issues.push(...checkIonLoad(preset));
  issues.push(...checkFragments(preset));
  return issues;
}

export function compilePreset(preset: Preset): CompiledPreset {
  const src = preset.source;
  const driftPotential = preset.drift.potential_V;
  const delayed = src.extraction.mode === 'delayed';
  const planes: ElectrodeDrive[] = [];
  const stageLengths_m: number[] = [];
  const grid = src.extractionGrid;
  // Default hold: the repeller sits at the next plane's potential, so the first stage is field-free.
  const nextHold = grid ? (grid.hold_V ?? grid.potential_V) : driftPotential;
  planes.push({ hold_V: delayed ? (src.repeller.hold_V ?? nextHold) : src.repeller.potential_V, final_V: src.repeller.potential_V });
  if (grid) {
    planes.push({ hold_V: delayed ? (grid.hold_V ?? grid.potential_V) : grid.potential_V, final_V: grid.potential_V });
    stageLengths_m.push(mmToM(grid.gap_mm));
  }
  planes.push({ hold_V: driftPotential, final_V: driftPotential });
  stageLengths_m.push(mmToM(src.groundGrid.gap_mm));
  const planeTransmission = [1, ...(grid ? [grid.transmission ?? 1] : []), src.groundGrid.transmission ?? 1];

  const mirror = preset.mirror;
  const model: AnalyserModel = {
    polarity: preset.polarity === 'positive' ? 1 : -1,
    source: {
      stageLengths_m,
      planes: delayed ? applyTables(planes, src.extraction) : planes,
      delay_s: src.extraction.mode === 'delayed' ? nsToS(src.extraction.delay_ns) : 0,
      planeTransmission,
      rise: riseModel(src.extraction, planes.length, Boolean(grid)),
    },
    drift: { length_m: mmToM(preset.drift.length_mm), potential_V: driftPotential },
    mirror: mirrorModel(mirror, driftPotential),
    postAcceleration: preset.detector.postAcceleration
      ? {
          gap_m: mmToM(preset.detector.postAcceleration.gap_mm),
          potential_V: preset.detector.postAcceleration.potential_V,
          gridTransmission: preset.detector.postAcceleration.gridTransmission ?? 1,
        }
      : null,
    detectorAperture:
      preset.detector.activeDiameter_mm === undefined
        ? null
        : {
            radius_m: mmToM(preset.detector.activeDiameter_mm) / 2,
            centreX_m: mmToM(preset.detector.offsetX_mm),
            centreY_m: mmToM(preset.detector.offsetY_mm),
          },
    maxFlightTime_s: MAX_FLIGHT_TIME_S,
    forceIntegrator: preset.run.engine === 'integrator',
  };

  // A solved source needs the compiled waveform (planes, delay, rise) of the ideal source model.
  if (src.solved) (model.source as { solved?: SolvedSourceModel | null }).solved = compileSolvedSource(preset, model.source);

  const species: SpeciesInfo[] = preset.ions.species.flatMap((s, parent): SpeciesInfo[] => {
    const label = s.label ?? (s.formula ? `${s.formula} ${s.adduct}` : `m/z ${s.mz}${s.charge > 1 ? ` (${s.charge}${preset.polarity === 'positive' ? '+' : '−'})` : ''}`);
    if (s.formula) {
      // Validated on load, so the chemistry resolves here.
      const chem = resolveChemistry({ formula: s.formula, adduct: s.adduct ?? 'protonated', charge: s.charge, polarity: preset.polarity });
      if (chem.ok && s.isotopes === 'monoisotopic') return [{ label, mz: chem.value.monoisotopicMz, charge: s.charge, abundance: s.abundance, parent }];
      if (chem.ok) return isotopeBlocks(chem.value, label, s.abundance, s.charge, parent);
    }
    return [{ label, mz: s.mz, charge: s.charge, abundance: s.abundance, parent }];
  });
  const population: PopulationSpec = {
    species,
    totalIons: preset.run.ions,
    seed: preset.run.seed,
    startPosition: positionSpec(preset.ions.startPosition),
    startVelocity: velocitySpec(preset.ions.startVelocity),
    transverse: transverseSpec(preset.ions.transverse),
    firstStage_m: stageLengths_m[0],
  };
  return { model, population };
}

function positionSpec(p: Preset['ions']['startPosition']): StartPositionSpec {
  switch (p.kind) {
    case 'surface':
      return { kind: 'surface', z_m: mmToM(p.position_mm) };
    case 'uniform':
      return { kind: 'uniform', from_m: mmToM(p.from_mm), to_m: mmToM(p.to_mm) };
    case 'gaussian':
      return { kind: 'gaussian', mean_m: mmToM(p.mean_mm), sd_m: mmToM(p.sd_mm) };
  }
}

function velocitySpec(v: Preset['ions']['startVelocity']): StartVelocitySpec {
  if (v.kind === 'normal') {
    return {
      kind: 'normal',
      mean_m_per_s: v.mean_m_per_s,
      sd_m_per_s: v.sd_m_per_s,
      minimum_m_per_s: v.minimum_m_per_s ?? -Infinity,
    };
  }
  if (v.kind === 'thermal') return { kind: 'thermal', temperature_K: v.temperature_K };
  return { kind: 'energy', mean_J: v.mean_eV * ELEMENTARY_CHARGE_C, sd_J: v.sd_eV * ELEMENTARY_CHARGE_C };
}

function transverseSpec(t: Preset['ions']['transverse']): TransverseSpec {
  if (!t) return NO_TRANSVERSE;
  return {
    spotRadius_m: mmToM(t.spotRadius_mm),
    velocity: t.velocity.kind === 'angular' ? { kind: 'angular', sd_rad: t.velocity.sd_mrad * 1e-3 } : t.velocity,
    beamEnergy_J: t.beamEnergy_eV * ELEMENTARY_CHARGE_C,
    beamEnergySd_J: t.beamEnergySd_eV * ELEMENTARY_CHARGE_C,
  };
}

type Extraction = Preset['source']['extraction'];

function toTable(points: readonly (readonly [number, number])[]): WaveformTable {
  return { time_s: Float64Array.from(points, (p) => nsToS(p[0])), potential_V: Float64Array.from(points, (p) => p[1]) };
}

function riseModel(extraction: Extraction, planeCount: number, twoStage: boolean): RiseModel {
  if (extraction.mode !== 'delayed' || !extraction.rise) return { kind: 'step' };
  const rise = extraction.rise;
  switch (rise.shape) {
    case 'step':
      return { kind: 'step' };
    case 'linear':
      return { kind: 'linear', riseTime_s: nsToS(rise.riseTime_ns) };
    case 'exponential':
      return { kind: 'exponential', timeConstant_s: nsToS(rise.timeConstant_ns) };
    case 'table': {
      const tables: (WaveformTable | null)[] = new Array(planeCount).fill(null);
      if (rise.repeller) tables[0] = toTable(rise.repeller);
      if (rise.extractionGrid && twoStage) tables[1] = toTable(rise.extractionGrid);
      return { kind: 'table', tables };
    }
  }
}

/** A tabulated electrode holds its first value before the table and its last one after it. */
function applyTables(planes: ElectrodeDrive[], extraction: Extraction): ElectrodeDrive[] {
  if (extraction.mode !== 'delayed' || extraction.rise?.shape !== 'table') return planes;
  const rise = extraction.rise;
  return planes.map((p, j) => {
    const table = j === 0 ? rise.repeller : j === 1 && planes.length === 3 ? rise.extractionGrid : undefined;
    return table ? { hold_V: table[0][1], final_V: table[table.length - 1][1] } : p;
  });
}

function mirrorModel(mirror: Preset['mirror'], driftPotential: number): MirrorModel | null {
  switch (mirror.type) {
    case 'none':
      return null;
    case 'solved':
      return {
        stages: [],
        profile: null,
        returnLength_m: mmToM(mirror.returnLength_mm),
        entranceGridTransmission: 1,
        innerGridTransmission: [],
        solved: compileSolvedMirror(mirror, driftPotential),
      };
    case 'single':
    case 'dual':
      return {
        stages:
          mirror.type === 'single'
            ? [{ length_m: mmToM(mirror.depth_mm), exitPotential_V: mirror.backPlate_V }]
            : [
                { length_m: mmToM(mirror.deceleratingLength_mm), exitPotential_V: mirror.intermediateGrid_V },
                { length_m: mmToM(mirror.reflectingLength_mm), exitPotential_V: mirror.backPlate_V },
              ],
        profile: null,
        returnLength_m: mmToM(mirror.returnLength_mm),
        entranceGridTransmission: mirror.entranceGridTransmission ?? 1,
        innerGridTransmission: mirror.type === 'dual' ? [mirror.intermediateGridTransmission ?? 1] : [],
      };
    case 'profile': {
      const p = mirror.profile;
      const base = {
        returnLength_m: mmToM(mirror.returnLength_mm),
        entranceGridTransmission: mirror.entranceGridTransmission ?? 1,
        innerGridTransmission: [],
      };
      if (p.kind === 'table') {
        // A piecewise-linear potential is a stack of uniform stages: exact in closed form, without grids.
        const pts = p.points[0][0] > 0 ? [[0, driftPotential] as const, ...p.points] : p.points;
        const stages = [];
        for (let i = 1; i < pts.length; i++) stages.push({ length_m: mmToM(pts[i][0] - pts[i - 1][0]), exitPotential_V: pts[i][1] });
        return { ...base, stages, profile: null, innerGridTransmission: stages.slice(1).map(() => 1) };
      }
      const coefficients_V = p.kind === 'harmonic' ? Float64Array.of(0, p.backPlate_V - driftPotential) : Float64Array.from(p.coefficients_V);
      return { ...base, stages: [], profile: { depth_m: mmToM(mirror.depth_mm), coefficients_V } };
    }
  }
}
