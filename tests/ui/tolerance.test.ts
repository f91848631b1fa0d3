/** The tolerances tab's models: the data-sheet form and the chart geometry (no DOM needed). */
import { describe, expect, it } from 'vitest';
import { applyDataSheet, dataSheetFields, readDataSheet } from '../../src/ui/tolerance/dataSheet';
import { contributionBars, histogramBars } from '../../src/ui/tolerance/toleranceCharts';
import { driftDominated, runTolerance, valid } from '../tolerance/helpers';

describe('data-sheet form', () => {
  it('offers the fields of this analyser and writes them as a validated tolerances section', () => {
    const preset = driftDominated();
    const fields = dataSheetFields(preset).map((f) => f.path);
    expect(fields).toContain('tolerances.supplies.repeller.drift_ppm');
    expect(fields).not.toContain('tolerances.supplies.mirrorBackPlate.drift_ppm'); // linear: no mirror
    const values = { ...readDataSheet(preset), 'tolerances.supplies.repeller.drift_ppm': '4', 'tolerances.temperature.tubeMaterial': 'invar-36', 'tolerances.target.massAccuracy_ppm': '3' };
    const r = applyDataSheet(preset, values);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.tolerances!.supplies.repeller!.drift_ppm).toBe(4);
    expect(r.value.tolerances!.temperature.tubeMaterial).toBe('invar-36');
    expect(r.value.tolerances!.target!.massAccuracy_ppm).toBe(3);
    expect(preset.tolerances).toBeUndefined(); // the input is not changed
    // Read back, the form shows what was applied.
    expect(readDataSheet(r.value)['tolerances.supplies.repeller.drift_ppm']).toBe('4');
  });

  it('names the field of a bad value and changes nothing', () => {
    const preset = driftDominated();
    const r = applyDataSheet(preset, { ...readDataSheet(preset), 'tolerances.timing.triggerJitter_ns': 'abc' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues[0].path).toBe('tolerances.timing.triggerJitter_ns');
  });

  it('an emptied field falls back to its default, an emptied target removes the target', () => {
    const preset = valid({ ...driftDominated(), tolerances: { supplies: { repeller: { drift_ppm: 2 } }, target: { massAccuracy_ppm: 4 } } });
    const r = applyDataSheet(preset, { ...readDataSheet(preset), 'tolerances.supplies.repeller.drift_ppm': '', 'tolerances.target.massAccuracy_ppm': '' });
    expect(r.ok && r.value.tolerances!.supplies.repeller!.drift_ppm).toBe(0);
    expect(r.ok && r.value.tolerances!.target).toBeUndefined();
  });
});

describe('chart geometry', () => {
  it('bars: only non-zero contributions, largest first, scaled to the largest', async () => {
    const preset = valid({ ...driftDominated(), tolerances: { supplies: { repeller: { drift_ppm: 2 } }, temperature: { flightTube_K: 0.5 } } });
    const bars = contributionBars(await runTolerance({ preset }));
    expect(bars.map((b) => b.label.split(' (')[0])).toEqual(['flight-tube temperature', 'repeller supply drift']);
    expect(bars[0].fraction).toBe(1);
    // 0.5 K · 2α (17.3 ppm/K) against 2 ppm · 1 ppm/ppm.
    expect(bars[1].fraction).toBeCloseTo(2 / (0.5 * 2 * 17.3), 2);
  });

  it('histogram bars fill the box and keep the counts in proportion', () => {
    const bars = histogramBars({ edges: [0, 1, 2, 3], counts: [2, 4, 1] }, 300, 100);
    expect(bars.map((b) => b.height)).toEqual([50, 100, 25]);
    expect(bars[2].x + bars[2].width).toBeCloseTo(299.5, 9);
    expect(histogramBars({ edges: [], counts: [] }, 300, 100)).toEqual([]);
  });
});
