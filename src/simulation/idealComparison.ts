/**
 * The same instrument with ideal grids vs solved fields: flight time, FWHM, R and transmission per
 * species from two runs with the same population (same seed). The ideal-grid equivalent of each
 * solved region is defined in src/presets/compileFields.ts (idealGridEquivalent).
 */
import { idealGridEquivalent } from '../presets/compileFields';
import type { Preset } from '../presets/schema';
import type { RunReport } from './report';
import { pulseReach, pulseReachNote } from './pulseReach';
import { simulate, type RunOptions } from './run';

export const IDEAL_EQUIVALENT_DEFINITION =
  'mirror: each solved electrode replaced by an ideal grid across the axis at its mid-plane carrying its (divider) potential, ' +
  'the back plate by an ideal plane at its front face, the lead-in to the entrance electrode added to the drift and return lengths; ' +
  'source: each plate replaced by an ideal grid at its upstream face, the ground plate thickness and exit length added to the drift';

export interface ComparedSpecies {
  readonly label: string;
  readonly mz: number;
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  readonly transmission: number;
}

export interface IdealComparison {
  /** False when the preset has no solved region (then both runs are the same instrument). */
  readonly hasSolvedRegion: boolean;
  readonly definition: string;
  readonly solved: ComparedSpecies[];
  readonly ideal: ComparedSpecies[];
  /** Per species: solved − ideal flight time (ns), null when either has no detected ion. */
  readonly flightTimeShift_ns: (number | null)[];
  /** Known physical reasons the two differ for this setup (see ./pulseReach), in words. */
  readonly notes: string[];
}

function summary(report: RunReport): ComparedSpecies[] {
  return report.species.map((s) => ({
    label: s.label,
    mz: s.mz,
    flightTime_ns: s.flightTime_ns,
    fwhm_ns: s.fwhm_ns,
    resolvingPower: s.resolvingPower,
    transmission: s.transmission,
  }));
}

/** Runs the ideal-grid equivalent of `preset` with the same options and compares it with `solvedReport`. */
export function compareWithIdeal(preset: Preset, solvedReport: RunReport, options: RunOptions): IdealComparison {
  const hasSolvedRegion = preset.mirror.type === 'solved' || preset.source.solved !== undefined;
  const idealPreset = hasSolvedRegion ? idealGridEquivalent(preset) : preset;
  const ideal = hasSolvedRegion ? simulate(idealPreset, { ...options, withSpectrum: false }).report : solvedReport;
  const reachNote = preset.source.solved !== undefined ? pulseReachNote(pulseReach(idealPreset, options)) : null;
  const solved = summary(solvedReport);
  const idealSummary = summary(ideal);
  return {
    hasSolvedRegion,
    definition: IDEAL_EQUIVALENT_DEFINITION,
    solved,
    ideal: idealSummary,
    flightTimeShift_ns: solved.map((s, k) => {
      const t = idealSummary[k]?.flightTime_ns ?? null;
      return s.flightTime_ns === null || t === null ? null : s.flightTime_ns - t;
    }),
    notes: reachNote ? [reachNote] : [],
  };
}

const cell = (x: number | null, digits: number) => (x === null ? '—' : x.toFixed(digits));

/** Plain-text table of the comparison, for the CLI's table and CSV modes. */
export function formatIdealComparison(c: IdealComparison): string {
  const lines = ['', 'Ideal grids vs solved fields' + (c.hasSolvedRegion ? '' : ' (no solved region: both runs are the same instrument)'), `  ideal-grid equivalent: ${c.definition}`];
  lines.push('  species                     fields   flight time (ns)   FWHM (ns)        R   transmission');
  c.solved.forEach((s, k) => {
    const i = c.ideal[k];
    for (const [name, row] of [
      ['solved', s],
      ['ideal', i],
    ] as const) {
      if (!row) continue;
      lines.push(
        `  ${s.label.slice(0, 26).padEnd(26)}  ${name.padEnd(6)}  ${cell(row.flightTime_ns, 2).padStart(17)}  ${cell(row.fwhm_ns, 3).padStart(10)}  ${cell(row.resolvingPower, 0).padStart(7)}  ${(row.transmission * 100).toFixed(1).padStart(12)}%`,
      );
    }
    lines.push(`  ${''.padEnd(26)}  shift   ${cell(c.flightTimeShift_ns[k], 2).padStart(17)}`);
  });
  for (const note of c.notes) lines.push(`  why they differ: ${note}`);
  return lines.join('\n') + '\n';
}
