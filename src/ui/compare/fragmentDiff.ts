/**
 * Compare for decay products, without the DOM: one row per product of every decay channel found in
 * either run (matched by precursor m/z and charge, channel label and role), with each run's arrival
 * time, apparent m/z, headline R and transmission, and the arrival relative to the precursor's.
 * This is what tells a linear setup from a reflectron one at once: in linear mode a fragment formed
 * in the drift arrives with its precursor (relative arrival ≈ 1); in a reflectron it arrives early,
 * at an apparent m/z of its own.
 */
import type { FragmentProductReport } from '../../simulation/fragmentReport';
import type { RunReport, SpeciesReport } from '../../simulation/report';

export interface ProductFigures {
  /** Arrival (µs) at the detector its figures come from: the spectrum peak centroid, else the mean. */
  readonly arrival_us: number | null;
  /** Arrival divided by the precursor's (1 = arrives with its precursor); null when either is unknown or on another detector. */
  readonly relativeToPrecursor: number | null;
  readonly apparentMz: number | null;
  /** Headline R: the spectrum peak's, else the ideal-detector one. */
  readonly resolvingPower: number | null;
  readonly transmission: number;
  readonly behindMirror: boolean;
}

export interface FragmentDiff {
  readonly precursor: string;
  readonly product: string;
  readonly role: FragmentProductReport['role'];
  /** True m/z (null for a neutral). */
  readonly mz: number | null;
  readonly a: ProductFigures | null;
  readonly b: ProductFigures | null;
}

const sameMz = (x: number, y: number): boolean => Math.abs(x - y) <= 1e-6 * Math.max(x, y);

function figures(s: SpeciesReport, p: FragmentProductReport): ProductFigures {
  const arrival_ns = p.peak ? p.peak.centroid_ns : p.flightTime_ns;
  const precursor_ns = s.peak ? s.peak.centroid_ns : s.flightTime_ns;
  const behindMirror = p.figuresFrom === 'behindMirror';
  return {
    arrival_us: arrival_ns === null ? null : arrival_ns / 1000,
    relativeToPrecursor: arrival_ns !== null && precursor_ns !== null && precursor_ns > 0 && !behindMirror ? arrival_ns / precursor_ns : null,
    apparentMz: p.apparentMz,
    resolvingPower: p.peak?.resolvingPower ?? p.resolvingPower,
    transmission: p.transmission,
    behindMirror,
  };
}

interface Entry {
  readonly key: string;
  readonly species: SpeciesReport;
  readonly channel: string;
  readonly product: FragmentProductReport;
}

function entries(report: RunReport): Entry[] {
  return report.species.flatMap((s) =>
    (s.fragments ?? []).flatMap((c) => [c.fragment, c.complement].map((p) => ({ key: `${s.charge}|${c.label}|${p.role}`, species: s, channel: c.label, product: p }))),
  );
}

/** Rows for every product of A, then the products only B has. Empty when neither run has decays. */
export function diffFragments(a: RunReport, b: RunReport): FragmentDiff[] {
  const ea = entries(a);
  const eb = entries(b);
  const used = new Set<number>();
  const rows: FragmentDiff[] = [];
  const row = (x: Entry | null, y: Entry | null): FragmentDiff => {
    const any = (x ?? y)!;
    return {
      precursor: any.species.label,
      product: any.product.role === 'fragment' ? any.channel : `${any.product.role}: ${any.product.label}`,
      role: any.product.role,
      mz: any.product.mz,
      a: x ? figures(x.species, x.product) : null,
      b: y ? figures(y.species, y.product) : null,
    };
  };
  for (const x of ea) {
    const j = eb.findIndex((y, k) => !used.has(k) && y.key === x.key && sameMz(y.species.mz, x.species.mz));
    if (j >= 0) used.add(j);
    rows.push(row(x, j >= 0 ? eb[j] : null));
  }
  eb.forEach((y, k) => {
    if (!used.has(k)) rows.push(row(null, y));
  });
  return rows;
}
