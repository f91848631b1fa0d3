/**
 * Per decay channel of each species: how many precursors decayed and where, and for both products
 * the true m/z, the apparent m/z an instrument calibrated on precursors would assign to the peak,
 * arrival time, FWHM and R (simulated spectrum peak first, ideal-detector figures of the same ions
 * beside it), transmission and fates. Times in ns at this boundary.
 */
import { arrivalStats, GAUSSIAN_FWHM_FRACTION } from '../analysis/arrivalStats';
import { GAUSSIAN_FWHM_PER_SD } from '../analysis/detectorResponse';
import { mzFromTime } from '../analysis/calibration';
import { countFates, Fate, type FateCounts } from '../physics/fates';
import { Leg, LEG_COUNT, LEG_KEYS, type FragmentModel } from '../physics/fragments/decayModel';
import type { FragmentTrace, ProductBlock } from '../physics/fragments/traceFragments';
import type { Ensemble, TraceResult } from '../ions/ensemble';
import type { Preset } from '../presets/schema';
import type { AcquisitionSettings } from '../analysis/spectrum';
import { acquisitionSettings, measureSpeciesPeak, type CalibrationSection, type SpectrumPeakReport } from './analysisReport';
import type { RunReport } from './report';

export type DecayRegionCounts = Record<(typeof LEG_KEYS)[number], number>;

export interface FragmentProductReport {
  readonly label: string;
  /** 'fragment': the ion the channel names; 'neutral' or 'partner' (a charged complement): the other product. */
  readonly role: 'fragment' | 'neutral' | 'partner';
  /** True m/z (Th); null for a neutral. */
  readonly mz: number | null;
  readonly charge: number;
  readonly mass_u: number;
  readonly ions: number;
  /** Reached the analyser's detector (after the mirror in reflectron mode). */
  readonly detected: number;
  readonly transmission: number;
  /** Reached the linear detector behind the mirror (preset detector.behindMirror). */
  readonly detectedBehindMirror: number;
  /** Which detector the figures below describe. */
  readonly figuresFrom: 'detector' | 'behindMirror' | null;
  /** The peak in this product's own simulated spectrum (with acquisition settings; detector only). */
  readonly peak: SpectrumPeakReport | null;
  /** Apparent m/z of the peak under the precursor calibration (see apparentMzFrom); null for neutrals or no peak. */
  readonly apparentMz: number | null;
  /** Ideal-detector figures from the ions' arrival times. */
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly resolvingPower: number | null;
  /** Why the spectrum FWHM/R are missing, or which ions they leave out (reflectron: those formed after the mirror); null when nothing needs saying. */
  readonly peakNote: string | null;
  readonly fates: FateCounts;
}

export interface FragmentChannelReport {
  readonly label: string;
  readonly branching: number;
  readonly decays: number;
  readonly decaysByRegion: DecayRegionCounts;
  readonly fragment: FragmentProductReport;
  readonly complement: FragmentProductReport;
}

export interface SpeciesFragmentReport {
  readonly species: number;
  readonly label: string;
  readonly precursorMz: number;
  readonly precursors: number;
  readonly decayed: number;
  /** How the apparent m/z were assigned: the preset's calibration, or the precursor's own peak (t ∝ sqrt(m/z)). */
  readonly apparentMzFrom: 'calibration' | 'precursor peak' | null;
  readonly channels: FragmentChannelReport[];
}

const nsOrNull = (s: number | null): number | null => (s === null ? null : s * 1e9);

function regionCounts(values: ArrayLike<number>): DecayRegionCounts {
  const out = {} as DecayRegionCounts;
  LEG_KEYS.forEach((k, i) => (out[k] = values[i] ?? 0));
  return out;
}

/** A copy of the trace in which `fate` counts as detected (to measure a peak on the behind-mirror detector). */
function asDetected(trace: TraceResult, fate: number): TraceResult {
  return { ...trace, fate: trace.fate.map((f) => (f === fate ? Fate.DETECTED : f === Fate.DETECTED ? Fate.UNSET : f)) };
}

