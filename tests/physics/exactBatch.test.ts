/**
 * The exact engine region by region (src/physics/exactBatch.ts) against the same engine ion by
 * ion (the driver's closed-form kernels flown one ion at a time, Flight.fly): a change of loop order only, so flight time, fate, final speed
 * and weight must agree to the bit, on the shipped presets and on generated analysers (fast-check)
 * that reach every fate: repeller strikes, ions leaving during the delay, mirrors passed through,
 * turned back before the detector, resting in a field-free stage, timed out.
 */
import { readFileSync, readdirSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { allocateEnsemble, allocateTraceResult, type Ensemble, type TraceResult } from '../../src/ions/ensemble';
import { samplePopulation } from '../../src/ions/population';
import { hasSolvedRegion, type AnalyserModel } from '../../src/physics/analyser';
import { traceExact } from '../../src/physics/exactEngine';
import { createIonState, startIonState } from '../../src/physics/regions/contract';
import { createFlight } from '../../src/physics/regions/driver';
import { Fate } from '../../src/physics/fates';
import { compilePreset } from '../../src/presets/compile';
import { parsePresetText } from '../../src/presets/load';
import { buildModel } from '../helpers';

/** Evenly spread over [min, max] (fast-check's doubles crowd towards zero and the ends). */
const spread = (min: number, max: number) => fc.integer({ min: 0, max: 1_000_000 }).map((k) => min + ((max - min) * k) / 1_000_000);

/** The ion-by-ion reference: the same closed-form kernels flown ion by ion, as the engine did before the batch kernels. */
function traceIonByIon(model: AnalyserModel, ens: Ensemble, out: TraceResult): void {
  const flight = createFlight(model, { engine: 'mixed', transferMap: false });
  const st = createIonState();
  for (let s = 0; s < ens.species.length; s++) {
    flight.setMz(ens.species[s].mz);
    for (let i = ens.speciesStart[s]; i < ens.speciesStart[s + 1]; i++) {
      flight.fly(startIonState(st, ens.z0_m[i], ens.vz0_m_per_s[i]));
      out.flightTime_s[i] = st.t;
      out.fate[i] = st.fate;
      out.finalSpeed_m_per_s[i] = st.fate === Fate.DETECTED ? Math.abs(st.v) : 0;
      out.weight[i] = st.w;
    }
  }
}

function expectIdentical(model: AnalyserModel, ens: Ensemble): Set<number> {
  const batch = allocateTraceResult(ens.count);
  const single = allocateTraceResult(ens.count);
  traceExact(model, ens, batch);
  traceIonByIon(model, ens, single);
  const fates = new Set<number>();
  for (let i = 0; i < ens.count; i++) {
    fates.add(batch.fate[i]);
    expect(batch.fate[i], `ion ${i} fate`).toBe(single.fate[i]);
    expect(Object.is(batch.flightTime_s[i], single.flightTime_s[i]), `ion ${i} time ${batch.flightTime_s[i]} vs ${single.flightTime_s[i]}`).toBe(true);
    expect(Object.is(batch.finalSpeed_m_per_s[i], single.finalSpeed_m_per_s[i]), `ion ${i} speed`).toBe(true);
    expect(Object.is(batch.weight[i], single.weight[i]), `ion ${i} weight`).toBe(true);
  }
  return fates;
}

describe('exact engine region by region equals ion by ion, to the bit', () => {
  const dir = new URL('../../presets/', import.meta.url);
  const shipped = readdirSync(dir).filter((f) => f.startsWith('demo-') && f.endsWith('.json'));
  it.each(shipped)('%s', (file) => {
    const r = parsePresetText(readFileSync(new URL(file, dir), 'utf8'));
    if (!r.ok) throw new Error(file);
    const { model, population } = compilePreset(r.value);
    if (hasSolvedRegion(model)) return; // solved regions are traced ion by ion on both paths
    // More ions than one block of the batch engine, so block boundaries are crossed.
    expectIdentical(model, samplePopulation({ ...population, totalIons: 5000 }));
  });

  it('generated analysers and ions reach every fate with identical results', () => {
    const seen = new Set<number>();
    const model = fc.record({
      repeller_V: spread(1_000, 25_000),
      gridFraction: spread(0.5, 1.02),
      gap1_m: spread(1e-3, 5e-3),
      delay_s: fc.oneof(fc.constant(0), spread(1e-8, 1e-6)),
      holdOffset_V: spread(-200, 200),
      mirrorFraction: spread(0.6, 1.3),
      postFraction: fc.oneof(fc.constant(NaN), spread(-1, 1.5)),
      maxFlightTime_s: fc.oneof(fc.constant(0.1), fc.constant(2e-5)),
    });
    const ions = fc.array(fc.tuple(spread(0, 0.999), spread(-3000, 8000)), { minLength: 1, maxLength: 60 });
    fc.assert(
      fc.property(model, ions, (m, starts) => {
        const grid_V = m.repeller_V * m.gridFraction;
        const built = buildModel({
          repeller_V: m.repeller_V,
          grid_V,
          gap1_m: m.gap1_m,
          gap2_m: 10e-3,
          drift_m: 1,
          delay_s: m.delay_s,
          repellerHold_V: grid_V + m.holdOffset_V,
          mirror: { stages: [{ length_m: 0.02, exitPotential_V: 0.7 * m.repeller_V }, { length_m: 0.1, exitPotential_V: m.mirrorFraction * m.repeller_V }], returnLength_m: 0.8 },
          post: Number.isNaN(m.postFraction) ? null : { gap_m: 5e-3, potential_V: m.postFraction * m.repeller_V },
        });
        const analyser = { ...built, maxFlightTime_s: m.maxFlightTime_s };
        const ens = allocateEnsemble([{ label: 'a', mz: 1500, charge: 1, abundance: 1 }, { label: 'b', mz: 40_000, charge: 1, abundance: 1 }], [starts.length, starts.length]);
        starts.forEach(([frac, v0], i) => {
          for (const k of [i, i + starts.length]) {
            ens.z0_m[k] = frac * m.gap1_m;
            ens.vz0_m_per_s[k] = v0;
          }
        });
        for (const f of expectIdentical(analyser, ens)) seen.add(f);
      }),
      { numRuns: 300, seed: 13 },
    );
    // The generator is only useful if it reaches the fates the kernels decide.
    for (const f of [Fate.DETECTED, Fate.STRUCK_REPELLER, Fate.LEFT_SOURCE_DURING_DELAY, Fate.PASSED_THROUGH_MIRROR, Fate.TURNED_BACK, Fate.TIMED_OUT]) {
      expect(seen.has(f), `fate ${f} reached`).toBe(true);
    }
  });
});
