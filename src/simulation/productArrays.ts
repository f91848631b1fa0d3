/**
 * The decay products of a run as the page receives them (RunOutput.products): every fragment ion and
 * neutral of every decay channel, struct-of-arrays and transferable, with a small table naming each
 * product channel (species, decay channel, role, true and apparent m/z). Isotope blocks of one
 * species share their channel rows, as the fragment report counts them.
 */
import type { FragmentTrace } from '../physics/fragments/traceFragments';
import type { SpeciesFragmentReport } from './fragmentReport';

export interface ProductChannel {
  /** Precursor species (index into report.species), its decay channel, and which product. */
  readonly species: number;
  readonly channel: number;
  readonly role: 'fragment' | 'neutral' | 'partner';
  readonly label: string;
  /** True m/z (Th); null for a neutral. */
  readonly mz: number | null;
  /** Apparent m/z under the precursor calibration (the fragment report's); null where there is none. */
  readonly apparentMz: number | null;
  readonly charge: number;
  /** Ideal-detector mean arrival and FWHM (ns) of the product at the detector its figures come from. */
  readonly flightTime_ns: number | null;
  readonly fwhm_ns: number | null;
  readonly figuresFrom: 'detector' | 'behindMirror' | null;
}

export interface ProductArrays {
  readonly channels: readonly ProductChannel[];
  /** Per product ion: arrival (or fate) time (s), fate code, detector-plane position (m), row in `channels`, decay time (s). */
  readonly flightTime_s: Float64Array;
  readonly fate: Uint8Array;
  readonly detectorX_m: Float64Array;
  readonly detectorY_m: Float64Array;
  readonly channel: Uint16Array;
  readonly decayTime_s: Float64Array;
}

/** Concatenate the traced products of a run, channel rows in report order (species, channel, fragment then complement). */
export function productArrays(trace: FragmentTrace, reports: readonly SpeciesFragmentReport[], speciesOfDecayBlock: (decayBlock: number) => number): ProductArrays {
  const channels: ProductChannel[] = [];
  const rowOf = new Map<string, number>();
  for (const r of reports) {
    r.channels.forEach((ch, c) => {
      for (const role of ['fragment', 'complement'] as const) {
        const p = ch[role];
        rowOf.set(`${r.species}/${c}/${role}`, channels.length);
        channels.push({
          species: r.species,
          channel: c,
          role: p.role,
          label: p.label,
          mz: p.mz,
          apparentMz: p.apparentMz,
          charge: p.charge,
          flightTime_ns: p.flightTime_ns,
          fwhm_ns: p.fwhm_ns,
          figuresFrom: p.figuresFrom,
        });
      }
    });
  }
  let n = 0;
  for (const p of trace.products) n += p.trace.fate.length;
  const out = {
    channels,
    flightTime_s: new Float64Array(n),
    fate: new Uint8Array(n),
    detectorX_m: new Float64Array(n),
    detectorY_m: new Float64Array(n),
    channel: new Uint16Array(n),
    decayTime_s: new Float64Array(n),
  };
  let at = 0;
  for (const p of trace.products) {
    const row = rowOf.get(`${speciesOfDecayBlock(p.decayBlock)}/${p.channel}/${p.role}`);
    if (row === undefined) throw new Error(`decay block ${p.decayBlock} channel ${p.channel} has no report row`);
    out.flightTime_s.set(p.trace.flightTime_s, at);
    out.fate.set(p.trace.fate, at);
    out.detectorX_m.set(p.trace.detectorX_m, at);
    out.detectorY_m.set(p.trace.detectorY_m, at);
    out.decayTime_s.set(p.decayTime_s, at);
    out.channel.fill(row, at, at + p.trace.fate.length);
    at += p.trace.fate.length;
  }
  return out;
}

/** Buffers of ProductArrays, for zero-copy transfer out of a worker. */
export function productTransferables(p: ProductArrays): ArrayBuffer[] {
  return [p.flightTime_s, p.fate, p.detectorX_m, p.detectorY_m, p.channel, p.decayTime_s].map((a) => a.buffer as ArrayBuffer);
}
