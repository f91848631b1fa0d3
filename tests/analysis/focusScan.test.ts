import { describe, expect, it } from 'vitest';
import { focusScan } from '../../src/analysis/focusScan';
import { compilePreset } from '../../src/presets/compile';
import { validatePreset } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';
import { demoPreset } from '../ui/helpers';

/** The linear delayed-extraction demo with start energies (not velocities) and the given delay. */
function withDelay(delay_ns: number, mode: 'delayed' | 'static' = 'delayed'): Preset {
  const doc = JSON.parse(JSON.stringify(demoPreset('demo-linear-delayed'))) as Record<string, any>;
  doc.ions.startVelocity = { kind: 'energy', mean_eV: 0.5, sd_eV: 0.2 };
  doc.source.extraction = mode === 'delayed' ? { mode, delay_ns } : { mode };
  if (mode === 'static') doc.source.repeller = { potential_V: doc.source.repeller.potential_V };
  const checked = validatePreset(doc);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  return checked.value;
}

const scan = (preset: Preset) => focusScan(compilePreset(preset).model, preset);

describe('m/z scan for the start-energy focus', () => {
  it('static extraction: faster ions arrive earlier at every m/z, so there is no focus (Wiley & McLaren 1955, energy spread in a static source)', () => {
    const result = scan(withDelay(0, 'static'));
    expect(result.energyFocusMz).toBeNull();
    expect(result.energySlopeSign).toBe(-1);
  });

  it('delayed extraction focuses one m/z; twice the delay focuses four times the m/z (time-lag focusing: every time in a static field scales as sqrt(m/z) at fixed start energy)', () => {
    const a = scan(withDelay(150));
    const b = scan(withDelay(300));
    expect(a.energyFocusMz).not.toBeNull();
    expect(b.energyFocusMz).not.toBeNull();
    // Exact in the continuum; the scan interpolates its slope linearly between 48 log-spaced m/z.
    expect(b.energyFocusMz! / a.energyFocusMz!).toBeCloseTo(4, 1);
    expect(a.scannedMz[0]).toBeLessThan(a.energyFocusMz!);
    expect(b.scannedMz[1]).toBeGreaterThan(b.energyFocusMz!);
  });

  it('scans from a third of the lightest species to three times the heaviest', () => {
    const preset = demoPreset('demo-linear-delayed');
    const mz = compilePreset(preset).population.species.map((s) => s.mz);
    const result = scan(preset);
    expect(result.scannedMz[0]).toBeCloseTo(Math.min(...mz) / 3, 9);
    expect(result.scannedMz[1]).toBeCloseTo(Math.max(...mz) * 3, 9);
  });
});
