/**
 * The tolerances tab end to end: the data-sheet form writes a tolerances section into the working
 * setup (a bad value is marked and changes nothing), and the analysis runs on the worker pool and
 * draws the contribution bars, the budget table and the Monte-Carlo histograms.
 */
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildAndServe, collectErrors, launchChromium, waitDone, type AppServer } from './harness';

let server: AppServer;
let browser: Browser;
let page: Page;
let errors: string[];

beforeAll(async () => {
  server = await buildAndServe();
  browser = await launchChromium();
  page = await (await browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
  errors = collectErrors(page);
  await page.goto(server.url);
  await waitDone(page);
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

const field = (path: string) => page.locator(`#tol-sheet-fields [name="${path}"]`);

describe('tolerances tab', () => {
  it('a bad data-sheet value is marked and not applied', async () => {
    await page.click('#tab-tolerance');
    await field('tolerances.supplies.repeller.drift_ppm').fill('-3');
    await page.click('#btn-tol-apply');
    await expect.poll(() => page.textContent('#tol-sheet-status')).toMatch(/tolerances\.supplies\.repeller\.drift_ppm: must be a number ≥ 0/);
    expect(await field('tolerances.supplies.repeller.drift_ppm').getAttribute('aria-invalid')).toBe('true');
    expect(await page.isVisible('#dirty-mark')).toBe(false);
  });

  it('applies data-sheet values and runs the analysis with bars, budget and histograms', async () => {
    await field('tolerances.supplies.repeller.drift_ppm').fill('5');
    await field('tolerances.temperature.flightTube_K').fill('0.2');
    await field('tolerances.timing.triggerJitter_ns').fill('0.3');
    await page.click('#btn-tol-apply');
    await waitDone(page);
    expect(await page.textContent('#tol-sheet-status')).toMatch(/Applied/);
    await page.fill('#tol-ions', '1000');
    await page.fill('#tol-draws', '12');
    await page.click('#btn-tol-run');
    await page.waitForFunction(() => document.body.dataset.tolerance === 'done', undefined, { timeout: 120_000 });
    expect(await page.locator('#tol-bars rect').count()).toBe(3);
    const first = await page.locator('#tol-bars text').first().textContent();
    expect(first).toMatch(/flight-tube temperature|repeller supply drift|start \(trigger\) jitter/);
    expect(await page.locator('#tol-budget tbody tr').count()).toBeGreaterThan(5);
    const species = await page.locator('[data-testid="results-table"] tbody tr').count();
    expect(await page.locator('#tol-hists .tol-hist-card').count()).toBe(species);
    expect(errors).toEqual([]);
  });
});
