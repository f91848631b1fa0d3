/**
 * `npm run bench:browser [-- --json]`: the page's latency from a finished change (a value typed
 * into the panel and confirmed) to updated charts, median over several changes at 2·10^4 ions, for
 * one exact setup (the linear delayed-extraction demo), one rising-pulse setup (the same demo with
 * an exponential repeller rise, 12 ns) and one solved-field setup (the gridless-mirror demo, its
 * back plate typed 5580–5660 V, and again near its tuned 6070.8 V: ui_update_ms_solved_at_focus). The
 * production build is served by Vite's preview server and driven in Debian's Chromium, as in the
 * browser tests; the app itself records each latency (document.body.dataset.lastUpdateMs). With
 * --json, one JSON line: ui_update_ms_exact, ui_update_ms_pulse, ui_update_ms_solved (to the charts
 * and tables: the run's first part, lastUpdateMs), the engine's share of each (ui_engine_ms_*, the
 * headline inside the workers), and ui_frame_ms_*: to the callbacks of the frame after the run's
 * second part (3D view, focus notes) has been drawn (lastFrameMs). The figures start when the page asks the worker for the run,
 * right after the typed value was validated; there is no debounce (a typed value runs when it is
 * confirmed, a dragged slider runs quick previews while it moves).
 */
import type { Page } from 'playwright-core';
import { buildAndServe, launchChromium, waitDone } from '../tests/browser/harness';
import { changeOnce, loadScenario, median, scenarios, type Scenario } from './browserScenarios';

async function measure(page: Page, s: Scenario): Promise<{ update: number[]; engine: number[]; frame: number[] }> {
  await loadScenario(page, s.preset);
  const update: number[] = [];
  const engine: number[] = [];
  const frame: number[] = [];
  for (const value of s.values) {
    const [u, e, f] = await changeOnce(page, s, value);
    update.push(u);
    engine.push(e);
    frame.push(f);
  }
  return { update, engine, frame };
}

const json = process.argv.includes('--json');
// `--query '?sharePeaks=0'`: page address options, to compare settings of one build.
const queryArg = process.argv.indexOf('--query');
const query = queryArg >= 0 ? (process.argv[queryArg + 1] ?? '') : '';
const server = await buildAndServe();
const browser = await launchChromium();
const figures: Record<string, number> = {};
try {
  const page = await (await browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
  await page.goto(server.url + query);
  await waitDone(page, 120_000);
  await page.click('#tab-results').catch(() => undefined);
  for (const s of scenarios()) {
    const { update, engine, frame } = await measure(page, s);
    figures[`ui_update_ms_${s.key}`] = Math.round(10 * median(update)) / 10;
    figures[`ui_engine_ms_${s.key}`] = Math.round(10 * median(engine)) / 10;
    figures[`ui_frame_ms_${s.key}`] = Math.round(10 * median(frame)) / 10;
    if (!json) {
      process.stdout.write(
        `${s.key.padEnd(15)} median ${median(update).toFixed(1)} ms from change to charts (engine ${median(engine).toFixed(1)} ms, next frame ${median(frame).toFixed(1)} ms); all: ${update.map((t) => t.toFixed(1)).join(', ')} ms\n`,
      );
    }
  }
} finally {
  await browser.close();
  await server.close();
}
if (json) process.stdout.write(JSON.stringify(figures) + '\n');
