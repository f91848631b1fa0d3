/** Cross-field checks of the `ionLoad` section: what the detector modes and the sheet model need from the rest of the preset. */
import type { PresetIssue } from './issues';
import type { Preset } from './schema';

export function checkIonLoad(preset: Preset): PresetIssue[] {
  const load = preset.ionLoad;
  if (!load) return [];
  const issues: PresetIssue[] = [];
  if (load.detection && !preset.acquisition) {
    issues.push({ path: 'ionLoad.detection', message: 'needs the "acquisition" section (sample interval = digitizer sample or counting bin, record window)' });
  }
  if (load.detection?.mode === 'counting' && preset.acquisition && load.detection.deadTime_ns > 0 && load.detection.deadTime_ns < preset.acquisition.sampleInterval_ns) {
    issues.push({ path: 'ionLoad.detection.deadTime_ns', message: `must be 0 or ≥ acquisition.sampleInterval_ns (${preset.acquisition.sampleInterval_ns} ns): one count per bin and channel is what the correction assumes` });
  }
  if (load.spaceCharge) {
    const why =
      preset.source.solved !== undefined
        ? 'needs ideal source grids (source.solved is set)'
        : preset.mirror.type === 'solved' || preset.mirror.type === 'profile'
          ? `needs a gridded uniform-stage mirror or none (mirror.type is "${preset.mirror.type}")`
          : preset.source.extraction.mode === 'delayed' && (preset.source.extraction.rise?.shape ?? 'step') !== 'step'
            ? 'needs a step extraction pulse (source.extraction.rise.shape is not "step")'
            : preset.run.engine === 'integrator'
              ? 'needs run.engine "auto" (the sheet model is closed-form)'
              : null;
    if (why) issues.push({ path: 'ionLoad.spaceCharge', message: why });
  }
  if (load.sweepIonsPerShot && !load.spaceCharge) issues.push({ path: 'ionLoad.sweepIonsPerShot', message: 'needs ionLoad.spaceCharge (the sweep is of the space-charge effect)' });
  return issues;
}
