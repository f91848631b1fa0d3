/**
 * `npm run bench:browser [-- --json]`: the page's latency from a finished change (a value typed
 * into the panel and confirmed) to updated charts, median over several changes at 2·10^4 ions, for
 * one exact setup (the linear delayed-extraction demo), one rising-pulse setup (the same demo with
 * an exponential repeller rise, 12 ns) and one solved-field setup (the gridless-mirror demo). The
 * production build is served by Vite's preview server and driven in Debian's Chromium, as in the
 * browser tests; the app itself records each latency (document.body.dataset.lastUpdateMs). With
 * --json, one JSON line: ui_update_ms_exact, ui_update_ms_pulse, ui_update_ms_solved (and the
 * engine's share of each).
 */
import { readFileSync } from 'node:fs';
import type { Page } from 'playwright-core';
import { buildAndServe, launchChromium, waitDone } from '../tests/browser/harness';

const IONS = 20_000;

interface Scenario {
  key: 'exact' | 'pulse' | 'solved';
  preset: Record<string, unknown>;
  /** The panel control changed, and the values typed into it one after another. */
  control: string;
  values: string[];
}

const demo = (file: string): Record<string, unknown> & { run: Record<string, unknown>; source: { extraction: Record<string, unknown> } } =>
  JSON.parse(readFileSync(new URL(`../presets/${file}`, import.meta.url), 'utf8'));

function scenarios(): Scenario[] {
  const exact = demo('demo-linear-delayed.json');
  exact.run = { ...exact.run, ions: IONS };
  const pulse = demo('demo-linear-delayed.json');
  pulse.name = 'Benchmark: linear delayed extraction, exponential rise';
  pulse.run = { ...pulse.run, ions: IONS };
  pulse.source.extraction = { ...pulse.source.extraction, rise: { shape: 'exponential', timeConstant_ns: 12 } };
  const solved = demo('demo-gridless-mirror.json');
  solved.run = { ...solved.run, ions: IONS };
  const delays = ['150', '170', '190', '210', '230', '160', '200'];
  return [
    { key: 'exact', preset: exact, control: 'extraction delay (ns)', values: delays },
    { key: 'pulse', preset: pulse, control: 'extraction delay (ns)', values: delays },
    { key: 'solved', preset: solved, control: 'back plate potential (V)', values: ['5620', '5640', '5660', '5580', '5610'] },
  ];
}

async function load(page: Page, preset: Record<string, unknown>): Promise<void> {
  await page.setInputFiles('#file-import', { name: 'bench.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(preset), 'utf8') });
  // The working setup may have unsaved changes: the app asks before replacing it.
  const confirm = page.locator('#confirm-dialog[open]');
  await Promise.race([confirm.waitFor({ timeout: 5_000 }).then(() => confirm.locator('#confirm-ok').click()), page.waitForFunction((name) => document.querySelector('#setup-name')?.textContent === name, preset.name, { timeout: 5_000 })]).catch(() => undefined);
  await page.waitForFunction((name) => document.querySelector('#setup-name')?.textContent?.startsWith(String(name)) === true, preset.name, { timeout: 120_000 });
  await waitDone(page, 300_000);
}

async function measure(page: Page, s: Scenario): Promise<{ update: number[]; engine: number[] }> {
  await load(page, s.preset);
  const input = page.locator('.lil-controller:visible', { has: page.locator('.lil-name', { hasText: s.control }) }).locator('input').first();
  const update: number[] = [];
  const engine: number[] = [];
  for (const value of s.values) {
    await input.fill(value);
    await input.press('Enter');
    await waitDone(page, 300_000);
    const [u, e] = await page.evaluate(() => [Number(document.body.dataset.lastUpdateMs), Number(document.body.dataset.lastEngineMs)]);
    update.push(u);
    engine.push(e);
  }
  return { update, engine };
}

const median = (xs: number[]): number => {
  const sorted = [...xs].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
};

const json = process.argv.includes('--json');
const server = await buildAndServe();
const browser = await launchChromium();
const figures: Record<string, number> = {};
try {
  const page = await (await browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
  await page.goto(server.url);
  await waitDone(page, 120_000);
  await page.click('#tab-results').catch(() => undefined);
  for (const s of scenarios()) {
    const { update, engine } = await measure(page, s);
    figures[`ui_update_ms_${s.key}`] = Math.round(10 * median(update)) / 10;
    figures[`ui_engine_ms_${s.key}`] = Math.round(10 * median(engine)) / 10;
    if (!json) process.stdout.write(`${s.key.padEnd(7)} median ${median(update).toFixed(1)} ms from change to charts (engine ${median(engine).toFixed(1)} ms); all: ${update.map((t) => t.toFixed(1)).join(', ')} ms\n`);
  }
} finally {
  await browser.close();
  await server.close();
}
if (json) process.stdout.write(JSON.stringify(figures) + '\n');
