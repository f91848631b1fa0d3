/**
 * Share links never replace unsaved work without asking, and whatever a load replaces can be brought
 * back ("Undo load", one level, kept beside the autosave across a reload). Production build, Vite's
 * preview server, Debian's Chromium, as in app.test.ts; own browser context, so its own IndexedDB.
 */
import { readFileSync } from 'node:fs';
import type { Browser, BrowserContext, Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parsePresetText } from '../../src/presets/load';
import { encodeShareFragment } from '../../src/ui/io/shareLink';
import { buildAndServe, collectErrors, launchChromium, waitDone, type AppServer } from './harness';

let server: AppServer;
let browser: Browser;
let context: BrowserContext;
let page: Page;
let errors: string[];
let fragment = '';

const DELAY = 'extraction delay (ns)';

function controlInput(p: Page, label: string): Locator {
  return p.locator('.lil-controller:visible', { has: p.locator('.lil-name', { hasText: label }) }).locator('input').first();
}

async function setControl(p: Page, label: string, value: string): Promise<void> {
  const input = controlInput(p, label);
  await input.fill(value);
  await input.press('Enter');
  await waitDone(p);
}

const setupName = (p: Page) => p.textContent('#setup-name');
const autosaved = (p: Page) => p.waitForFunction(() => document.body.dataset.autosave === 'saved');

beforeAll(async () => {
  const dual = parsePresetText(readFileSync(new URL('../../presets/demo-reflectron-dual.json', import.meta.url), 'utf8'));
  if (!dual.ok) throw new Error('demo preset invalid');
  fragment = await encodeShareFragment(dual.value); // Node has CompressionStream, as browsers do
  server = await buildAndServe();
  browser = await launchChromium();
  context = await browser.newContext({ viewport: { width: 1280, height: 800 } });
  page = await context.newPage();
  errors = collectErrors(page);
  page.on('dialog', (dialog) => void dialog.accept()); // the browser's own "leave with unsaved changes?" prompt
  await page.goto(server.url);
  await waitDone(page);
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('share links and unsaved work', () => {
  it('a link opened over unsaved work asks first; declining changes nothing', async () => {
    await setControl(page, DELAY, '251');
    await autosaved(page);
    await page.goto(`${server.url}#${fragment}`); // same document: only the fragment changes
    await page.waitForSelector('#confirm-dialog[open]');
    expect(await page.textContent('#confirm-title')).toBe('Open the shared setup?');
    await page.click('#confirm-cancel');
    expect(await setupName(page)).toBe('Demo: linear, delayed extraction');
    expect(await controlInput(page, DELAY).inputValue()).toBe('251');
    expect(await page.textContent('#toast')).toContain('was not opened');
    expect(new URL(page.url()).hash).toBe('');
  });

  it('accepting opens it, and "Undo load" brings the replaced work back, also after a reload', async () => {
    await page.goto(`${server.url}#${fragment}`);
    await page.waitForSelector('#confirm-dialog[open]');
    await page.click('#confirm-ok');
    await waitDone(page);
    expect(await setupName(page)).toBe('Demo: dual-stage reflectron');
    expect(await page.isVisible('#btn-undo-load')).toBe(true);
    await autosaved(page);
    await page.reload();
    await waitDone(page);
    expect(await setupName(page)).toBe('Demo: dual-stage reflectron');
    await page.click('#btn-undo-load');
    // The undo reads the replaced setup from IndexedDB first: the status is still 'done' from the last run until it lands.
    await page.waitForFunction(() => document.querySelector('#setup-name')?.textContent === 'Demo: linear, delayed extraction', undefined, { timeout: 30_000 }).catch(() => undefined);
    await waitDone(page);
    expect(await setupName(page)).toBe('Demo: linear, delayed extraction');
    expect(await controlInput(page, DELAY).inputValue()).toBe('251');
    expect(await page.isVisible('#dirty-mark')).toBe(true);
  });

  it('a link that starts the app over autosaved unsaved work asks before loading it, and keeps that work recoverable', async () => {
    await autosaved(page);
    const second = await context.newPage();
    const secondErrors = collectErrors(second);
    await second.goto(`${server.url}#${fragment}`);
    await second.waitForSelector('#confirm-dialog[open]');
    await second.click('#confirm-ok');
    await waitDone(second);
    expect(await setupName(second)).toBe('Demo: dual-stage reflectron');
    await second.click('#btn-undo-load');
    // As above: wait for the undo to land before waiting for its run.
    await second.waitForFunction(() => document.querySelector('#setup-name')?.textContent === 'Demo: linear, delayed extraction', undefined, { timeout: 30_000 }).catch(() => undefined);
    await waitDone(second);
    expect(await controlInput(second, DELAY).inputValue()).toBe('251');
    expect(secondErrors).toEqual([]);
    await second.close();
  });

  it('saw no console errors', () => {
    expect(errors).toEqual([]);
  });
});
