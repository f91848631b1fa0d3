/**
 * Solved-source tracing benchmark, as a user's run does it: the population of
 * presets/demo-aperture-source.json (four species, 2·10^4 ions as the app runs it, seed 1) through
 * the linear analyser whose delayed-extraction source has apertured extraction and ground plates
 * (field solved on a 0.1 mm mesh, repeller pulse by superposition of unit fields), single thread,
 * through the driver as `simulate` calls it.
 *
 * Reported:
 *  source_trace_ions_per_s        ions per wall second of the run's trace as a user's run does it
 *                                 (the source's transfer map where it validates, src/physics/solvedSourceMap.ts;
 *                                 a fresh map designed, fitted and validated in each pass), best of three passes
 *  source_trace_direct_ions_per_s every ion traced directly through the source (DOPRI5 rtol 1e-7): the same run
 *  source_trace_cpu_ions_per_s, source_trace_direct_cpu_ions_per_s: the same per CPU second of this
 *                                 process (steadier than wall time on a shared machine)
 *  source_trace_map_fraction      share of the ions that the map carried through the source
 *  source_trace_rms_rel_err       rms error of the flight time of the user's run against a reference run
 *                                 (the source traced at rtol 1e-12) of every 20th ion, divided by the
 *                                 reference time inside the source (so the figure is the relative error
 *                                 of the source's time, the drift's change through the exit speed
 *                                 included; as field_trace_rms_rel_err does for the mirror);
 *                                 source_trace_max_rel_err the largest
 *  source_trace_direct_rms_rel_err, source_trace_direct_max_rel_err: the same for the direct run
 * Runnable alone: npx tsx bench/sourceTraceBench.ts
 */
import { readFileSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import { allocateTraceResult } from '../src/ions/ensemble';
import { samplePopulation } from '../src/ions/population';
import type { AnalyserModel } from '../src/physics/analyser';
import { Fate } from '../src/physics/fates';
import { createIonState, startIonState } from '../src/physics/regions/contract';
import { createFlight, traceEnsemble } from '../src/physics/regions/driver';
import { tracedSourcePass } from '../src/physics/regions/solvedKernels';
import { SolvedPrecision } from '../src/physics/regions/solvedTracer';
import type { SourceMapReport } from '../src/physics/solvedSourceMap';
import { compilePreset } from '../src/presets/compile';
import { validatePreset } from '../src/presets/load';

const round = (x: number, digits = 4) => Number(x.toPrecision(digits));

export function benchSourceTrace(ions = 20000, passes = 3): Record<string, number> {
  const doc: unknown = JSON.parse(readFileSync(new URL('../presets/demo-aperture-source.json', import.meta.url), 'utf8'));
  const valid = validatePreset(doc);
  if (!valid.ok) throw new Error(JSON.stringify(valid.issues));
  const compiled = compilePreset(valid.value);
  const source = compiled.model.source.solved;
  if (!source) throw new Error('the demo preset has no solved source');
  const ens = samplePopulation({ ...compiled.population, totalIons: ions });
  const userModel: AnalyserModel = compiled.model;
  const directModel: AnalyserModel = { ...compiled.model, mapSolvedSource: false };
  const time = (model: AnalyserModel) => {
    const out = allocateTraceResult(ens.count);
    let best = Infinity;
    let cpu_s = Infinity;
    let map: SourceMapReport | null = null;
    for (let p = 0; p < passes; p++) {
      const cpu0 = process.cpuUsage();
      const t0 = performance.now();
      traceEnsemble(model, ens, out, { onSourceMap: (r) => (map = r) });
      best = Math.min(best, (performance.now() - t0) / 1000);
      const cpu = process.cpuUsage(cpu0);
      cpu_s = Math.min(cpu_s, (cpu.user + cpu.system) / 1e6);
    }
    return { out, wall_s: best, cpu_s, map: map as SourceMapReport | null };
  };
  const warm = samplePopulation({ ...compiled.population, totalIons: 400 });
  traceEnsemble(directModel, warm, allocateTraceResult(warm.count)); // JIT warm-up
  const direct = time(directModel);
  const user = time(userModel);

  // Reference: every 20th ion, the source traced at REFERENCE precision; its time inside recorded.
  let sourceTime = 0;
  const reference = createFlight(directModel, { sourceMap: tracedSourcePass(source, SolvedPrecision.REFERENCE, (inside_s) => (sourceTime = inside_s)) });
  const st = createIonState();
  const err = { user: [0, 0], direct: [0, 0] };
  let count = 0;
  for (let s = 0; s < ens.species.length; s++) {
    reference.setMz(ens.species[s].mz);
    for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i += 20) {
      startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i], ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
      reference.fly(st);
      if (st.fate !== Fate.DETECTED || user.out.fate[i] !== Fate.DETECTED || direct.out.fate[i] !== Fate.DETECTED) continue;
      const eu = Math.abs(user.out.flightTime_s[i] - st.t) / sourceTime;
      const ed = Math.abs(direct.out.flightTime_s[i] - st.t) / sourceTime;
      err.user[0] += eu * eu;
      err.user[1] = Math.max(err.user[1], eu);
      err.direct[0] += ed * ed;
      err.direct[1] = Math.max(err.direct[1], ed);
      count++;
    }
  }
  const map = user.map;
  return {
    source_trace_ions_per_s: round(ions / user.wall_s),
    source_trace_direct_ions_per_s: round(ions / direct.wall_s),
    source_trace_cpu_ions_per_s: round(ions / user.cpu_s),
    source_trace_direct_cpu_ions_per_s: round(ions / direct.cpu_s),
    source_trace_map_fraction: round(map ? map.mapped / ens.count : 0, 3),
    source_trace_rms_rel_err: round(Math.sqrt(err.user[0] / count), 3),
    source_trace_max_rel_err: round(err.user[1], 3),
    source_trace_direct_rms_rel_err: round(Math.sqrt(err.direct[0] / count), 3),
    source_trace_direct_max_rel_err: round(err.direct[1], 3),
  };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const ions = Number(process.argv[2] ?? 20000);
  for (const [key, value] of Object.entries(benchSourceTrace(ions))) console.log(`${key}: ${value}`);
}