function detectedTimes(trace: TraceResult, fate: number): Float64Array {
  const out: number[] = [];
  for (let i = 0; i < trace.fate.length; i++) if (trace.fate[i] === fate) out.push(trace.flightTime_s[i]);
  return Float64Array.from(out).sort();
}

type Apparent = (time_s: number) => number | null;

/** Fewer ions under a peak than this give no meaningful FWHM. */
const MIN_PEAK_IONS = 10;

/** Ions within this many FWHM of the unsmoothed peak centroid are taken as the ions under the peak. */
const PEAK_WINDOW_FWHM = 2;

/**
 * The ions under the tallest peak of a product's arrivals: their count and robust sd (shortest 76.1 %
 * interval / 2.3548), from a first, unsmoothed look at the peak. A product formed along the whole
 * flight path arrives as a narrow peak (formed in the field-free drift) on a broad continuum (formed in
 * accelerating or reflecting fields); the shot-noise smoothing must be sized by the peak's own ions,
 * not by the spread of the whole continuum (which widened the response past the peak and left its
 * FWHM undefined).
 */
function peakIonSpread(trace: TraceResult, own: AcquisitionSettings): { spread: [number, number]; times: Float64Array } | null {
  const first = measureSpeciesPeak(trace, 0, trace.fate.length, own, [0, 0]);
  if (!first || first.fwhm_ns === null) return null;
  const lo = (first.centroid_ns - PEAK_WINDOW_FWHM * first.fwhm_ns) * 1e-9;
  const hi = (first.centroid_ns + PEAK_WINDOW_FWHM * first.fwhm_ns) * 1e-9;
  const t: number[] = [];
  for (let i = 0; i < trace.fate.length; i++) {
    const ti = trace.flightTime_s[i] + (own.timeOffset_s ?? 0);
    if (trace.fate[i] === Fate.DETECTED && ti >= lo && ti <= hi) t.push(trace.flightTime_s[i]);
  }
  const n = t.length;
  const times = Float64Array.from(t).sort();
  if (n < 2) return { spread: [n, 0], times };
  const inside = Math.max(1, Math.ceil(GAUSSIAN_FWHM_FRACTION * n) - 1);
  let shortest = Infinity;
  for (let i = 0; i + inside < n; i++) shortest = Math.min(shortest, times[i + inside] - times[i]);
  return { spread: [n, Number.isFinite(shortest) ? shortest / GAUSSIAN_FWHM_PER_SD : 0], times };
}

/**
 * The product's peak in its own simulated spectrum, the shot-noise smoothing sized by the ions under
 * it, and the arrival times of those ions (for the ideal-detector figures of the same peak).
 */
function productPeak(trace: TraceResult, own: AcquisitionSettings): { peak: SpectrumPeakReport | null; times: Float64Array | null } {
  const under = peakIonSpread(trace, own);
  if (!under) return { peak: measureSpeciesPeak(trace, 0, trace.fate.length, own), times: null };
  return { peak: measureSpeciesPeak(trace, 0, trace.fate.length, own, under.spread), times: under.times };
}

/**
 * In reflectron mode a product formed after the mirror (return drift, post-acceleration gap) flies on
 * with its precursor's speed and lands on the precursor's own peak: no instrument can tell it from the
 * precursor there, so the product's figures leave it out (a copy of the trace with those ions unset).
 */
function beforeMirrorOnly(block: ProductBlock): { trace: TraceResult; excluded: number } {
  let excluded = 0;
  const fate = block.trace.fate.map((f, k) => {
    const leg = block.decayLeg[k];
    if (f === Fate.DETECTED && (leg === Leg.RETURN || leg === Leg.POST)) {
      excluded++;
      return Fate.UNSET;
    }
    return f;
  });
  return { trace: { ...block.trace, fate }, excluded };
}

