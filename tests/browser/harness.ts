/**
 * Browser-test harness: build the app with Vite's build() API into a temporary folder, serve it
 * with preview() on a free port, and drive Debian's Chromium through playwright-core.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type ConsoleMessage, type Page } from 'playwright-core';
import { build, preview, type PreviewServer } from 'vite';
import { afterAll, beforeAll } from 'vitest';

export const CHROMIUM = '/usr/bin/chromium';
const ROOT = fileURLToPath(new URL('../..', import.meta.url));

export interface AppServer {
  readonly url: string;
  close(): Promise<void>;
}

/** Builds the app of the checkout at `root` (this one by default) and serves it on a free port. */
export async function buildAndServe(root: string = ROOT): Promise<AppServer> {
  const outDir = mkdtempSync(join(tmpdir(), 'tof-bench-build-'));
  await build({ root, logLevel: 'silent', build: { outDir, emptyOutDir: true } });
  const server: PreviewServer = await preview({ root, logLevel: 'silent', build: { outDir }, preview: { port: 0, host: '127.0.0.1', strictPort: false } });
  const url = server.resolvedUrls?.local[0];
  if (!url) throw new Error('the preview server reported no address');
  return {
    url,
    close: async () => {
      await server.close();
      rmSync(outDir, { recursive: true, force: true });
    },
  };
}

export async function launchChromium(): Promise<Browser> {
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium), as .ci/run does`);
  // Never --disable-software-rasterizer: headless WebGL runs on SwiftShader.
  return chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking'] });
}

/** Console errors, page errors and CSP violations seen by a page. */
export function collectErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on('console', (msg: ConsoleMessage) => {
    if (msg.type() === 'error') errors.push(`console: ${msg.text()}`);
  });
  page.on('pageerror', (err) => errors.push(`page: ${err.message}`));
  return errors;
}

/** Wait until the app reports a finished run. */
export async function waitDone(page: Page, timeout = 30_000): Promise<void> {
  await page.waitForFunction(() => document.body.dataset.status === 'done', undefined, { timeout });
}

/** Text of the results table body, one line per row. */
export async function resultRows(page: Page): Promise<string[]> {
  return page.$$eval('[data-testid="results-table"] tbody tr', (rows) => rows.map((r) => (r as HTMLElement).innerText.replace(/\s+/g, ' ').trim()));
}

/** The app built and served, and Chromium launched, once for a test file (closed after it). */
export interface SuiteApp {
  readonly server: AppServer;
  readonly browser: Browser;
}

/** Register the file's beforeAll/afterAll that build, serve and launch; read the fields inside tests. */
export function serveAppForSuite(): SuiteApp {
  const app: { server?: AppServer; browser?: Browser } = {};
  beforeAll(async () => {
    app.server = await buildAndServe();
    app.browser = await launchChromium();
  }, 180_000);
  afterAll(async () => {
    await app.browser?.close();
    await app.server?.close();
  });
  return {
    get server(): AppServer {
      if (!app.server) throw new Error('the app server is not up (serveAppForSuite must be called at file level)');
      return app.server;
    },
    get browser(): Browser {
      if (!app.browser) throw new Error('Chromium is not launched (serveAppForSuite must be called at file level)');
      return app.browser;
    },
  };
}
