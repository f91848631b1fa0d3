/**
 * Solved-field tracing benchmark, as a user's run does it: the population of
 * presets/demo-gridless-mirror.json (its own source, both species, 2·10^4 ions as the app runs it,
 * seed 1) through the analyser with the gridless ring-stack mirror (30 rings on a divider, 0.5 mm
 * mesh, solved field), single thread, with `traceMixed` as `simulate` calls it.
 *
 * Reported:
 *  field_trace_ions_per_s        ions per wall second of the run's trace as a user's run does it
 *                                (the mirror's transfer map where it validates, src/physics/solvedMirrorMap.ts;
 *                                a fresh map fitted and validated in each pass), best of three passes
 *  field_trace_direct_ions_per_s every ion traced directly through the mirror (DOPRI5 rtol 1e-7): the same run
 *  field_trace_cpu_ions_per_s, field_trace_direct_cpu_ions_per_s: the same per CPU second of this
 *                                process (steadier than wall time on a shared machine)
 *  field_trace_map_fraction      share of the ions that the map carried through the mirror
 *  field_trace_rms_rel_err       rms error of the flight time of the user's run against a reference run
 *                                (the mirror traced at rtol 1e-12) of every 10th ion, divided by the
 *                                reference time inside the mirror (so the figure is the relative error
 *                                of the mirror's time, the return drift's change through the exit
 *                                direction included); field_trace_max_rel_err the largest
 *  field_trace_direct_rms_rel_err, field_trace_direct_max_rel_err: the same for the direct run
 *  field_trace_changed_rms_rel_err, _max_: the same over the reference ions whose flight time the
 *                                map changed (mapped, or traced at FINE precision for validation);
 *                                field_trace_changed_direct_rms_rel_err, _max_: the direct run's on those ions
 *  field_trace_steps_per_ion, field_trace_rejected_per_ion, field_trace_evals_per_ion: integration
 *                                steps, rejections and field evaluations per directly traced ion
 *  field_trace_struck            ions of the run that struck an electrode
 *  field_trace_struck_by_map     of those, the ions the map's strike pre-test took as struck on the entrance
 *                                electrode (not traced); field_trace_struck_back_by_map: on the back plate
 *  field_trace_low_bp_*          the speeds, map fraction and errors for the same run with the back plate at
 *                                LOW_BACK_PLATE_V (where the map is split by energy, see solvedMirrorMap.ts)
 * Runnable alone: npx tsx bench/fieldTraceBench.ts [back plate potential (V): that setting only]
 */
import { readFileSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import { allocateTraceResult } from '../src/ions/ensemble';
import { samplePopulation } from '../src/ions/population';
import type { AnalyserModel } from '../src/physics/analyser';
import { Fate } from '../src/physics/fates';
import { createIonState, startIonState } from '../src/physics/regions/contract';
import { createFlight } from '../src/physics/regions/driver';
import { tracedMirrorPass } from '../src/physics/regions/solvedKernels';
import { SolvedPrecision, solvedCounters } from '../src/physics/regions/solvedTracer';
import type { MirrorMapReport } from '../src/physics/solvedMirrorMap';
import { traceMixed } from '../src/physics/tracer';
import { compilePreset } from '../src/presets/compile';
import { validatePreset } from '../src/presets/load';

const round = (x: number, digits = 4) => Number(x.toPrecision(digits));

/** The figures of the demo as shipped, and (prefix field_trace_low_bp_) of the same run with the back plate at LOW_BACK_PLATE_V. */
export function benchFieldTrace(ions = 20000): Record<string, number> {
  const low = benchFieldTraceAt(ions, LOW_BACK_PLATE_V);
  const keep = ['ions_per_s', 'direct_ions_per_s', 'cpu_ions_per_s', 'direct_cpu_ions_per_s', 'map_fraction', 'struck_back_by_map', 'rms_rel_err', 'max_rel_err', 'direct_rms_rel_err', 'direct_max_rel_err', 'changed_rms_rel_err', 'changed_max_rel_err', 'changed_direct_rms_rel_err', 'changed_direct_max_rel_err'];
  return { ...benchFieldTraceAt(ions), ...Object.fromEntries(keep.map((k) => [`field_trace_low_bp_${k}`, low[`field_trace_${k}`]])) };
}

/**
 * A back plate potential where ions of the upper energies turn close to the back plate, and the
 * whole-domain map is refused (the page benchmark's solved-field changes type 5580–5660 V).
 */
export const LOW_BACK_PLATE_V = 5620;

/** The figures at the demo's settings, or with its back plate at `backPlate_V`. */
export function benchFieldTraceAt(ions = 20000, backPlate_V?: number): Record<string, number> {
  const doc = JSON.parse(readFileSync(new URL('../presets/demo-gridless-mirror.json', import.meta.url), 'utf8')) as { mirror: { backPlate: { potential_V: number } } };
  if (backPlate_V !== undefined) doc.mirror.backPlate.potential_V = backPlate_V;
  const valid = validatePreset(doc);
  if (!valid.ok) throw new Error(JSON.stringify(valid.issues));
  const compiled = compilePreset(valid.value);
  const mirror = compiled.model.mirror?.solved;
  if (!mirror) throw new Error('the demo preset has no solved mirror');
  const ens = samplePopulation({ ...compiled.population, totalIons: ions });
  const userModel: AnalyserModel = compiled.model;
  const directModel: AnalyserModel = { ...compiled.model, mapSolvedMirror: false };
  const time = (model: AnalyserModel, passes: number) => {
    const out = allocateTraceResult(ens.count);
    let best = Infinity;
    let cpu_s = Infinity;
    let map: MirrorMapReport | null = null;
    for (let p = 0; p < passes; p++) {
      const cpu0 = process.cpuUsage();
      const t0 = performance.now();
      map = traceMixed(model, ens, out);
      best = Math.min(best, (performance.now() - t0) / 1000);
      const cpu = process.cpuUsage(cpu0);
      cpu_s = Math.min(cpu_s, (cpu.user + cpu.system) / 1e6);
    }
    return { out, wall_s: best, cpu_s, map };
  };
  traceMixed(directModel, samplePopulation({ ...compiled.population, totalIons: 500 }), allocateTraceResult(500)); // JIT warm-up
  solvedCounters.steps = solvedCounters.rejected = solvedCounters.evaluations = 0;
  const direct = time(directModel, 3);
  const counters = { steps: solvedCounters.steps / 3, rejected: solvedCounters.rejected / 3, evaluations: solvedCounters.evaluations / 3 };
  const user = time(userModel, 3);
  const map = user.map;

  // Reference: every 10th ion, the mirror traced at REFERENCE precision; its time inside recorded.
  let mirrorTime = 0; // set by each reference pass
  const reference = createFlight(directModel, { engine: 'mixed', mirrorMap: tracedMirrorPass(mirror, SolvedPrecision.REFERENCE, (inside_s) => (mirrorTime = inside_s)) });
  const st = createIonState();
  const err = { user: [0, 0], direct: [0, 0], changed: [0, 0], changedDirect: [0, 0] };
  let count = 0;
  let changed = 0;
  for (let s = 0; s < ens.species.length; s++) {
    reference.setMz(ens.species[s].mz);
    for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i += 10) {
      startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i], ens.x0_m[i], ens.y0_m[i], ens.vx0_m_per_s[i], ens.vy0_m_per_s[i]);
      reference.fly(st);
      if (st.fate !== Fate.DETECTED || user.out.fate[i] !== Fate.DETECTED || direct.out.fate[i] !== Fate.DETECTED) continue;
      const eu = Math.abs(user.out.flightTime_s[i] - st.t) / mirrorTime;
      const ed = Math.abs(direct.out.flightTime_s[i] - st.t) / mirrorTime;
      err.user[0] += eu * eu;
      err.user[1] = Math.max(err.user[1], eu);
      err.direct[0] += ed * ed;
      err.direct[1] = Math.max(err.direct[1], ed);
      count++;
      // The ions the map carried (or a FINE validation trace): the rest are the direct trace itself.
      if (user.out.flightTime_s[i] === direct.out.flightTime_s[i]) continue;
      err.changed[0] += eu * eu;
      err.changed[1] = Math.max(err.changed[1], eu);
      err.changedDirect[0] += ed * ed;
      err.changedDirect[1] = Math.max(err.changedDirect[1], ed);
      changed++;
    }
  }
  let struck = 0;
  for (let i = 0; i < ens.count; i++) if (user.out.fate[i] === Fate.STRUCK_ELECTRODE) struck++;
  return {
    field_trace_ions_per_s: round(ions / user.wall_s),
    field_trace_direct_ions_per_s: round(ions / direct.wall_s),
    field_trace_cpu_ions_per_s: round(ions / user.cpu_s),
    field_trace_direct_cpu_ions_per_s: round(ions / direct.cpu_s),
    field_trace_map_fraction: round(map ? map.mapped / ens.count : 0, 3),
    field_trace_rms_rel_err: round(Math.sqrt(err.user[0] / count), 3),
    field_trace_max_rel_err: round(err.user[1], 3),
    field_trace_direct_rms_rel_err: round(Math.sqrt(err.direct[0] / count), 3),
    field_trace_direct_max_rel_err: round(err.direct[1], 3),
    field_trace_changed_rms_rel_err: round(Math.sqrt(err.changed[0] / Math.max(changed, 1)), 3),
    field_trace_changed_max_rel_err: round(err.changed[1], 3),
    field_trace_changed_direct_rms_rel_err: round(Math.sqrt(err.changedDirect[0] / Math.max(changed, 1)), 3),
    field_trace_changed_direct_max_rel_err: round(err.changedDirect[1], 3),
    field_trace_steps_per_ion: round(counters.steps / ens.count),
    field_trace_rejected_per_ion: round(counters.rejected / ens.count),
    field_trace_evals_per_ion: round(counters.evaluations / ens.count),
    field_trace_struck: struck,
    field_trace_struck_by_map: map ? map.struckByMap : 0,
    field_trace_struck_back_by_map: map ? map.struckBackByMap : 0,
  };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const at = process.argv[2];
  for (const [key, value] of Object.entries(at === undefined ? benchFieldTrace() : benchFieldTraceAt(20000, Number(at)))) console.log(`${key}: ${value}`);
}
