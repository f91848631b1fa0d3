/**
 * Compare never leaves old results looking current: a refused setting (or any change) after a
 * comparison marks it stale, and a tuned delay shows with six significant digits on screen.
 */
import { readFileSync } from 'node:fs';
import type { Locator, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { serveAppForSuite, waitDone } from './harness';

const app = serveAppForSuite();

const control = (page: Page, label: string): Locator =>
  page.locator('.lil-controller:visible', { has: page.locator('.lil-name', { hasText: label }) }).locator('input').first();

async function compareNow(page: Page): Promise<void> {
  await page.click('#btn-compare-run');
  await page.waitForFunction(() => document.body.dataset.compare === 'done' || document.body.dataset.compare === 'error', undefined, { timeout: 120_000 });
  expect(await page.evaluate(() => document.body.dataset.compare)).toBe('done');
}

describe('Compare', () => {
  it('marks its results stale when a changed setting is refused, and when the setup changes; shows delays with sensible digits', async () => {
    const context = await app.browser.newContext({ viewport: { width: 1600, height: 1000 } });
    const page = await context.newPage();
    await page.goto(app.server.url);
    await waitDone(page);
    // A delay with many digits, as a tune leaves it, imported as a preset file.
    const doc = JSON.parse(readFileSync(new URL('../../presets/demo-linear-delayed.json', import.meta.url), 'utf8'));
    doc.source.extraction.delay_ns = 262.2413452345123;
    await page.setInputFiles('#file-import', { name: 'tuned.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(doc), 'utf8') });
    await page.waitForFunction(() => document.body.dataset.status === 'running' || document.body.dataset.status === 'done');
    await waitDone(page);
    await page.click('#tab-compare');
    await page.selectOption('#compare-source', 'snapshot');
    await compareNow(page);
    expect(await page.textContent('#compare-a')).toContain('delay 262.241 ns');
    expect(await page.textContent('#compare-a')).not.toMatch(/\d{7,}/);
    expect(await page.evaluate(() => document.body.dataset.compareStale)).toBe('no');
    expect(await page.textContent('#compare-status')).not.toContain('STALE');

    // A refused value: the working setup keeps the last valid one, but the results no longer match the panel.
    await control(page, 'extraction delay (ns)').fill('2000000');
    await control(page, 'extraction delay (ns)').press('Enter');
    await page.waitForFunction(() => document.body.dataset.status === 'invalid');
    expect(await page.evaluate(() => document.body.dataset.compareStale)).toBe('yes');
    expect(await page.textContent('#compare-status')).toMatch(/^STALE: a changed setting was refused/);
    expect(await page.locator('#pane-compare.stale').count()).toBe(1);

    // A valid change still leaves the comparison stale until it is rerun.
    await control(page, 'extraction delay (ns)').fill('240');
    await control(page, 'extraction delay (ns)').press('Enter');
    await waitDone(page);
    expect(await page.textContent('#compare-status')).toMatch(/^STALE: the setup has changed since this comparison/);
    await compareNow(page);
    expect(await page.evaluate(() => document.body.dataset.compareStale)).toBe('no');
    expect(await page.textContent('#compare-a')).toContain('delay 240 ns');
    await context.close();
  }, 240_000);
});
