/**
 * The app fits the screens it is used on: at 1280×800 and 1600×1000 no control (button, input,
 * select) of any tab's pane is cut off, sideways or below, by the window or by a container that hides
 * overflow, and the page does not scroll sideways. A control inside a scrolling container counts as
 * reachable when that container can scroll to it.
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

/**
 * Controls of the visible pane (and the panel and header) that cannot be reached, described for the
 * failure message. A control is reachable when, in both directions, it lies inside every ancestor that
 * hides overflow and inside the window, except that an ancestor that scrolls may hold it anywhere in
 * its scroll range (the control then counts as shown in that ancestor's box, which must itself be
 * reachable). The page itself may not scroll sideways.
 */
async function clippedControls(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const out: string[] = [];
    const doc = document.documentElement;
    const width = doc.clientWidth;
    const height = doc.clientHeight;
    if (doc.scrollWidth > width + 1) out.push(`page scrolls sideways (${doc.scrollWidth} > ${width})`);
    const rootStyle = getComputedStyle(doc);
    const bodyStyle = getComputedStyle(document.body);
    const pageScrollsDown = !/hidden|clip/.test(rootStyle.overflowY + bodyStyle.overflowY);
    const nameOf = (e: Element): string => e.id || (e as HTMLElement).className || e.tagName;
    for (const c of document.querySelectorAll<HTMLElement>('button, input, select, textarea')) {
      const rect = c.getBoundingClientRect();
      if (rect.width === 0 || rect.height === 0 || c.closest('[hidden]') || getComputedStyle(c).visibility === 'hidden') continue;
      if ((c as HTMLInputElement).type === 'file' || c.closest('dialog:not([open])')) continue;
      const name = c.id || c.getAttribute('aria-label') || c.textContent?.trim().slice(0, 30) || c.tagName;
      let r = { left: rect.left, right: rect.right, top: rect.top, bottom: rect.bottom };
      let problem: string | null = null;
      for (let a = c.parentElement; a && a !== doc && !problem; a = a.parentElement) {
        const style = getComputedStyle(a);
        const box = a.getBoundingClientRect();
        for (const axis of ['x', 'y'] as const) {
          const overflow = axis === 'x' ? style.overflowX : style.overflowY;
          const [lo, hi] = axis === 'x' ? (['left', 'right'] as const) : (['top', 'bottom'] as const);
          if (/auto|scroll/.test(overflow)) {
            // Position inside the scrolled content; reachable when within the scroll range.
            const offset = axis === 'x' ? a.scrollLeft - box.left - a.clientLeft : a.scrollTop - box.top - a.clientTop;
            const range = axis === 'x' ? a.scrollWidth : a.scrollHeight;
            if (r[lo] + offset < -1 || r[hi] + offset > range + 1) {
              problem = `beyond the scroll range of ${nameOf(a)} (${axis})`;
              break;
            }
            const size = Math.min(r[hi] - r[lo], box[hi] - box[lo]);
            r = { ...r, [lo]: box[lo], [hi]: box[lo] + size };
          } else if (/hidden|clip/.test(overflow) && (r[lo] < box[lo] - 1 || r[hi] > box[hi] + 1)) {
            problem = `cut off by ${nameOf(a)} (${axis}: ${Math.round(r[lo])}…${Math.round(r[hi])} outside ${Math.round(box[lo])}…${Math.round(box[hi])})`;
            break;
          }
        }
      }
      if (!problem && (r.left < -1 || r.right > width + 1)) problem = `outside the window (${Math.round(r.left)}…${Math.round(r.right)} of ${width})`;
      const bottomLimit = pageScrollsDown ? doc.scrollHeight : height;
      if (!problem && (r.top < -1 || r.bottom > bottomLimit + 1)) problem = `below the window (${Math.round(r.top)}…${Math.round(r.bottom)} of ${height})`;
      if (problem) out.push(`${name}: ${problem}`);
    }
    return out;
  });
}

/**
 * Controls that, scrolled into view, are still covered by something else (a footer, an overlay): the
 * element at the centre of the control's visible part must be the control or inside it.
 */
