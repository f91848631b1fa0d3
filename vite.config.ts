/**
 * Vite setup for the browser app: a static, offline site (relative base, no CDN), the engine in an
 * ES-module worker, and a strict Content-Security-Policy written into the built page.
 */
import { fileURLToPath } from 'node:url';
import { defineConfig, type Plugin } from 'vite';

/** The built site: scripts, styles, workers and connections from our own origin only; no eval, no inline code. */
export const STRICT_CSP = [
  "default-src 'self'",
  "script-src 'self'",
  "style-src 'self'",
  "img-src 'self' data: blob:",
  "font-src 'self' data:", // lil-gui's icon font is embedded in its stylesheet
  "connect-src 'self'",
  "worker-src 'self'",
  "object-src 'none'",
  "base-uri 'self'",
  "form-action 'none'",
].join('; ');

/** The dev server injects CSS as <style> elements and talks to its client over a websocket. */
const DEV_CSP = STRICT_CSP.replace("style-src 'self'", "style-src 'self' 'unsafe-inline'").replace(
  "connect-src 'self'",
  "connect-src 'self' ws: wss:",
);

function contentSecurityPolicy(): Plugin {
  return {
    name: 'tof-bench-csp',
    transformIndexHtml: {
      order: 'post',
      handler(_html, ctx) {
        return [
          {
            tag: 'meta',
            attrs: { 'http-equiv': 'Content-Security-Policy', content: ctx.server ? DEV_CSP : STRICT_CSP },
            injectTo: 'head-prepend',
          },
        ];
      },
    },
  };
}

export default defineConfig({
  base: './',
  plugins: [contentSecurityPolicy()],
  resolve: {
    // lil-gui's package exports do not list its stylesheet; point at the file itself.
    alias: { 'lil-gui-stylesheet': fileURLToPath(new URL('./node_modules/lil-gui/dist/lil-gui.css', import.meta.url)) },
  },
  worker: { format: 'es' },
  build: {
    target: 'es2022',
    outDir: 'dist',
    // No inline scripts or data: modules: everything ships as files from our own origin.
    modulePreload: { polyfill: false },
    assetsInlineLimit: 0,
    chunkSizeWarningLimit: 2000,
  },
  server: { open: false },
  preview: { open: false, headers: { 'Content-Security-Policy': STRICT_CSP + "; frame-ancestors 'none'" } },
});
