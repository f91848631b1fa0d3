/**
 * Ion-load figures on problem B1's analyser: `space_charge_ions_per_s`, sheets traced per second by
 * the charged-sheet engine at 10^3 ions per shot (1 mm beam radius, 4 shots), and
 * `counting_shots_per_s`, shots per second of counting detection (4 channels, 5 ns dead time,
 * 2 ions per shot on average, 10^5 ions) with the dead-time correction. Best of a few passes.
 */
import { simulateDetection } from '../src/analysis/acquisition/detection';
import { partitionShots } from '../src/analysis/acquisition/shots';
import { allocateTraceResult } from '../src/ions/ensemble';
import { samplePopulation } from '../src/ions/population';
import { traceEnsemble } from '../src/physics/regions/driver';
import { traceWithSpaceCharge } from '../src/physics/spaceCharge/traceShots';
import { compilePreset } from '../src/presets/compile';
import { validatePreset } from '../src/presets/load';
import { b1Preset } from './problems/b1';

function best(passes: number, work: () => void): number {
  let fastest = Infinity;
  for (let p = 0; p < passes; p++) {
    const t0 = performance.now();
    work();
    fastest = Math.min(fastest, (performance.now() - t0) / 1000);
  }
  return fastest;
}

export function benchIonLoad(): Record<string, number> {
  const loaded = validatePreset({ ...b1Preset, run: { ions: 100_000, seed: 5 } });
  if (!loaded.ok) throw new Error('B1 preset invalid');
  const { model, population } = compilePreset(loaded.value);

  const cloud = samplePopulation({ ...population, totalIons: 4000 });
  const cloudShots = partitionShots(cloud, 1000, 'fixed', 5);
  const sheets = allocateTraceResult(cloud.count);
  const scSeconds = best(2, () => void traceWithSpaceCharge(model, cloud, cloudShots, Math.PI * 1e-6, sheets));

  const ens = samplePopulation(population);
  const trace = allocateTraceResult(ens.count);
  traceEnsemble(model, ens, trace);
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < ens.count; i++) if (trace.fate[i] === 1) [lo, hi] = [Math.min(lo, trace.flightTime_s[i]), Math.max(hi, trace.flightTime_s[i])];
  const partition = partitionShots(ens, 2, 'poisson', 5);
  const input = { arrival_s: trace.flightTime_s, fate: trace.fate, weight: trace.weight, finalSpeed_m_per_s: trace.finalSpeed_m_per_s, blockStart: ens.speciesStart, partition };
  const settings = { pulseFwhm_s: 1e-9, detectorJitterSd_s: 0.1e-9, triggerJitterSd_s: 0.1e-9, shots: 1, seed: 5, sampleInterval_s: 0.25e-9, recordStart_s: lo - 20e-9, recordLength_s: hi - lo + 40e-9 };
  const countingSeconds = best(3, () => void simulateDetection(input, { detector: { mode: 'counting', deadTime_s: 5e-9, channels: 4, correction: true }, yieldLaw: null, settings }));
  return {
    space_charge_ions_per_s: Math.round(cloud.count / scSeconds),
    counting_shots_per_s: Math.round(partition.shots / countingSeconds),
  };
}