async function coveredControls(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const out: string[] = [];
    for (const c of document.querySelectorAll<HTMLElement>('button, input, select, textarea')) {
      const first = c.getBoundingClientRect();
      if (first.width === 0 || first.height === 0 || c.closest('[hidden]') || getComputedStyle(c).visibility === 'hidden') continue;
      if ((c as HTMLInputElement).type === 'file' || c.closest('dialog:not([open])')) continue;
      c.scrollIntoView({ block: 'nearest', inline: 'nearest' });
      const r = c.getBoundingClientRect();
      const x = Math.min(Math.max((r.left + r.right) / 2, 0), document.documentElement.clientWidth - 1);
      const y = Math.min(Math.max((r.top + r.bottom) / 2, 0), document.documentElement.clientHeight - 1);
      const hit = document.elementFromPoint(x, y);
      if (hit && hit !== c && !c.contains(hit) && !(hit instanceof HTMLLabelElement && hit.control === c)) {
        const name = c.id || c.getAttribute('aria-label') || c.textContent?.trim().slice(0, 30) || c.tagName;
        out.push(`${name}: covered by ${hit.id || hit.className || hit.tagName} at (${Math.round(x)}, ${Math.round(y)})`);
      }
    }
    return out;
  });
}

/**
 * Tables whose last column is not shown: cut off by a container that hides overflow, scrolled out of
 * its scrolling container's box (a result table must show every column without sideways scrolling),
 * or outside the window.
 */
async function clippedTables(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const out: string[] = [];
    const width = document.documentElement.clientWidth;
    for (const table of document.querySelectorAll<HTMLTableElement>('table')) {
      if (table.closest('[hidden]') || table.getBoundingClientRect().width === 0) continue;
      const name = table.id || table.getAttribute('aria-label') || table.closest('[id]')?.id || 'table';
      for (const cell of table.querySelectorAll<HTMLElement>('tr > :last-child')) {
        const r = cell.getBoundingClientRect();
        let cut: string | null = r.right > width + 1 ? 'the window' : null;
        for (let a = cell.parentElement; a && a !== document.body && !cut; a = a.parentElement) {
          if (/auto|scroll|hidden|clip/.test(getComputedStyle(a).overflowX) && r.right > a.getBoundingClientRect().right + 1) cut = a.id || a.className;
        }
        if (cut) {
          out.push(`${name}: last column "${cell.textContent?.trim().slice(0, 24)}" not shown (cut off by ${cut})`);
          break;
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
      const tabs = await page.$$eval('[role="tab"]', (list) => list.map((t) => t.id.replace(/^tab-/, '')));
      expect(tabs.length).toBeGreaterThanOrEqual(6);
      for (const tab of tabs) {
        await page.click(`#tab-${tab}`);
        await page.waitForTimeout(100);
        problems.push(...(await clippedControls(page)).map((p) => `${tab}: ${p}`));
        problems.push(...(await coveredControls(page)).map((p) => `${tab}: ${p}`));
        await page.screenshot({ path: join(SHOTS, `layout-${w}x${h}-${tab}.png`) });
      }
      // With results in the panes: a short auto-tune (its result tables) and a comparison (its table).
      await page.click('#tab-tuning');
      await page.fill('#tune-ions', '300');
      await page.click('#btn-tune');
      await page.waitForFunction(() => document.body.dataset.tuning === 'idle' && (document.getElementById('tune-result')?.querySelector('table') ?? null) !== null, undefined, { timeout: 120_000 });
      problems.push(...(await clippedControls(page)).map((p) => `tuning after a tune: ${p}`));
      problems.push(...(await coveredControls(page)).map((p) => `tuning after a tune: ${p}`));
      problems.push(...(await clippedTables(page)).map((p) => `tuning after a tune: ${p}`));
      await page.screenshot({ path: join(SHOTS, `layout-${w}x${h}-tuning-result.png`) });
      await page.click('#tab-compare');
      await page.selectOption('#compare-source', 'snapshot');
      await page.click('#btn-compare-run');
      await page.waitForFunction(() => document.body.dataset.compare === 'done', undefined, { timeout: 120_000 });
      problems.push(...(await clippedControls(page)).map((p) => `compare after a run: ${p}`));
      problems.push(...(await coveredControls(page)).map((p) => `compare after a run: ${p}`));
      problems.push(...(await clippedTables(page)).map((p) => `compare after a run: ${p}`));
      await page.screenshot({ path: join(SHOTS, `layout-${w}x${h}-compare-result.png`) });
      await context.close();
      expect(problems).toEqual([]);
    }, 240_000);
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
