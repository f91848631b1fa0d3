/**
 * The Measured tab in the built app (Chromium, strict CSP): a measured spectrum made from the
 * shipped linear demo with a hidden 30 ns electronics delay and Poisson counting noise is loaded
 * with the file picker, its peaks are matched, the delay is fitted in the worker and "use fitted
 * instrument" makes the fitted preset the working setup; a second file is dropped on the spectrum.
 */
import { mkdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeededRandom } from '../../src/ions/random';
import { validatePreset } from '../../src/presets/load';
import { simulate } from '../../src/simulation/run';
import { poisson } from '../measured/recoveryFixture';
import { buildAndServe, collectErrors, launchChromium, waitDone, type AppServer } from './harness';

const HIDDEN_OFFSET_NS = 30;
const SHOTS = join(tmpdir(), 'tof-bench-screenshots');

function measuredCsv(): { text: string; species: number } {
  const doc = JSON.parse(readFileSync('presets/demo-linear-delayed.json', 'utf8'));
  doc.acquisition.timeOffset_ns = HIDDEN_OFFSET_NS;
  const checked = validatePreset(doc);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  const run = simulate(checked.value, { ions: 80_000, seed: 4242, withSpectrum: true });
  const s = run.analysis.spectrum!;
  const total = s.intensity.reduce((a, b) => a + b, 0);
  const species = checked.value.ions.species.length;
  const scale = (1500 * species) / total;
  const rng = new SeededRandom(7, 1);
  const lines = Array.from(s.time_ns, (t, k) => `${t.toFixed(3)}\t${poisson(rng, s.intensity[k] * scale)}`);
  return { text: `time_ns\tcounts\n${lines.join('\n')}\n`, species };
}

let server: AppServer;
let browser: Browser;
let page: Page;
let errors: string[];
const file = measuredCsv();

beforeAll(async () => {
  server = await buildAndServe();
  browser = await launchChromium();
  page = await browser.newPage({ viewport: { width: 1440, height: 900 }, acceptDownloads: true });
  errors = collectErrors(page);
  await page.goto(server.url);
  await waitDone(page);
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

const waitMeasured = (p: Page): Promise<unknown> => p.waitForFunction(() => document.body.dataset.measured === 'done', undefined, { timeout: 60_000 });

describe('measured spectrum in the app', () => {
  it('loads a file from the picker, matches every species and shows the residual strip', async () => {
    await page.click('#tab-measured');
    await page.setInputFiles('input[aria-label="Measured spectrum file"]', { name: 'run.tsv', mimeType: 'text/plain', buffer: Buffer.from(file.text) });
    await waitMeasured(page);
    expect(await page.textContent('#measured-status')).toMatch(/run.tsv: text, \d+ points, time axis/);
    const rows = await page.$$eval('#measured-matches tbody tr', (r) => r.length);
    expect(rows).toBe(file.species);
    expect(await page.isVisible('[data-testid="spectrum-residuals"]')).toBe(false); // the strip sits in the results tab
    await page.click('#tab-results');
    expect(await page.isVisible('[data-testid="spectrum-residuals"]')).toBe(true);
    mkdirSync(SHOTS, { recursive: true });
    await page.locator('.spectrum-card').screenshot({ path: join(SHOTS, 'measured-overlay.png') });
    expect(errors).toEqual([]);
  });

  it('fits the hidden delay in the worker and uses the fitted instrument', async () => {
    await page.click('#tab-measured');
    await page.click('#btn-measured-fit');
    await page.waitForFunction(() => document.body.dataset.measured === 'busy' || document.querySelector('#measured-fit table') !== null);
    await waitMeasured(page);
    const cells = await page.$$eval('#measured-fit table[aria-label="Fitted parameters"] tbody tr td', (c) => c.map((x) => x.textContent ?? ''));
    expect(cells[0]).toBe('acquisition.timeOffset_ns');
    const value = Number(cells[2]);
    const se = Number(cells[3].replace('±', ''));
    expect(se).toBeGreaterThan(0);
    expect(Math.abs(value - HIDDEN_OFFSET_NS)).toBeLessThan(Math.max(3 * se, 0.5));
    await page.locator('#pane-measured').screenshot({ path: join(SHOTS, 'measured-fit.png') });
    await page.click('#btn-measured-use');
    await waitDone(page);
    expect(await page.textContent('#setup-name')).toMatch(/\(fitted\)$/);
    expect(await page.isVisible('#dirty-mark')).toBe(true);
    expect(errors).toEqual([]);
  });

  it('takes a dropped file, and a bad file changes nothing', async () => {
    const before = await page.textContent('#measured-status');
    await page.evaluate(() => {
      const dt = new DataTransfer();
      dt.items.add(new File(['not a spectrum\nat all\n'], 'bad.txt', { type: 'text/plain' }));
      document.getElementById('spectrum')!.parentElement!.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
    });
    await page.waitForFunction((old) => document.getElementById('measured-status')?.textContent !== old, before);
    expect(await page.textContent('#measured-status')).toMatch(/bad.txt: no line holds two numbers .*nothing changed/);
    expect(await page.$$eval('#measured-matches tbody tr', (r) => r.length)).toBe(file.species);
    expect(errors).toEqual([]);
  });
});
