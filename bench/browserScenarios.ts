/**
 * The page-update scenarios of the browser benchmark (bench/browser.ts) and its profile
 * (bench/browserProfile.ts): one exact setup, one rising-pulse setup and one solved-field setup (typed far below and near its
 * tuned back plate) at 2·10^4 ions, each with the panel control changed and the values typed into it; and how to load
 * one into the page and time one change.
 */
import { readFileSync } from 'node:fs';
import type { Page } from 'playwright-core';
import { waitDone } from '../tests/browser/harness';

export const IONS = 20_000;

export interface Scenario {
  key: 'exact' | 'pulse' | 'solved' | 'solved_at_focus';
  preset: Record<string, unknown>;
  /** The panel control changed, and the values typed into it one after another. */
  control: string;
  values: string[];
}

const demo = (file: string): Record<string, unknown> & { run: Record<string, unknown>; source: { extraction: Record<string, unknown> } } =>
  JSON.parse(readFileSync(new URL(`../presets/${file}`, import.meta.url), 'utf8'));

export function scenarios(): Scenario[] {
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
    // The same demo tuned near its own back plate (6070.804 V, where its ions turn in the gentle section), as a user refining its focus would.
    { key: 'solved_at_focus', preset: solved, control: 'back plate potential (V)', values: ['6050', '6060', '6080', '6090', '6070'] },
  ];
}

export async function loadScenario(page: Page, preset: Record<string, unknown>): Promise<void> {
  await page.setInputFiles('#file-import', { name: 'bench.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(preset), 'utf8') });
  // The working setup may have unsaved changes: the app asks before replacing it.
  const confirm = page.locator('#confirm-dialog[open]');
  await Promise.race([confirm.waitFor({ timeout: 5_000 }).then(() => confirm.locator('#confirm-ok').click()), page.waitForFunction((name) => document.querySelector('#setup-name')?.textContent === name, preset.name, { timeout: 5_000 })]).catch(() => undefined);
  await page.waitForFunction((name) => document.querySelector('#setup-name')?.textContent?.startsWith(String(name)) === true, preset.name, { timeout: 120_000 });
  await waitDone(page, 300_000);
}

/**
 * Type one value into the scenario's control, confirm it, wait for the charts and the next frame:
 * [latency to updated charts, engine, latency to the next frame's callbacks] ms as the app recorded them.
 */
export async function changeOnce(page: Page, s: Scenario, value: string): Promise<[number, number, number]> {
  const input = page.locator('.lil-controller:visible', { has: page.locator('.lil-name', { hasText: s.control }) }).locator('input').first();
  await input.fill(value);
  await input.press('Enter');
  await waitDone(page, 300_000);
  await page.waitForFunction(() => document.body.dataset.lastFrameSeq === document.body.dataset.lastRenderSeq, undefined, { timeout: 60_000 });
  return page.evaluate(() => [Number(document.body.dataset.lastUpdateMs), Number(document.body.dataset.lastEngineMs), Number(document.body.dataset.lastFrameMs)] as [number, number, number]);
}

export const median = (xs: number[]): number => {
  const sorted = [...xs].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
};