function productReport(preset: Preset, blocks: readonly ProductBlock[], apparent: Apparent | null): FragmentProductReport {
  const first = blocks[0];
  const p = first.product;
  const role = first.role === 'fragment' ? 'fragment' : p.charge === 0 ? 'neutral' : 'partner';
  let ions = 0;
  let detected = 0;
  let behind = 0;
  const fates = countFates(new Uint8Array(0));
  for (const b of blocks) {
    ions += b.trace.fate.length;
    const f = countFates(b.trace.fate);
    for (const k of Object.keys(fates) as (keyof FateCounts)[]) fates[k] += f[k];
    detected += f.detected;
    behind += f.detectedBehindMirror;
  }
  // Figures from the main isotope block's product (as a species reports its monoisotopic peak).
  const reflectron = preset.mirror.type !== 'none';
  const { trace: main, excluded } = reflectron ? beforeMirrorOnly(first) : { trace: first.trace, excluded: 0 };
  const mainDetected = countFates(main.fate);
  // The detector that received most of this product speaks for it (neutrals mostly reach the one behind the mirror).
  const figuresFrom = mainDetected.detected === 0 && behind === 0 ? null : mainDetected.detected >= behind ? 'detector' : 'behindMirror';
  const fate = figuresFrom === 'behindMirror' ? Fate.DETECTED_BEHIND_MIRROR : Fate.DETECTED;
  const measured = figuresFrom === 'behindMirror' ? asDetected(main, Fate.DETECTED_BEHIND_MIRROR) : main;
  const own = figuresFrom ? acquisitionSettings(preset, measured) : null;
  const measuredPeak = own ? productPeak(measured, own) : { peak: null, times: null };
  const underPeak = measuredPeak.times?.length ?? 0;
  // A "peak" of a handful of ions is the detector pulse's own width: no FWHM or R worth showing.
  const peak = measuredPeak.peak && measuredPeak.times && underPeak < MIN_PEAK_IONS ? { ...measuredPeak.peak, fwhm_ns: null, resolvingPower: null, resolvingPower10pctValley: null } : measuredPeak.peak;
  // Ideal-detector figures of the same ions as the spectrum peak (the whole spread when there is no peak).
  const stats = arrivalStats(measuredPeak.times ?? detectedTimes(main, fate));
  const peakTime_s = peak ? peak.centroid_ns * 1e-9 : stats.mean_s;
  const peakNote = peakNoteFor(peak, figuresFrom, detected, excluded, underPeak);
  return {
    label: p.label,
    role,
    mz: p.charge === 0 ? null : p.mz,
    charge: p.charge,
    mass_u: p.mass_u,
    ions,
    detected,
    transmission: ions > 0 ? detected / ions : 0,
    detectedBehindMirror: behind,
    figuresFrom,
    peak,
    apparentMz: p.charge !== 0 && figuresFrom === 'detector' && peakTime_s !== null && apparent ? apparent(peakTime_s) : null,
    flightTime_ns: nsOrNull(stats.mean_s),
    fwhm_ns: nsOrNull(stats.fwhm_s),
    resolvingPower: stats.resolvingPower,
    peakNote,
    fates,
  };
}

/** Why the spectrum figures are missing, or what they leave out; null when nothing needs saying. */
function peakNoteFor(peak: SpectrumPeakReport | null, figuresFrom: FragmentProductReport['figuresFrom'], detected: number, excluded: number, underPeak: number): string | null {
  const after = excluded > 0 && figuresFrom === 'detector' ? `${excluded} formed after the mirror arrive with the precursor (unresolved from it), not counted` : null;
  if (figuresFrom === null) return excluded > 0 && excluded === detected ? `unresolved from the precursor: every detected ion formed after the mirror` : detected === 0 ? 'none detected' : after;
  if (peak === null) return 'no acquisition settings (no simulated spectrum)';
  if (peak.fwhm_ns === null) return underPeak < MIN_PEAK_IONS ? `below ${MIN_PEAK_IONS} ions under the peak (${underPeak})` : 'no half-maximum crossing on one side of the peak';
  return after;
}

/**
 * The apparent m/z law: the preset's calibration (fitted on precursor peaks) when there is one, else
 * a one-point law through the precursor's own peak, m/z = (m/z)_p·(t/t_p)² (t ∝ sqrt(m/z), no offset).
 */
