/**
 * The ion-load controls and the R-versus-load chart in the app: switch on the ion load and space
 * charge in the panel, set the ions per shot, refuse a bad value with the usual outline, compute the
 * curve in its worker and read a value from its table; cancel stops it at once.
 */
import type { Locator, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { collectErrors, serveAppForSuite, waitDone } from './harness';

const app = serveAppForSuite();

const controller = (page: Page, label: string): Locator => page.locator('.lil-controller:visible', { has: page.locator('.lil-name', { hasText: label }) }).first();

async function typeInto(page: Page, label: string, value: string): Promise<void> {
  const input = controller(page, label).locator('input').first();
  await input.fill(value);
  await input.press('Enter');
}

describe('ion load in the app', () => {
  it('sets ions per shot in the panel, draws R against the load and reads a value', async () => {
    const context = await app.browser.newContext({ viewport: { width: 1600, height: 1000 } });
    const page = await context.newPage();
    const errors = collectErrors(page);
    await page.goto(app.server.url);
    await waitDone(page);
    await controller(page, 'ion load per shot').locator('input').check();
    await waitDone(page);
    await controller(page, 'space charge (charged sheets)').locator('input').check();
    await waitDone(page);
    // A bad value is outlined and not run; a good one runs.
    await typeInto(page, 'ions per shot, mean over species', '0');
    await page.waitForFunction(() => document.body.dataset.status === 'invalid');
    expect(await controller(page, 'ions per shot, mean over species').evaluate((e) => e.classList.contains('is-invalid'))).toBe(true);
    await typeInto(page, 'ions per shot, mean over species', '20');
    await waitDone(page);

    await page.click('#tab-results');
    await page.fill('#load-values', '1, 30, 300');
    await page.fill('#load-ions', '1500');
    await page.click('#btn-load-run');
    await page.waitForFunction(() => document.body.dataset.load === 'done' || document.body.dataset.load === 'error', undefined, { timeout: 180_000 });
    expect(await page.textContent('#load-status')).toMatch(/^3 points, 1,500 ions each/);
    expect(await page.locator('#load-chart canvas').count()).toBeGreaterThan(0);
    const heads = await page.$$eval('#load-table thead th', (t) => t.map((x) => x.textContent));
    expect(heads).toEqual(['species', '1 / shot', '30 / shot', '300 / shot']);
    const first = await page.$$eval('#load-table tbody tr:first-child td', (t) => t.map((x) => x.textContent ?? ''));
    expect(first).toHaveLength(3);
    for (const cell of first) expect(cell).toMatch(/^[\d\u2009]+ \([+-]?[\d.]+ ppm\)$/);
    await page.locator('#load-card').screenshot({ path: '/tmp/tof-bench-screenshots/load-chart.png' });
    const r = first.map((c) => Number(c.split(' (')[0].replace(/\u2009/g, '')));
    expect(r.every((x) => x > 100)).toBe(true);

    // Cancel: a long computation stops at once.
    await page.fill('#load-values', '1, 1000, 3000');
    await page.fill('#load-ions', '20000');
    await page.click('#btn-load-run');
    await page.waitForFunction(() => document.body.dataset.load === 'running');
    await page.click('#btn-load-cancel');
    expect(await page.evaluate(() => document.body.dataset.load)).toBe('cancelled');
    expect(await page.isDisabled('#btn-load-run')).toBe(false);
    // A bad value list gets one line.
    await page.fill('#load-values', '1, abc');
    await page.click('#btn-load-run');
    expect(await page.textContent('#load-status')).toBe('ions per shot values: "abc" must be a number > 0.01 and ≤ 100000 ions');
    expect(errors).toEqual([]);
    await context.close();
  }, 300_000);
});
