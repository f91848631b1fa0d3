/**
 * The single-thread engine figures (B1, B2, the numpy side-by-side, the field solver and field
 * tracing), printed as one JSON object. `bench/run.ts` runs this file as an esbuild bundle in a
 * plain Node process, which is how the engine ships (the app is a bundle too); under a TypeScript
 * loader every cross-module call pays a detour that halves the kernels' speed.
 */
import { execFileSync } from 'node:child_process';
import { runB1 } from './b1';
import { runB2 } from './b2';
import { benchField } from './fieldBench';
import { benchFieldTrace } from './fieldTraceBench';
import { benchIonLoad } from './ionLoadBench';

function numpyComparison(): Record<string, number> {
  // Side-by-side figure for B1; skipped quietly where python3 with numpy is not installed.
  const script = process.env.B1_NUMPY_SCRIPT;
  if (!script) return {};
  try {
    const out = execFileSync('python3', [script], { encoding: 'utf8', timeout: 120_000 });
    return JSON.parse(out.trim().split('\n').pop() ?? '{}') as Record<string, number>;
  } catch {
    return {};
  }
}

const figures: Record<string, number | string> = { ...runB1(), ...numpyComparison(), ...runB2(), ...benchField(), ...benchFieldTrace(), ...benchIonLoad() };
process.stdout.write(JSON.stringify(figures) + '\n');