function apparentLaw(calibration: CalibrationSection | { readonly error: string } | null, precursorMz: number, precursorTime_s: number | null): [Apparent | null, SpeciesFragmentReport['apparentMzFrom']] {
  if (calibration && 'coefficients' in calibration) {
    const c = calibration.coefficients;
    const coeffs = { t0_s: c.t0_ns * 1e-9, a_s_per_sqrtTh: c.a_ns_per_sqrtTh * 1e-9, b_s_per_Th: c.b_ns_per_Th * 1e-9 };
    return [(t) => mzFromTime(t, coeffs), 'calibration'];
  }
  if (precursorTime_s === null || !(precursorTime_s > 0)) return [null, null];
  return [(t) => precursorMz * (t / precursorTime_s) ** 2, 'precursor peak'];
}

export function buildFragmentReports(preset: Preset, model: FragmentModel, fragments: FragmentTrace, ens: Ensemble, report: RunReport): SpeciesFragmentReport[] {
  const bySpecies = new Map<number, number[]>();
  model.blocks.forEach((b, d) => bySpecies.set(b.species, [...(bySpecies.get(b.species) ?? []), d]));
  const out: SpeciesFragmentReport[] = [];
  for (const [species, decayBlocks] of bySpecies) {
    const sr = report.species[species];
    // The species' main (monoisotopic) block speaks for the channel figures; all blocks count.
    const mainDecay = decayBlocks.find((d) => model.blocks[d].block === sr.mainBlock) ?? decayBlocks[0];
    const precursorTime_s = sr.peak ? sr.peak.centroid_ns * 1e-9 : sr.flightTime_ns === null ? null : sr.flightTime_ns * 1e-9;
    const [apparent, from] = apparentLaw(report.calibration, sr.mz, precursorTime_s);
    const counts = fragments.counts.filter((c) => decayBlocks.includes(c.decayBlock));
    const channels = model.blocks[mainDecay].channels.map((ch, c): FragmentChannelReport => {
      const pick = (role: 'fragment' | 'complement') => {
        const blocks = fragments.products.filter((p) => decayBlocks.includes(p.decayBlock) && p.channel === c && p.role === role);
        blocks.sort((a, b) => (a.decayBlock === mainDecay ? -1 : b.decayBlock === mainDecay ? 1 : 0));
        return blocks;
      };
      const fragmentBlocks = pick('fragment');
      const perLeg = new Array<number>(LEG_COUNT).fill(0);
      let decays = 0;
      for (const b of fragmentBlocks) {
        decays += b.decayLeg.length;
        for (const leg of b.decayLeg) perLeg[leg]++;
      }
      return {
        label: ch.label,
        branching: ch.branching,
        decays,
        decaysByRegion: regionCounts(perLeg),
        fragment: productReport(preset, fragmentBlocks, apparent),
        complement: productReport(preset, pick('complement'), apparent),
      };
    });
    out.push({
      species,
      label: sr.label,
      precursorMz: sr.mz,
      precursors: counts.reduce((a, c) => a + c.precursors, 0),
      decayed: counts.reduce((a, c) => a + c.decayed, 0),
      apparentMzFrom: from,
      channels,
    });
  }
  void ens;
  return out.sort((a, b) => a.species - b.species);
}

/** Every product ion recorded at the analyser's detector, appended to the precursors' trace: what the full spectrum records. */
export function withProducts(trace: TraceResult, fragments: FragmentTrace): TraceResult {
  let n = trace.fate.length;
  for (const p of fragments.products) n += p.trace.fate.length;
  const cat = <T extends Float64Array | Uint8Array>(make: (n: number) => T, pick: (t: TraceResult) => T): T => {
    const out = make(n);
    out.set(pick(trace), 0);
    let at = trace.fate.length;
    for (const p of fragments.products) {
      out.set(pick(p.trace), at);
      at += p.trace.fate.length;
    }
    return out;
  };
  return {
    flightTime_s: cat((k) => new Float64Array(k), (t) => t.flightTime_s),
    fate: cat((k) => new Uint8Array(k), (t) => t.fate),
    finalSpeed_m_per_s: cat((k) => new Float64Array(k), (t) => t.finalSpeed_m_per_s),
    weight: cat((k) => new Float64Array(k), (t) => t.weight),
    detectorX_m: cat((k) => new Float64Array(k), (t) => t.detectorX_m),
    detectorY_m: cat((k) => new Float64Array(k), (t) => t.detectorY_m),
  };
}
