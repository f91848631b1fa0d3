/**
 * `npx tsx bench/browserAB.ts --against <checkout> [--rounds N] [--json]`: the browser benchmark's
 * page-update latency (bench/browser.ts: the same scenarios, values and figures) for two builds at
 * once, change by change: the other checkout's app (A) and this one's (B) are built, served and
 * loaded in two pages of one Chromium, and each typed value is entered into both, A first for one
 * value and B first for the next, so both see the same load within a second or two. On a machine shared with other work this pairs the
 * samples; the medians of A and B and the median of the per-change differences B − A are printed.
 * The two pages never run at once (each change waits for its page to be done).
 */
import { resolve } from 'node:path';
import type { Page } from 'playwright-core';
import { buildAndServe, launchChromium, waitDone } from '../tests/browser/harness';
import { changeOnce, loadScenario, median, scenarios } from './browserScenarios';

const args = process.argv.slice(2);
const against = args.indexOf('--against') >= 0 ? resolve(args[args.indexOf('--against') + 1]) : null;
if (!against) throw new Error('usage: npx tsx bench/browserAB.ts --against <other checkout> [--rounds N] [--json]');
const rounds = args.indexOf('--rounds') >= 0 ? Number(args[args.indexOf('--rounds') + 1]) : 2;
const json = args.includes('--json');

const servers = [await buildAndServe(against), await buildAndServe()];
const browser = await launchChromium();
const figures: Record<string, number> = {};
try {
  const pages: Page[] = [];
  for (const server of servers) {
    const page = await (await browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
    await page.goto(server.url);
    await waitDone(page, 120_000);
    await page.click('#tab-results').catch(() => undefined);
    pages.push(page);
  }
  for (const s of scenarios()) {
    for (const page of pages) await loadScenario(page, s.preset);
    const a: number[] = [];
    const b: number[] = [];
    for (let r = 0; r < rounds; r++) {
      for (const [i, value] of s.values.entries()) {
        // A first, then B, and the other way round for the next value: neither always follows the other.
        if ((r * s.values.length + i) % 2 === 0) {
          a.push((await changeOnce(pages[0], s, value))[0]);
          b.push((await changeOnce(pages[1], s, value))[0]);
        } else {
          b.push((await changeOnce(pages[1], s, value))[0]);
          a.push((await changeOnce(pages[0], s, value))[0]);
        }
      }
    }
    const diff = b.map((x, i) => x - a[i]);
    figures[`A_ui_update_ms_${s.key}`] = Math.round(10 * median(a)) / 10;
    figures[`B_ui_update_ms_${s.key}`] = Math.round(10 * median(b)) / 10;
    figures[`B_minus_A_ms_${s.key}`] = Math.round(10 * median(diff)) / 10;
    figures[`B_faster_changes_${s.key}`] = diff.filter((d) => d < 0).length;
    figures[`changes_${s.key}`] = diff.length;
    if (!json) process.stdout.write(`${s.key.padEnd(15)} A median ${median(a).toFixed(1)} ms, B median ${median(b).toFixed(1)} ms, B − A median ${median(diff).toFixed(1)} ms (B faster in ${diff.filter((d) => d < 0).length} of ${diff.length})\n`);
  }
} finally {
  await browser.close();
  for (const server of servers) await server.close();
}
if (json) process.stdout.write(JSON.stringify(figures) + '\n');
