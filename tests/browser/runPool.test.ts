/**
 * The page's runs split over a pool of workers (src/ui/engine/splitRun.ts) give byte-identical
 * results to one worker: the per-ion fingerprint (flight times and fates, document.body.dataset.lastRunDigest)
 * and the results table, for one exact demo (closed form: kept on one worker of the pool), one
 * rising-pulse demo and the gridless solved-mirror demo (split over the pool's workers, the mirror's
 * transfer map fitted on one and restored on the other); and a quick second change drops
 * the result of the run still in flight, so only the newest change is drawn.
 */
import { readFileSync } from 'node:fs';
import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { resultRows, serveAppForSuite, waitDone } from './harness';

const app = serveAppForSuite();

function demo(file: string, edit?: (doc: Record<string, any>) => void): Record<string, any> {
  const doc = JSON.parse(readFileSync(new URL(`../../presets/${file}`, import.meta.url), 'utf8')) as Record<string, any>;
  doc.run = { ...doc.run, ions: 20_000 };
  edit?.(doc);
  return doc;
}
const exact = demo('demo-linear-delayed.json', (d) => (d.name = 'Pool test: exact'));
const pulse = demo('demo-linear-delayed.json', (d) => {
  d.name = 'Pool test: exponential rise';
  d.source.extraction.rise = { shape: 'exponential', timeConstant_ns: 12 };
});
// A solved mirror: one worker fits the transfer map, the other restores it (src/simulation/runChunks.ts).
const gridless = demo('demo-gridless-mirror.json', (d) => (d.name = 'Pool test: gridless mirror'));

async function open(workers: number): Promise<Page> {
  const page = await (await app.browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
  await page.goto(`${app.server.url}?runWorkers=${workers}`);
  await waitDone(page, 60_000);
  return page;
}

async function load(page: Page, preset: Record<string, any>): Promise<void> {
  await page.setInputFiles('#file-import', { name: 'pool.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(preset), 'utf8') });
  const confirm = page.locator('#confirm-dialog[open]');
  await Promise.race([confirm.waitFor({ timeout: 5_000 }).then(() => confirm.locator('#confirm-ok').click()), page.waitForFunction((name) => document.querySelector('#setup-name')?.textContent === name, preset.name, { timeout: 5_000 })]).catch(() => undefined);
  await page.waitForFunction((name) => document.querySelector('#setup-name')?.textContent?.startsWith(String(name)) === true, preset.name, { timeout: 60_000 });
  await waitDone(page, 60_000);
}

const delayInput = (page: Page) => page.locator('.lil-controller:visible', { has: page.locator('.lil-name', { hasText: 'extraction delay (ns)' }) }).locator('input').first();

async function setDelay(page: Page, value: string): Promise<void> {
  const input = delayInput(page);
  await input.fill(value);
  await input.press('Enter');
  await waitDone(page, 60_000);
}

async function results(page: Page): Promise<{ digest: string; rows: string[] }> {
  return { digest: await page.evaluate(() => document.body.dataset.lastRunDigest ?? ''), rows: await resultRows(page) };
}

describe('runs split over the worker pool', () => {
  it('give the one-worker results byte for byte (exact, rising-pulse and solved-mirror demos)', async () => {
    const one = await open(1);
    const two = await open(2);
    for (const [preset, delay] of [
      [exact, '190'],
      [pulse, '190'],
      [gridless, '1850'],
    ] as const) {
      const seen = [];
      for (const page of [one, two]) {
        await load(page, preset);
        await setDelay(page, delay);
        seen.push(await results(page));
      }
      expect(seen[0].digest).toMatch(/^[0-9a-f]{8}-[0-9a-f]{8}$/);
      expect(seen[1]).toEqual(seen[0]);
      expect(seen[0].rows.length).toBeGreaterThan(0);
    }
    await one.context().close();
    await two.context().close();
  }, 240_000);

  it('a quick second change drops the first run: only the newest change is drawn', async () => {
    const page = await open(2);
    await load(page, exact);
    await setDelay(page, '210');
    const alone = await results(page);
    await setDelay(page, '150');
    const droppedBefore = await page.evaluate(() => Number(document.body.dataset.runsDropped ?? 0));
    // Two finished changes in one task: the first run is in flight when the second change is made.
    await page.evaluate(() => {
      const input = Array.from(document.querySelectorAll<HTMLElement>('.lil-controller'))
        .find((c) => c.offsetParent !== null && c.querySelector('.lil-name')?.textContent?.includes('extraction delay (ns)'))
        ?.querySelector('input');
      if (!input) throw new Error('no extraction delay control');
      for (const value of ['170', '210']) {
        input.focus();
        input.value = value;
        input.dispatchEvent(new Event('input', { bubbles: true }));
        input.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true }));
        input.blur();
      }
    });
    await waitDone(page, 60_000);
    const dropped = (await page.evaluate(() => Number(document.body.dataset.runsDropped ?? 0))) - droppedBefore;
    expect(dropped).toBeGreaterThanOrEqual(1);
    expect(await results(page)).toEqual(alone);
    await page.context().close();
  }, 120_000);
});
