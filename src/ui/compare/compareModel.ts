/**
 * Compare mode without the DOM: the "same source, other mode" setup, the species matched between
 * two runs and the differences of their key results, and summary figures of one run.
 */
import type { Preset } from '../../presets/schema';
import type { RunReport, SpeciesReport } from '../../simulation/report';
import { headlineFigures } from '../../simulation/headline';
import { switchModeUntuned } from '../../tuning/modeSwitch';

/** Same source, ions and run; linear ↔ reflectron. A linear setup gets the given mirror and drift; a reflectron one flies the same total path straight. */
export function otherMode(preset: Preset, reflectronTemplate: Preset): Preset {
  return switchModeUntuned(preset, reflectronTemplate);
}

export interface SpeciesDiff {
  readonly label: string;
  readonly mz: number;
  readonly a: SpeciesReport | null;
  readonly b: SpeciesReport | null;
  readonly flightTimeA_us: number | null;
  readonly flightTimeB_us: number | null;
  readonly resolvingPowerRatio: number | null;
  readonly fwhmDifference_ns: number | null;
  readonly transmissionDifference: number | null;
}

const sameMz = (x: number, y: number): boolean => Math.abs(x - y) <= 1e-6 * Math.max(x, y);

/**
 * One row per species of A, then the species only B has; matched by m/z and charge. R and FWHM are
 * the headline figures: the spectrum peak's where a sample interval is given (the setup has acquisition settings).
 */
export function diffSpecies(a: RunReport, b: RunReport, sampleA_ns: number | null = null, sampleB_ns: number | null = null): SpeciesDiff[] {
  const used = new Set<number>();
  const rows: SpeciesDiff[] = [];
  const row = (sa: SpeciesReport | null, sb: SpeciesReport | null): SpeciesDiff => {
    const any = (sa ?? sb)!;
    const ta = sa?.flightTime_ns ?? null;
    const tb = sb?.flightTime_ns ?? null;
    const ha = sa && headlineFigures(sa, sampleA_ns);
    const hb = sb && headlineFigures(sb, sampleB_ns);
    const ra = ha?.resolvingPower ?? null;
    const rb = hb?.resolvingPower ?? null;
    const wa = ha?.fwhm_ns ?? null;
    const wb = hb?.fwhm_ns ?? null;
    return {
      label: any.label,
      mz: any.mz,
      a: sa,
      b: sb,
      flightTimeA_us: ta === null ? null : ta / 1000,
      flightTimeB_us: tb === null ? null : tb / 1000,
      resolvingPowerRatio: ra !== null && rb !== null && ra > 0 ? rb / ra : null,
      fwhmDifference_ns: wa !== null && wb !== null ? wb - wa : null,
      transmissionDifference: sa && sb ? sb.transmission - sa.transmission : null,
    };
  };
  for (const sa of a.species) {
    const j = b.species.findIndex((sb, k) => !used.has(k) && sb.charge === sa.charge && sameMz(sb.mz, sa.mz));
    if (j >= 0) used.add(j);
    rows.push(row(sa, j >= 0 ? b.species[j] : null));
  }
  b.species.forEach((sb, k) => {
    if (!used.has(k)) rows.push(row(null, sb));
  });
  return rows;
}

export interface RunFigures {
  readonly detectedFraction: number;
  readonly bestR: number | null;
  readonly worstR: number | null;
  readonly firstArrival_us: number | null;
  readonly lastArrival_us: number | null;
}

/** Summary of a run; best/worst R are the headline figures (spectrum peak when `sampleInterval_ns` is given, see ../../simulation/headline). */
export function runFigures(report: RunReport, sampleInterval_ns: number | null = null): RunFigures {
  const rs = report.species.map((s) => headlineFigures(s, sampleInterval_ns).resolvingPower).filter((r): r is number => r !== null);
  const ts = report.species.map((s) => s.flightTime_ns).filter((t): t is number => t !== null);
  return {
    detectedFraction: report.ions > 0 ? report.detected / report.ions : 0,
    bestR: rs.length ? Math.max(...rs) : null,
    worstR: rs.length ? Math.min(...rs) : null,
    firstArrival_us: ts.length ? Math.min(...ts) / 1000 : null,
    lastArrival_us: ts.length ? Math.max(...ts) / 1000 : null,
  };
}

/**
 * A setting as shown on screen: six significant digits, trailing zeros dropped (a tuned delay of
 * 262.2413452345 ns shows as 262.241); saved presets keep every digit.
 */
export function shownValue(x: number): string {
  return Number(x.toPrecision(6)).toString();
}

/** A short description of the analyser of a setup. */
export function describeSetup(preset: Preset): string {
  const source = preset.source.extractionGrid
    ? preset.source.solved
      ? 'two-stage source with aperture plates (solved field)'
      : 'two-stage source'
    : 'single-stage source';
  const timing = preset.source.extraction.mode === 'delayed' ? `delay ${shownValue(preset.source.extraction.delay_ns)} ns` : 'static extraction';
  const m = preset.mirror;
  const kind: Record<Preset['mirror']['type'], string> = {
    none: 'linear',
    single: 'single-stage reflectron',
    dual: 'dual-stage reflectron',
    profile: 'shaped-field reflectron',
    solved: 'gridless ring-stack reflectron (solved field)',
  };
  const flight = m.type === 'none' ? `linear, drift ${shownValue(preset.drift.length_mm)} mm` : `${kind[m.type]}, ${shownValue(preset.drift.length_mm)} + ${shownValue(m.returnLength_mm)} mm`;
  return `${source}, ${timing}; ${flight}`;
}
