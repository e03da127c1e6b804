/**
 * Shared pieces of the end-to-end tests: where Debian's chromium is, the flags it runs with, a free port
 * for the preview server, and the production build served by `vite preview`.
 */
import { join, resolve } from 'node:path';
import { createServer } from 'node:net';
import { existsSync } from 'node:fs';

export const CHROMIUM = '/usr/bin/chromium';
export const ROOT = resolve(import.meta.dirname, '../..');
export const OUT = join(ROOT, 'test-output');
export const SHOTS = join(OUT, 'screenshots');
export const haveBrowser = existsSync(CHROMIUM);

/** Flags for headless chromium on these machines (DEVELOPERS.md). */
export const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

/** A free TCP port on 127.0.0.1 (asked from the OS, then released for the preview server). */
export function freePort(): Promise<number> {
  return new Promise((res, rej) => {
    const s = createServer();
    s.once('error', rej);
    s.listen(0, '127.0.0.1', () => { const p = (s.address() as { port: number }).port; s.close(() => res(p)); });
  });
}

/**
 * Builds the app for production into `outDir` and serves it with vite preview on a free port.
 * Vitest sets NODE_ENV=test, which would make Vite produce a development build (no service worker).
 */
export async function buildAndServe(outDir: string): Promise<{ url: string; close(): Promise<void> }> {
  const { build, preview } = await import('vite');
  const nodeEnv = process.env.NODE_ENV;
  process.env.NODE_ENV = 'production';
  try {
    await build({ configFile: join(ROOT, 'vite.config.ts'), mode: 'production', logLevel: 'warn', build: { outDir, emptyOutDir: true } });
  } finally {
    process.env.NODE_ENV = nodeEnv;
  }
  const port = await freePort();
  const p = await preview({ configFile: join(ROOT, 'vite.config.ts'), logLevel: 'warn', build: { outDir }, preview: { port, strictPort: true, host: '127.0.0.1', open: false } });
  return { url: `http://127.0.0.1:${port}/`, close: () => p.close() };
}

/** A fresh chromium profile with one page, its console errors collected into `consoleErrors`; `close` removes everything. */
export async function openBrowser(o: { height?: number; extraArgs?: string[]; acceptDownloads?: boolean; profilePrefix: string }, consoleErrors: string[] = []) {
  const { chromium } = await import('playwright-core');
  const { mkdtempSync, rmSync } = await import('node:fs');
  const { tmpdir } = await import('node:os');
  const profileDir = mkdtempSync(join(tmpdir(), o.profilePrefix));
  const context = await chromium.launchPersistentContext(profileDir, {
    executablePath: CHROMIUM, headless: true, viewport: { width: 1366, height: o.height ?? 860 }, acceptDownloads: o.acceptDownloads ?? false,
    args: [...CHROMIUM_ARGS, ...(o.extraArgs ?? [])],
  });
  const page = context.pages()[0] ?? await context.newPage();
  page.on('console', (m) => { if (m.type() === 'error') consoleErrors.push(m.text()); });
  page.on('pageerror', (e) => consoleErrors.push(String(e)));
  return {
    context, page, consoleErrors,
    close: async () => { await context.close(); rmSync(profileDir, { recursive: true, force: true }); },
  };
}
