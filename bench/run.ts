/**
 * `npm run bench [-- --json]`: solves the shared benchmark problems and prints their figures.
 * With --json, one JSON line holding every key; otherwise a readable list.
 *
 * The single-thread engine figures run as an esbuild bundle in a plain Node process (as the engine
 * ships); the tuning figures use the worker-thread pool of the CLI.
 */
import { execFileSync } from 'node:child_process';
import { pathToFileURL } from 'node:url';
import { build } from 'esbuild';
import { runTuningBench } from './tuning';
import { runMeasuredBench } from './measured';
import { runToleranceBench } from './tolerance';

async function engineFigures(): Promise<Record<string, number | string>> {
  // Next to the sources, so that paths relative to import.meta.url (presets/) still resolve.
  const bundle = new URL('./.engine-figures.mjs', import.meta.url).pathname;
  await build({
    entryPoints: [new URL('./engineFigures.ts', import.meta.url).pathname],
    bundle: true,
    platform: 'node',
    format: 'esm',
    outfile: bundle,
    logLevel: 'silent',
    external: ['odex'],
  });
  // Imported rather than run as the main script, so the files' own "run me directly" blocks stay quiet.
  const out = execFileSync(process.execPath, ['--input-type=module', '-e', `await import(${JSON.stringify(pathToFileURL(bundle).href)});`], {
    encoding: 'utf8',
    maxBuffer: 1 << 26,
    env: { ...process.env, B1_NUMPY_SCRIPT: new URL('./b1_numpy.py', import.meta.url).pathname },
  });
  return JSON.parse(out.trim().split('\n').pop() ?? '{}') as Record<string, number | string>;
}

/** The solved-source tracing figures (bench/sourceTraceBench.ts), as an esbuild bundle in a plain Node process like the engine figures. */
async function sourceTraceFigures(): Promise<Record<string, number>> {
  const bundle = new URL('./.source-trace.mjs', import.meta.url).pathname;
  await build({ entryPoints: [new URL('./sourceTraceBench.ts', import.meta.url).pathname], bundle: true, platform: 'node', format: 'esm', outfile: bundle, logLevel: 'silent' });
  const call = `const m = await import(${JSON.stringify(pathToFileURL(bundle).href)}); process.stdout.write(JSON.stringify(m.benchSourceTrace()) + '\\n');`;
  const out = execFileSync(process.execPath, ['--input-type=module', '-e', call], { encoding: 'utf8', maxBuffer: 1 << 26 });
  return JSON.parse(out.trim().split('\n').pop() ?? '{}') as Record<string, number>;
}

const json = process.argv.includes('--json');
const figures: Record<string, number | string> = { ...(await engineFigures()), ...(await sourceTraceFigures()), ...(await runTuningBench()), ...runMeasuredBench(), ...(await runToleranceBench()) };
if (json) process.stdout.write(JSON.stringify(figures) + '\n');
else for (const [key, value] of Object.entries(figures)) process.stdout.write(`${key.padEnd(28)} ${value}\n`);
