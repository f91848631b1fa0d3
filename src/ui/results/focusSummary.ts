/**
 * The focus notes beside the peak table: the run report's focus analysis of its reference ion
 * (focusing order in start position and energy, derivatives, space-focus plane), the worker's m/z
 * scan for the start-energy focus (src/analysis/focusScan.ts, RunOutput.focusScan), and the best
 * resolved species of the report. Nothing here runs the engine.
 */
import type { FocusScan } from '../../analysis/focusScan';
import type { RunReport } from '../../simulation/report';

export interface FocusSummary extends FocusScan {
  readonly report: RunReport['focus'];
  readonly bestResolved: { readonly label: string; readonly resolvingPower: number } | null;
}

export function focusSummary(scan: FocusScan, report: RunReport): FocusSummary {
  let best: FocusSummary['bestResolved'] = null;
  for (const s of report.species) {
    if (s.resolvingPower !== null && (!best || s.resolvingPower > best.resolvingPower)) best = { label: s.label, resolvingPower: s.resolvingPower };
  }
  return { report: report.focus, energyFocusMz: scan.energyFocusMz, scannedMz: scan.scannedMz, energySlopeSign: scan.energySlopeSign, bestResolved: best };
}

const ORDER_WORDS = ['not focused', 'first-order focused', 'second-order focused'];

/** Plain-language lines for the results pane. */
export function focusLines(summary: FocusSummary): string[] {
  const lines: string[] = [];
  const f = summary.report;
  if (f && 'referenceMz' in f) {
    const noSpread = f.positionFirstOrder_ppm === 0 && f.positionSecondOrder_ppm === 0;
    const pos = noSpread ? 'no start-position spread' : `start position ${ORDER_WORDS[f.spaceFocusOrder]}`;
    const energy = f.energyFocusOrder === null ? (f.energyNote ?? 'start energy n/a') : `start energy ${ORDER_WORDS[f.energyFocusOrder]}`;
    lines.push(`Reference m/z ${f.referenceMz.toFixed(1)}: ${pos}; ${energy}.`);
    const dU = f.dT_dU0_ns_per_eV;
    lines.push(`dT/dz₀ = ${f.dT_dz0_ns_per_mm.toPrecision(3)} ns/mm${dU === null ? '' : `, dT/dU₀ = ${dU.toPrecision(3)} ns/eV`}.`);
    if (f.spaceFocusPlane_mm !== null) lines.push(`Source space-focus plane ${f.spaceFocusPlane_mm.toFixed(1)} mm behind the ground grid.`);
  } else if (f && 'error' in f) {
    lines.push(`Focus analysis: ${f.error}.`);
  }
  if (summary.energyFocusMz !== null) lines.push(`Start-energy focus (dT/dU₀ = 0) near m/z ${Math.round(summary.energyFocusMz)}.`);
  else {
    const sense = summary.energySlopeSign < 0 ? 'faster ions arrive earlier' : 'faster ions arrive later';
    lines.push(`No start-energy focus between m/z ${Math.round(summary.scannedMz[0])} and ${Math.round(summary.scannedMz[1])} (${sense}).`);
  }
  if (summary.bestResolved) lines.push(`Best resolved: ${summary.bestResolved.label}.`);
  return lines;
}
