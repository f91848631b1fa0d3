/**
 * The CLI's fragment output: the per-channel table after the species table, and the mirror-stepping
 * command (`--step-mirror FROM:TO --step-r R`), which plans the segments, runs them and prints them
 * (with --json: the segments, the grid and the stitched spectrum).
 */
import { parsePresetText } from '../presets/load';
import type { SpeciesFragmentReport } from '../simulation/fragmentReport';
import { planMirrorSteps } from '../simulation/mirrorStepping';
import { parseCliNumber } from './numbers';

interface Io {
  out(text: string): void;
  err(text: string): void;
  readFile(path: string): string;
}

export const FRAGMENT_USAGE = `Fragments (species with a "decay" section):
  the table lists every decay channel after the species table; --json puts them in species[].fragments
  --step-mirror FROM:TO  plan mirror-voltage steps covering fragment m/z FROM..TO of the first decaying
                         species, run each segment and stitch one fragment spectrum (per-segment calibration)
  --step-r R             least resolving power each segment's window keeps (default 500)
  --step-species K       the precursor species (index from 0) instead of the first decaying one`;

export function isSteppingCommand(argv: readonly string[]): boolean {
  return argv.includes('--step-mirror');
}

const fmt = (x: number | null, digits: number): string => (x === null ? '—' : x.toFixed(digits));

/** One block per decaying species: each channel's fragment and its partner (neutral or charged). */
export function formatFragmentTable(reports: readonly SpeciesFragmentReport[]): string {
  const lines: string[] = [''];
  for (const r of reports) {
    lines.push(`Decay of ${r.label} (m/z ${r.precursorMz.toFixed(4)}): ${r.decayed} of ${r.precursors} precursors decayed in flight; apparent m/z from the ${r.apparentMzFrom ?? '(none: no precursor peak)'}`);
    // The name column is as wide as the longest name, so no product label is cut short.
    const names = r.channels.flatMap((c) => [c.label, `  ${c.complement.role}: ${c.complement.label}`]);
    const width = Math.max(40, ...names.map((n) => n.length));
    lines.push(`  ${'channel / product'.padEnd(width)}    true m/z   apparent m/z   t (ns)       FWHM spec (ns)  R spec   R ideal  transm.  behind mirror  decays: source/drift/mirror/return`);
    for (const c of r.channels) {
      const d = c.decaysByRegion;
      for (const p of [c.fragment, c.complement]) {
        const name = (p === c.fragment ? c.label : `  ${p.role}: ${p.label}`).padEnd(width);
        lines.push(
          `  ${name}  ${fmt(p.mz, 3).padStart(10)}  ${fmt(p.apparentMz, 3).padStart(12)}  ${fmt(p.peak ? p.peak.centroid_ns : p.flightTime_ns, 2).padStart(11)}  ${fmt(p.peak?.fwhm_ns ?? null, 3).padStart(14)}  ${fmt(p.peak?.resolvingPower ?? null, 0).padStart(7)}  ${fmt(p.resolvingPower, 0).padStart(7)}  ${(100 * p.transmission).toFixed(1).padStart(6)} %  ${String(p.detectedBehindMirror).padStart(13)}` +
            (p === c.fragment ? `  ${d.source}/${d.drift}/${d.mirror}/${d.returnDrift}` : ''),
        );
        if (p.peakNote) lines.push(`  ${''.padEnd(width)}    (spectrum figures: ${p.peakNote})`);
      }
    }
  }
  lines.push('  (R spec: the simulated spectrum peak, what the instrument would record; R ideal: the arrival times alone of the ions under that peak;');
  lines.push('   transm.: share of the product reaching the main detector; behind mirror: how many reached the detector behind the mirror)');
  return lines.join('\n') + '\n';
}

export function runSteppingCommand(argv: readonly string[], io: Io): number {
  const path = argv.find((a, i) => !a.startsWith('--') && (i === 0 || !argv[i - 1].startsWith('--step') && argv[i - 1] !== '--ions'));
  const value = (flag: string): string | undefined => {
    const i = argv.indexOf(flag);
    return i >= 0 ? argv[i + 1] : undefined;
  };
  const range = (value('--step-mirror') ?? '').split(':');
  const from = parseCliNumber(range[0]);
  const to = parseCliNumber(range[1]);
  if (range.length !== 2 || !Number.isFinite(from) || !Number.isFinite(to)) {
    io.err('--step-mirror: needs FROM:TO, the fragment m/z range (e.g. --step-mirror 200:1000)\n');
    return 2;
  }
  const r = value('--step-r') === undefined ? 500 : parseCliNumber(value('--step-r'));
  const speciesText = value('--step-species');
  const species = speciesText === undefined ? undefined : parseCliNumber(speciesText);
  const ionsText = value('--ions');
  const ions = ionsText === undefined ? undefined : parseCliNumber(ionsText);
  if (!path) {
    io.err('--step-mirror: needs a preset file\n');
    return 2;
  }
  const loaded = parsePresetText(io.readFile(path));
  if (!loaded.ok) {
    io.err(loaded.issues.map((i) => `${path}: ${i.path}: ${i.message}`).join('\n') + '\n');
    return 2;
  }
  let result;
  try {
    result = planMirrorSteps({ preset: loaded.value, fromMz: from, toMz: to, minResolvingPower: r, species, ions });
  } catch (err) {
    io.err(`--step-mirror: ${(err as Error).message}\n`);
    return 2;
  }
  if (argv.includes('--json')) {
    io.out(
      JSON.stringify({
        preset: loaded.value.name,
        precursorMz: result.precursorMz,
        targetResolvingPower: r,
        window: result.window,
        singleSetting: result.singleSetting,
        segments: result.segments,
        grid: result.grid,
        spectrum: { mz: Array.from(result.spectrum.mz), intensity: Array.from(result.spectrum.intensity), segment: Array.from(result.spectrum.segment) },
      }) + '\n',
    );
    return 0;
  }
  const lines = [
    `Mirror stepping for fragments of m/z ${from}–${to} (precursor m/z ${result.precursorMz.toFixed(4)}), each window at R ≥ ${r}:`,
    `  one setting focuses fragment fractions m_f/m_p ${result.window.lowFraction.toFixed(3)}–${result.window.highFraction.toFixed(3)}` +
      (result.singleSetting ? ' — the whole range at once: no stepping needed' : ''),
    '  segment  mirror scale  fragment m/z window      least R',
    ...result.segments.map((s) => `  ${String(s.index + 1).padStart(7)}  ${s.scale.toFixed(4).padStart(12)}  ${s.fromMz.toFixed(1).padStart(9)} – ${s.toMz.toFixed(1).padEnd(9)}  ${s.minResolvingPower.toFixed(0).padStart(9)}`),
    `  stitched fragment spectrum: ${result.spectrum.mz.length} samples${result.spectrum.mz.length === 0 ? ' (the preset has no acquisition settings)' : ''}`,
    '  (simulated settings: verify every potential on the instrument under your local high-voltage rules and the maker\'s instructions)',
  ];
  io.out(lines.join('\n') + '\n');
  return 0;
}
