/**
 * Decay products in the app: the reflectron fragment demo shows fragment series (dashed) in the
 * spectrum and dashed product paths in the 3D view with a legend entry; Compare against the linear
 * fragment demo lists every product with both runs' figures — the linear fragment arriving with its
 * precursor (t/t(precursor) = 1: same velocity over the same path; common practice, no source), the
 * reflectron one early at an apparent m/z of its own.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { serveAppForSuite, waitDone } from './harness';

const app = serveAppForSuite();
const SHOTS = process.env.FRAGMENT_SHOTS ?? '';

describe('fragments in the app', () => {
  it('draws fragment peaks and paths, and compares the reflectron and linear demos product by product', async () => {
    const context = await app.browser.newContext({ viewport: { width: 1600, height: 1000 } });
    const page = await context.newPage();
    await page.goto(app.server.url);
    await waitDone(page);
    const doc = readFileSync(new URL('../../presets/demo-fragments-reflectron.json', import.meta.url), 'utf8');
    await page.setInputFiles('#file-import', { name: 'fragments.json', mimeType: 'application/json', buffer: Buffer.from(doc, 'utf8') });
    await page.waitForFunction(() => document.body.dataset.status === 'running' || document.body.dataset.status === 'done');
    await waitDone(page);
    await page.waitForFunction(() => (document.querySelector('#scene-legend')?.textContent ?? '').includes('decay products'), undefined, { timeout: 60_000 });
    if (SHOTS) await page.screenshot({ path: `${SHOTS}/fragments-reflectron.png` });

    // Spectrum: the precursors' series, then the products' (the legend of the chart names them).
    const legend = await page.locator('[data-testid="spectrum"] .u-legend').textContent();
    expect(legend).toContain('fragment ions');
    expect(legend).toContain('behind-mirror detector');
    expect(legend).toContain('neutrals');

    // Compare with the same analyser in linear mode.
    await page.click('#tab-compare');
    await page.selectOption('#compare-source', 'demo:fragmentsLinear');
    await page.click('#btn-compare-run');
    await page.waitForFunction(() => document.body.dataset.compare === 'done' || document.body.dataset.compare === 'error', undefined, { timeout: 180_000 });
    expect(await page.evaluate(() => document.body.dataset.compare)).toBe('done');
    const rows = await page.locator('[data-testid="compare-fragments"] tbody tr').evaluateAll((trs) => trs.map((tr) => Array.from(tr.children).map((c) => c.textContent ?? '')));
    // 3 + 1 channels, two products each.
    expect(rows.length).toBe(8);
    const backbone = rows.find((r) => r[2] === '601.312')!;
    expect(backbone).toBeDefined();
    const [relA, relB] = [Number(backbone[5]), Number(backbone[6])];
    expect(relA).toBeLessThan(0.9);
    expect(Math.abs(relB - 1)).toBeLessThan(3e-4);
    const [apparentA, apparentB] = [Number(backbone[7]), Number(backbone[8])];
    expect(apparentA).toBeGreaterThan(601.312);
    expect(apparentA).toBeLessThan(1336.7);
    expect(Math.abs(apparentB - 1336.70) / 1336.7).toBeLessThan(5e-4);
    // The reflectron's neutrals reach the detector behind the mirror; the linear ones the detector on the axis.
    const neutral = rows.find((r) => r[1].startsWith('neutral: morinex'))!;
    expect(neutral[3]).toContain('behind mirror');
    expect(neutral[4]).not.toContain('behind mirror');
    if (SHOTS) await page.screenshot({ path: `${SHOTS}/fragments-compare.png`, fullPage: true });
    await context.close();
  }, 300_000);

  // The sizes of tests/browser/layout.test.ts; the framed detector lies outside the legend box.
  for (const [width, height] of [[1280, 800], [1600, 1000]] as const) {
    it(`keeps the 3D legend off the detector and the source, and the spectrum legend and labels off the plot's height and edges, at ${width}×${height}, linear and reflectron`, async () => {
      const context = await app.browser.newContext({ viewport: { width, height } });
      const page = await context.newPage();
      await page.goto(app.server.url);
      await waitDone(page);
      for (const name of ['demo-fragments-linear', 'demo-fragments-reflectron']) {
        const doc = readFileSync(new URL(`../../presets/${name}.json`, import.meta.url), 'utf8');
        await page.setInputFiles('#file-import', { name: `${name}.json`, mimeType: 'application/json', buffer: Buffer.from(doc, 'utf8') });
        await page.waitForFunction(() => document.body.dataset.status === 'running' || document.body.dataset.status === 'done');
        await waitDone(page);
        await page.waitForFunction(() => (document.querySelector('#scene-legend')?.textContent ?? '').includes('decay products'), undefined, { timeout: 60_000 });
        // Spectrum: the legend is one row that leaves the plot its height (it wrapped onto 4-5 lines of a
        // narrow card and left a plot 25 px tall), and every fragment label is drawn inside the plot.
        await page.waitForFunction(() => document.querySelector<HTMLElement>('[data-testid="spectrum"] .uplot')?.dataset.peakLabels !== undefined);
        const spectrum = await page.evaluate(() => {
          const host = document.querySelector<HTMLElement>('[data-testid="spectrum"]')!;
          const box = (e: Element) => e.getBoundingClientRect();
          const root = host.querySelector<HTMLElement>('.uplot')!;
          return { host: box(host).toJSON(), legend: box(host.querySelector('.u-legend')!).toJSON(), plot: box(host.querySelector('.u-over')!).toJSON(), labels: JSON.parse(root.dataset.peakLabels!) as { plot: [number, number]; labels: number[] } };
        });
        expect(spectrum.legend.height, `${name}: legend ${JSON.stringify(spectrum.legend)}`).toBeLessThanOrEqual(24);
        expect(spectrum.legend.width).toBeLessThanOrEqual(spectrum.host.width + 1);
        expect(spectrum.plot.height, `${name}: plot ${JSON.stringify(spectrum.plot)} in ${JSON.stringify(spectrum.host)}`).toBeGreaterThan(0.5 * spectrum.host.height);
        const { plot, labels } = spectrum.labels;
        expect(labels.length).toBeGreaterThan(0);
        for (let k = 0; k < labels.length; k += 3) {
          expect(labels[k], `${name}: label ${k / 3} starts left of the plot`).toBeGreaterThanOrEqual(plot[0] - 0.5);
          expect(labels[k + 1], `${name}: label ${k / 3} ends right of the plot`).toBeLessThanOrEqual(plot[1] + 0.5);
        }
        if (SHOTS) await page.locator('[data-testid="spectrum"]').screenshot({ path: `${SHOTS}/spectrum-${name}-${width}.png` });
        await page.click('#btn-view-all');
        const geometry = await page.evaluate(() => {
          const canvas = document.querySelector<HTMLCanvasElement>('[data-testid="scene"]')!;
          const c = canvas.getBoundingClientRect();
          const l = document.querySelector('#scene-legend')!.getBoundingClientRect();
          const [x, y] = (canvas.dataset.detectorPx ?? 'NaN,NaN').split(',').map(Number);
          return { detector: { x: c.left + x, y: c.top + y }, source: { x: c.left + 0.02 * c.width }, legend: { left: l.left, right: l.right, top: l.top, bottom: l.bottom }, canvas: { left: c.left, right: c.right, top: c.top, bottom: c.bottom } };
        });
        const { detector, legend, canvas } = geometry;
        expect(Number.isFinite(detector.x)).toBe(true);
        // The detector is in view, and a margin of 24 px around it is clear of the legend.
        expect(detector.x).toBeGreaterThan(canvas.left);
        expect(detector.x).toBeLessThan(canvas.right);
        const clear = detector.x < legend.left - 24 || detector.x > legend.right + 24 || detector.y < legend.top - 24 || detector.y > legend.bottom + 24;
        expect(clear, `${name}: detector at ${JSON.stringify(detector)}, legend ${JSON.stringify(legend)}`).toBe(true);
        // The source end (left edge of the framed view) is clear too.
        expect(legend.left).toBeGreaterThan(geometry.source.x + 24);
        if (SHOTS) await page.screenshot({ path: `${SHOTS}/legend-${name}-${width}.png` });
      }
      await context.close();
    }, 300_000);
  }
});
