/**
 * The drawn paths are what the run computed: the same ions flown through the driver without an
 * observer (as the run flies them) end at the same time and position as the drawn path, and each
 * path is continuous and passes through every region boundary on its way. One preset of each kind:
 * closed-form dual-stage reflectron, rising (exponential) extraction pulse, solved gridless mirror.
 */
import { describe, expect, it } from 'vitest';
import { allocateTraceResult } from '../../../src/ions/ensemble';
import { samplePopulation } from '../../../src/ions/population';
import { applyDetectorPlane } from '../../../src/physics/exactEngine';
import { Fate } from '../../../src/physics/fates';
import { traceEnsemble } from '../../../src/physics/regions/driver';
import { chargeToMassIn, createFlightPlan, prepareFlightPlan } from '../../../src/physics/regions/plan';
import { compilePreset, type CompiledPreset } from '../../../src/presets/compile';
import { validatePreset } from '../../../src/presets/load';
import { traceDrawnIons } from '../../../src/simulation/scene/drawnPaths';
import { demoPreset } from '../../ui/helpers';

function risingPulse(): CompiledPreset {
  const doc = structuredClone(demoPreset('demo-reflectron-dual')) as unknown as { source: { extraction: Record<string, unknown> } };
  doc.source.extraction.rise = { shape: 'exponential', timeConstant_ns: 15 };
  const checked = validatePreset(doc);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  return compilePreset(checked.value);
}

const few = { packetIonsPerSpecies: 12, pathsPerSpecies: 4 };

const cases: [string, () => CompiledPreset, boolean][] = [
  ['closed-form dual-stage reflectron', () => compilePreset(demoPreset('demo-reflectron-dual')), false],
  ['rising extraction pulse', risingPulse, true],
  ['solved gridless mirror', () => compilePreset(demoPreset('demo-gridless-mirror')), true],
];

describe('drawn paths come from the run’s own flight', () => {
  for (const [label, compiledOf, chords] of cases) {
    it(`${label}: each path ends at the run's flight time on the detector plane, through every region boundary`, () => {
      const compiled = compiledOf();
      const { paths, chords: drawnAsChords } = traceDrawnIons(compiled, few);
      expect(drawnAsChords).toBe(chords);
      // The same sample as the drawn ions, flown the run's way (no observer: block path where closed-form).
      const species = compiled.population.species.slice(0, paths.speciesCount).map((s) => ({ ...s, abundance: 1 }));
      const ens = samplePopulation({ ...compiled.population, species, totalIons: paths.count });
      const run = allocateTraceResult(ens.count);
      traceEnsemble(compiled.model, ens, run);
      applyDetectorPlane(compiled.model, ens, run);
      let detected = 0;
      for (let s = 0; s < ens.species.length; s++) {
        const plan = prepareFlightPlan(createFlightPlan(), compiled.model, chargeToMassIn(compiled.model, ens.species[s].mz));
        const sourceExit = plan.sourcePlane_m[plan.sourceStageCount];
        const mirrorEntrance = sourceExit + plan.driftLength_m;
        const mirrored = compiled.model.mirror !== null;
        const detectorPlane = mirrored ? mirrorEntrance - plan.returnLength_m - plan.postGap_m : mirrorEntrance + plan.postGap_m;
        const planes = [...Array.from(plan.sourcePlane_m.subarray(1, plan.sourceStageCount + 1)), mirrorEntrance, detectorPlane];
        for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
          expect(paths.fate[i]).toBe(run.fate[i]);
          expect(Math.abs(paths.flightTime_s[i] - run.flightTime_s[i])).toBeLessThanOrEqual(1e-12 * run.flightTime_s[i]);
          if (run.fate[i] !== Fate.DETECTED) continue;
          detected++;
          const first = paths.segmentStart[i];
          const last = paths.segmentStart[i + 1] - 1;
          const xEnd = (k: number) => paths.x0_m[k] + paths.v0_m_per_s[k] * paths.dt_s[k] + 0.5 * paths.a_m_per_s2[k] * paths.dt_s[k] * paths.dt_s[k];
          const tEnd = (k: number) => paths.t0_s[k] + paths.dt_s[k];
          // Ends where and when the run's ion did: on the detector plane at its flight time.
          expect(Math.abs(tEnd(last) - run.flightTime_s[i])).toBeLessThanOrEqual(1e-12 * run.flightTime_s[i]);
          expect(xEnd(last)).toBeCloseTo(detectorPlane, 9);
          // Continuous in time and place from segment to segment.
          for (let k = first; k < last; k++) {
            expect(Math.abs(paths.t0_s[k + 1] - tEnd(k))).toBeLessThanOrEqual(1e-12 * tEnd(k));
            expect(paths.x0_m[k + 1]).toBeCloseTo(xEnd(k), 9);
          }
          // Through each region boundary: some segment starts or ends on every plane the ion passes.
          for (const plane of planes) {
            let on = false;
            for (let k = first; k <= last && !on; k++) on = Math.abs(paths.x0_m[k] - plane) < 1e-9 || Math.abs(xEnd(k) - plane) < 1e-9;
            expect(on, `ion ${i} passes the plane at ${plane} m`).toBe(true);
          }
          // In a reflectron it goes in past the entrance grid and comes back out.
          if (mirrored) {
            let deepest = -Infinity;
            for (let k = first; k <= last; k++) {
              const a = paths.a_m_per_s2[k];
              const v = paths.v0_m_per_s[k];
              // A chord through the whole mirror ends where it began: its apex is the turn.
              const apex = a < 0 && v > 0 && v / -a < paths.dt_s[k] ? paths.x0_m[k] + (v * v) / (-2 * a) : -Infinity;
              deepest = Math.max(deepest, paths.x0_m[k], xEnd(k), apex);
            }
            expect(deepest).toBeGreaterThan(mirrorEntrance);
          }
        }
      }
      expect(detected).toBeGreaterThan(paths.count / 2);
      // The transverse start the page draws from is the run's sample.
      for (let i = 0; i < ens.count; i++) expect(paths.y0_mm[i]).toBe(ens.y0_m[i] * 1e3);
    });
  }
});
