import * as Comlink from 'comlink';
import type { Endpoint } from 'comlink';
import { describe, expect, it } from 'vitest';
import { Fate } from '../../../src/physics/fates';
import { createExactPlan, prepareExactPlan } from '../../../src/physics/exactEngine';
import { createTrajectory, MAX_SEGMENTS, Region, traceTrajectory } from '../../../src/physics/trajectory';
import { samplePopulation } from '../../../src/ions/population';
import { compilePreset } from '../../../src/presets/compile';
import { validatePreset } from '../../../src/presets/load';
import type { Preset } from '../../../src/presets/schema';
import type { RunOutput } from '../../../src/simulation/runContract';
import { runOutputTransferables, runRequest } from '../../../src/simulation/runOutput';
import { createWorkerApi, type EngineWorkerApi } from '../../../src/tuning/workerApi';
import { traceDrawnPaths } from '../../../src/simulation/scene/drawnPaths';
import { MAX_PATH_SEGMENTS, PACKET_IONS_PER_SPECIES, PATHS_PER_SPECIES, PathRegion } from '../../../src/simulation/scene/sceneData';
import { DEMO_FILES, demoPreset } from '../../ui/helpers';

function forcedIntegrator(preset: Preset): Preset {
  const checked = validatePreset({ ...JSON.parse(JSON.stringify(preset)), run: { ...preset.run, engine: 'integrator' } });
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  return checked.value;
}

describe('drawn ions computed with the run', () => {
  it('the page-side format holds what the path recorder writes (region codes, segments per ion)', () => {
    expect(PathRegion).toEqual(Region);
    expect(MAX_SEGMENTS).toBeLessThanOrEqual(MAX_PATH_SEGMENTS);
  });

  it('closed-form setups: each drawn ion has the exact engine flight time, equal to its recorded path to the bit', () => {
    for (const name of ['demo-linear-delayed', 'demo-reflectron-dual'] as const) {
      const compiled = compilePreset(demoPreset(name));
      const paths = traceDrawnPaths(compiled);
      expect(paths.count).toBe(PACKET_IONS_PER_SPECIES * compiled.population.species.length);
      // An independent walk with the path recorder over the same sample.
      const ens = samplePopulation({ ...compiled.population, species: compiled.population.species.map((s) => ({ ...s, abundance: 1 })), totalIons: paths.count });
      const plan = createExactPlan();
      const tr = createTrajectory();
      let detected = 0;
      for (let s = 0; s < ens.species.length; s++) {
        prepareExactPlan(plan, compiled.model, ens.species[s].mz);
        for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
          traceTrajectory(tr, plan, ens.z0_m[i], ens.vz0_m_per_s[i]);
          expect(paths.flightTime_s[i]).toBe(tr.flightTime_s);
          // The run also applies the detector plane: an ion on target may still miss the detector's face.
          if (tr.fate === Fate.DETECTED) expect([Fate.DETECTED, Fate.MISSED_DETECTOR]).toContain(paths.fate[i]);
          else expect(paths.fate[i]).toBe(tr.fate);
          expect(paths.segmentStart[i + 1] - paths.segmentStart[i]).toBe(tr.count);
          if (paths.fate[i] === Fate.DETECTED) detected++;
        }
      }
      expect(detected).toBeGreaterThan(paths.count / 2);
      for (let s = 0; s < ens.species.length; s++) {
        let drawn = 0;
        for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) drawn += paths.drawPath[i];
        expect(drawn).toBe(PATHS_PER_SPECIES);
      }
    }
  });

  it('a setup run with the integrator gives its drawn ions the integrator flight times, drawn as chords ending there', () => {
    const exact = compilePreset(demoPreset('demo-reflectron-single'));
    const integrated = compilePreset(forcedIntegrator(demoPreset('demo-reflectron-single')));
    const few = { packetIonsPerSpecies: 20, pathsPerSpecies: 5 };
    const a = traceDrawnPaths(exact, few);
    const b = traceDrawnPaths(integrated, few);
    expect(b.count).toBe(20 * exact.population.species.length);
    let differ = 0;
    for (let i = 0; i < b.count; i++) {
      // The same ions (same seed and sample).
      expect(b.y0_mm[i]).toBe(a.y0_mm[i]);
      expect(b.fate[i]).toBe(a.fate[i]);
      if (a.fate[i] !== Fate.DETECTED) continue;
      const last = b.segmentStart[i + 1] - 1;
      expect(b.t0_s[last] + b.dt_s[last]).toBeCloseTo(b.flightTime_s[i], 15);
      // Integrated (rtol-controlled) against closed form: close, but not the same numbers.
      expect(Math.abs(b.flightTime_s[i] - a.flightTime_s[i]) / a.flightTime_s[i]).toBeLessThan(1e-6);
      if (b.flightTime_s[i] !== a.flightTime_s[i]) differ++;
    }
    expect(differ).toBeGreaterThan(0);
  });

  it('refuses drawn-ion counts out of range, naming the field', () => {
    const compiled = compilePreset(demoPreset('demo-linear-delayed'));
    expect(() => traceDrawnPaths(compiled, { packetIonsPerSpecies: 0 })).toThrow(/scene.packetIonsPerSpecies/);
    expect(() => traceDrawnPaths(compiled, { packetIonsPerSpecies: 10, pathsPerSpecies: 11 })).toThrow(/scene.pathsPerSpecies/);
  });

  it('a run asked for its scene and focus scan returns them, with every buffer transferable once; without asking, neither', () => {
    for (const name of DEMO_FILES.slice(0, 3)) {
      const preset = demoPreset(name);
      const plain = runRequest({ preset, ions: 500 });
      expect(plain.scene).toBeUndefined();
      expect(plain.focusScan).toBeUndefined();
      const out = runRequest({ preset, ions: 500, scene: {}, focusScan: true });
      expect(out.scene!.layout.electrodes.length).toBeGreaterThan(2);
      expect(out.scene!.paths.count).toBeGreaterThan(0);
      expect(out.focusScan!.scannedMz[0]).toBeGreaterThan(0);
      const buffers = runOutputTransferables(out);
      expect(new Set(buffers).size).toBe(buffers.length);
      // The run's own figures do not change when the extras are asked for.
      expect(Array.from(out.flightTime_s)).toEqual(Array.from(plain.flightTime_s));
    }
  });
});

describe('the scene through a worker channel', () => {
  it('crosses a comlink MessageChannel by transfer and arrives equal to the in-process run', async () => {
    const { port1, port2 } = new MessageChannel();
    const sent: RunOutput[] = [];
    Comlink.expose(
      createWorkerApi((r) => {
        const out = runRequest(r);
        sent.push(out);
        return Comlink.transfer(out, runOutputTransferables(out));
      }),
      port1 as unknown as Endpoint,
    );
    const remote = Comlink.wrap<EngineWorkerApi>(port2 as unknown as Endpoint);
    const preset = demoPreset('demo-reflectron-dual');
    const got = await remote.run({ preset, ions: 300, scene: {}, focusScan: true });
    const local = runRequest({ preset, ions: 300, scene: {}, focusScan: true });
    expect(got.scene!.layout).toEqual(local.scene!.layout);
    expect(got.focusScan).toEqual(local.focusScan);
    expect(Array.from(got.scene!.paths.t0_s)).toEqual(Array.from(local.scene!.paths.t0_s));
    expect(Array.from(got.scene!.paths.fate)).toEqual(Array.from(local.scene!.paths.fate));
    // Transferred, not copied: the sender's buffers are detached.
    expect(sent[0].scene!.paths.t0_s.byteLength).toBe(0);
    port1.close();
    port2.close();
  });
});
