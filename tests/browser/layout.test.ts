/**
 * The app fits the screens it is used on: at 1280×800 and 1600×1000 no control (button, input,
 * select) of any pane is cut off by the window or by a container that hides overflow, and the
 * page does not scroll sideways. A control inside a scrolling container counts as reachable.
 * Also: Compare's switch to reflectron mode proposes a tuned mirror and says what it changed.
 */
import { mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildAndServe, launchChromium, waitDone, type AppServer } from './harness';

const SHOTS = join(tmpdir(), 'tof-bench-screenshots');
let server: AppServer;
let browser: Browser;

beforeAll(async () => {
  mkdirSync(SHOTS, { recursive: true });
  server = await buildAndServe();
  browser = await launchChromium();
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

/** Controls of the visible pane (and the panel and header) that are clipped, described for the failure message. */
async function clippedControls(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const out: string[] = [];
    const width = document.documentElement.clientWidth;
    if (document.documentElement.scrollWidth > width + 1) out.push(`page scrolls sideways (${document.documentElement.scrollWidth} > ${width})`);
    for (const c of document.querySelectorAll<HTMLElement>('button, input, select, textarea')) {
      const r = c.getBoundingClientRect();
      if (r.width === 0 || r.height === 0 || c.closest('[hidden]') || getComputedStyle(c).visibility === 'hidden') continue;
      if ((c as HTMLInputElement).type === 'file' || c.closest('dialog:not([open])')) continue;
      const name = c.id || c.getAttribute('aria-label') || c.textContent?.trim().slice(0, 30) || c.tagName;
      if (r.left < -1 || r.right > width + 1) {
        out.push(`${name}: outside the window (${Math.round(r.left)}…${Math.round(r.right)} of ${width})`);
        continue;
      }
      for (let a = c.parentElement; a && a !== document.body; a = a.parentElement) {
        const style = getComputedStyle(a);
        const scrolls = /auto|scroll/.test(style.overflowX + style.overflowY);
        if (scrolls) break; // reachable by scrolling that container
        if (/hidden|clip/.test(style.overflowX)) {
          const box = a.getBoundingClientRect();
          if (r.left < box.left - 1 || r.right > box.right + 1) {
            out.push(`${name}: cut off by ${a.id || a.className} (${Math.round(r.right)} > ${Math.round(box.right)})`);
            break;
          }
        }
      }
    }
    return out;
  });
}

describe('layouts', () => {
  for (const [w, h] of [
    [1280, 800],
    [1600, 1000],
  ] as const) {
    it(`${w}×${h}: no control of any pane is clipped`, async () => {
      const context = await browser.newContext({ viewport: { width: w, height: h } });
      const page = await context.newPage();
      await page.goto(server.url);
      await waitDone(page);
      const problems: string[] = [];
      for (const tab of ['results', 'compare', 'tuning', 'presets']) {
        await page.click(`#tab-${tab}`);
        await page.waitForTimeout(100);
        problems.push(...(await clippedControls(page)).map((p) => `${tab}: ${p}`));
        await page.screenshot({ path: join(SHOTS, `layout-${w}x${h}-${tab}.png`) });
      }
      await context.close();
      expect(problems).toEqual([]);
    }, 120_000);
  }

  it('Compare: linear → reflectron proposes a tuned mirror and delay and lists the changes', async () => {
    const context = await browser.newContext({ viewport: { width: 1600, height: 1000 } });
    const page = await context.newPage();
    await page.goto(server.url);
    await waitDone(page);
    await page.click('#tab-compare');
    await page.selectOption('#compare-source', 'other-mode');
    await page.click('#btn-compare-run');
    await page.waitForFunction(() => document.body.dataset.compare === 'done' || document.body.dataset.compare === 'error', undefined, { timeout: 240_000 });
    expect(await page.evaluate(() => document.body.dataset.compare)).toBe('done');
    const changes = await page.textContent('[data-testid="compare-changes"]');
    expect(changes).toMatch(/mirror\.intermediateGrid_V: .* → .* V/);
    expect(changes).toMatch(/source\.extraction\.delay_ns: 228 → [\d.]+ ns/);
    expect(await page.textContent('[data-testid="compare-b"]')).toContain('reflectron (tuned mirror)');
    expect(await page.locator('#compare-source option[value="other-mode-untuned"]').count()).toBe(1);
    await page.screenshot({ path: join(SHOTS, 'compare-tuned-reflectron.png') });
    await context.close();
  }, 300_000);
});
