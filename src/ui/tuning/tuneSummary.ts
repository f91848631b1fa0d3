/**
 * The auto-tune result as the app shows it: the tuned parameters at the preset's own settings, at the
 * start and at the recommendation, the objective's own figure (the one optimised) at all three, the
 * transmission per species at all three, and whether the preset's settings were kept. The model is
 * plain data (tested in Node); `tuneSummaryNodes` only lays it out.
 */
import type { Objective, TuneResult } from '../../tuning/api';
import { describeFigure } from '../../tuning/tuneVerdict';
import { transmissionFindings } from '../../tuning/transmissionConstraint';
import { el } from '../dom';
import { fixed, formatR } from '../format';

export interface TuneSummary {
  readonly figure: string;
  readonly objectiveLine: string;
  readonly verdict: string | null;
  readonly recommendedHeading: string;
  readonly parameters: readonly { readonly label: string; readonly preset: string; readonly start: string; readonly recommended: string; readonly flat: string }[];
  readonly species: readonly { readonly label: string; readonly preset: string; readonly start: string; readonly recommended: string; readonly floor: string }[];
  readonly startSource: string | null;
  /** The constraint in words, and a refusal or the binding species named (empty when neither). */
  readonly constraint: string | null;
  readonly transmissionFindings: readonly string[];
}

export function tuneSummary(result: TuneResult, parameters: readonly { readonly path: string; readonly label: string }[], objective: Objective): TuneSummary {
  const width = objective.name === 'min-fwhm';
  const value = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : width ? `${fixed(x, 3)} ns` : formatR(x));
  const unitOf = (path: string): string => /_([a-zA-Z]+)$/.exec(path)?.[1] ?? '';
  const kept = result.recommendation === 'preset';
  const presetValues = result.presetValues ?? result.start;
  const pct = (t: number | undefined): string => (t === undefined ? '—' : `${(t * 100).toFixed(1)} %`);
  let verdict: string | null = null;
  if (kept) {
    verdict = `No setting found scores better than the preset's own settings (preset ${value(result.presetObjective)}, best found ${value(result.searchObjective)}): they are kept, and there is nothing to apply.`;
  } else if (result.worseThanPreset) {
    verdict = `The tuned setting scores worse than the preset's own settings (${value(result.objective)} vs ${value(result.presetObjective)}).`;
  }
  return {
    figure: `Figure optimised and shown: ${describeFigure(objective, result.measure ?? 'sd')}.`,
    objectiveLine: `Goal value: ${value(result.presetObjective)} with the preset's settings, ${value(result.startObjective)} at the start, ${value(result.objective)} ${kept ? 'recommended (the preset\'s)' : 'tuned'}; ${result.evaluations} evaluations.`,
    verdict,
    recommendedHeading: kept ? 'recommended (preset)' : 'tuned',
    parameters: parameters.map((p, i) => {
      const flat = result.flatness.find((f) => f.path === p.path);
      return {
        label: p.label,
        preset: fixed(presetValues[i], 2),
        start: fixed(result.start[i], 2),
        recommended: fixed(result.best[i], 2),
        flat: flat ? `${fixed(flat.low, 1)} – ${fixed(flat.high, 1)} ${unitOf(p.path)}` : '—',
      };
    }),
    species: (result.species ?? []).map((s, k) => ({
      label: s.label ?? `m/z ${s.mz}`,
      preset: pct(result.presetSpecies?.[k]?.transmission),
      start: pct(result.startSpecies?.[k]?.transmission),
      recommended: pct(s.transmission),
      floor: result.transmissionFloors?.[k] ? pct(result.transmissionFloors[k]) : '—',
    })),
    startSource: result.startSource?.length ? `Start: ${result.startSource.join('; ')}` : null,
    constraint: result.transmissionConstraint ? `Transmission constraint: ${result.transmissionConstraint}.` : null,
    transmissionFindings: transmissionFindings({ violated: result.transmissionViolated ?? [], binding: result.transmissionBinding ?? null }),
  };
}

export function tuneSummaryNodes(summary: TuneSummary): HTMLElement[] {
  const head = (...cells: string[]) => el('thead', {}, el('tr', {}, ...cells.map((text) => el('th', { text }))));
  const row = (label: string, ...cells: string[]) => el('tr', {}, el('th', { scope: 'row', text: label }), ...cells.map((text) => el('td', { text })));
  return [
    el('p', { text: summary.objectiveLine }),
    ...(summary.verdict ? [el('p', { className: 'tune-verdict', text: summary.verdict })] : []),
    ...summary.transmissionFindings.map((text) => el('p', { className: 'tune-verdict', 'data-testid': 'tune-transmission', text })),
    el('p', { className: 'hint', text: summary.figure }),
    el(
      'table',
      { className: 'data-table' },
      head('parameter', 'preset', 'start', summary.recommendedHeading, 'within 10 % of best'),
      el('tbody', {}, ...summary.parameters.map((p) => row(p.label, p.preset, p.start, p.recommended, p.flat))),
    ),
    el(
      'table',
      { className: 'data-table', 'aria-label': 'Transmission per species' },
      head('transmission', 'preset', 'start', summary.recommendedHeading, 'floor'),
      el('tbody', {}, ...summary.species.map((s) => row(s.label, s.preset, s.start, s.recommended, s.floor))),
    ),
    ...(summary.constraint ? [el('p', { className: 'hint', text: summary.constraint })] : []),
    ...(summary.startSource ? [el('p', { className: 'hint', text: summary.startSource })] : []),
  ];
}
