/**
 * `npm run bench [-- --json]`: solves the shared benchmark problems and prints their figures.
 * With --json, one JSON line holding every key; otherwise a readable list.
 */
import { execFileSync } from 'node:child_process';
import { runB1 } from './b1';
import { runB2 } from './b2';
import { benchField } from './fieldBench';
import { runTuningBench } from './tuning';

function numpyComparison(): Record<string, number> {
  // Side-by-side figure for B1; skipped quietly where python3 with numpy is not installed.
  try {
    const out = execFileSync('python3', [new URL('./b1_numpy.py', import.meta.url).pathname], { encoding: 'utf8', timeout: 120_000 });
    return JSON.parse(out.trim().split('\n').pop() ?? '{}') as Record<string, number>;
  } catch {
    return {};
  }
}

const json = process.argv.includes('--json');
const figures: Record<string, number | string> = { ...runB1(), ...numpyComparison(), ...runB2(), ...benchField(), ...(await runTuningBench()) };
if (json) process.stdout.write(JSON.stringify(figures) + '\n');
else for (const [key, value] of Object.entries(figures)) process.stdout.write(`${key.padEnd(28)} ${value}\n`);
