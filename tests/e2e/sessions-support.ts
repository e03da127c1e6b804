/**
 * Shared pieces of the end-to-end tests of sessions that survive (tests/e2e/sessions-*.e2e.test.ts): a
 * production build in a directory of its own, a small static server whose files can be switched to another
 * build while pages are open (a new version of the app appearing on the server), reading the stored records
 * straight from IndexedDB, and checks that a message is in view.
 */
import { createServer, type Server } from 'node:http';
import { existsSync, readFileSync, statSync } from 'node:fs';
import { extname, join, normalize } from 'node:path';
import { encode } from 'fast-png';
import type { Locator, Page } from 'playwright-core';
import { expect } from 'vitest';
import { ROOT, freePort } from './support.ts';

/**
 * Builds the app for production into `outDir` (as `buildAndServe` does), with `RETARDA_BUILD` set to `build`
 * when given, so two builds differ in their version string and so in their files and service worker.
 */
export async function buildApp(outDir: string, build?: string): Promise<void> {
  const { build: viteBuild } = await import('vite');
  const saved = { nodeEnv: process.env.NODE_ENV, build: process.env.RETARDA_BUILD };
  process.env.NODE_ENV = 'production';
  if (build) process.env.RETARDA_BUILD = build; else delete process.env.RETARDA_BUILD;
  try {
    await viteBuild({ configFile: join(ROOT, 'vite.config.ts'), mode: 'production', logLevel: 'warn', build: { outDir, emptyOutDir: true } });
  } finally {
    process.env.NODE_ENV = saved.nodeEnv;
    if (saved.build === undefined) delete process.env.RETARDA_BUILD; else process.env.RETARDA_BUILD = saved.build;
  }
}

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8', '.js': 'text/javascript', '.mjs': 'text/javascript', '.css': 'text/css', '.json': 'application/json',
  '.webmanifest': 'application/manifest+json', '.png': 'image/png', '.svg': 'image/svg+xml', '.jpg': 'image/jpeg', '.tif': 'image/tiff', '.tiff': 'image/tiff',
  '.wasm': 'application/wasm',
};

export interface StaticServer {
  url: string;
  /** Serves another directory from now on (the pages keep what they loaded). */
  setRoot(dir: string): void;
  /** Requests to `/__test/<name>` (posted by init scripts), with the time each arrived. */
  hits: { name: string; at: number }[];
  close(): Promise<void>;
}

/**
 * Serves `root` on a free localhost port, as a static host would: files with their types, `sw.js` never
 * cached by the browser's HTTP cache (as hosts are told to serve it), 404 for anything else. `/__test/<name>`
 * records a hit and answers 204.
 */
export async function serveStatic(root: string): Promise<StaticServer> {
  let dir = root;
  const hits: { name: string; at: number }[] = [];
  const server: Server = createServer((req, res) => {
    const path = decodeURIComponent(new URL(req.url ?? '/', 'http://localhost').pathname);
    if (path.startsWith('/__test/')) { hits.push({ name: path.slice(8), at: Date.now() }); res.writeHead(204).end(); return; }
    const file = normalize(join(dir, path.endsWith('/') ? `${path}index.html` : path));
    if (!file.startsWith(normalize(dir)) || !existsSync(file) || !statSync(file).isFile()) { res.writeHead(404).end(); return; }
    res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream', 'cache-control': path.endsWith('/sw.js') ? 'no-cache' : 'max-age=0' });
    res.end(readFileSync(file));
  });
  const port = await freePort();
  await new Promise<void>((res) => server.listen(port, '127.0.0.1', () => res()));
  return {
    url: `http://127.0.0.1:${port}/`, hits,
    setRoot: (d) => { dir = d; },
    close: () => new Promise((res) => { server.closeAllConnections(); server.close(() => res()); }),
  };
}

/** Every stored record under `prefix` (`session:`, `image:`), read from the app's IndexedDB in the page. */
export function storedRecords<T = Record<string, unknown>>(page: Page, prefix: string): Promise<Record<string, T>> {
  return page.evaluate((p) => new Promise<Record<string, T>>((resolve, reject) => {
    const open = indexedDB.open('retarda');
    open.onerror = () => reject(open.error);
    open.onsuccess = () => {
      const db = open.result;
      const out: Record<string, T> = {};
      const cursor = db.transaction('records').objectStore('records').openCursor();
      cursor.onerror = () => reject(cursor.error);
      cursor.onsuccess = () => {
        const c = cursor.result;
        if (!c) { db.close(); resolve(out); return; }
        if (String(c.key).startsWith(p)) out[String(c.key)] = c.value as T;
        c.continue();
      };
    };
  }), prefix);
}

/** The stored session records (the app has written at least one before this is called). */
export async function storedSessions(page: Page) {
  type Stored = { id: string; name: string; revision?: number; images: { id: string; name: string }[]; settings: { bins: number; stations: number }; work: Record<string, { orient?: unknown }> };
  return Object.values(await storedRecords<Stored>(page, 'session:'));
}

/**
 * A small channel picture (8-bit grey PNG, 160 x 100): dark walls at the top and bottom and stripes between
 * them, with seeded noise, so the analyses have something to find.
 */
export function smallChannelPng(seed0 = 7): Uint8Array {
  const w = 160, h = 100, data = new Uint8Array(w * h);
  let seed = seed0;
  const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
    const v = y < 20 || y >= 80 ? 30 + 10 * rand() : 150 + 70 * Math.sin((2 * Math.PI * (x * 0.9 + y * 0.4)) / 7) + 20 * (rand() - 0.5);
    data[y * w + x] = Math.max(0, Math.min(255, Math.round(v)));
  }
  return encode({ width: w, height: h, data, channels: 1, depth: 8 });
}

/** A PNG of random grey pixels (does not compress): about `side`² bytes on disk. */
export function noisePng(side: number, seed0 = 99): Uint8Array {
  const data = new Uint8Array(side * side);
  let seed = seed0;
  for (let i = 0; i < data.length; i++) data[i] = (seed = (seed * 1103515245 + 12345) >>> 0) >>> 24;
  return encode({ width: side, height: side, data, channels: 1, depth: 8 });
}

/** The element is wholly inside the page's viewport and not covered (the user sees it without scrolling). */
export async function expectInView(page: Page, what: Locator): Promise<void> {
  const box = await what.boundingBox();
  const vp = page.viewportSize()!;
  expect(box, 'the element is shown').not.toBeNull();
  expect(box!.x).toBeGreaterThanOrEqual(0);
  expect(box!.y).toBeGreaterThanOrEqual(0);
  expect(box!.x + box!.width).toBeLessThanOrEqual(vp.width + 0.5);
  expect(box!.y + box!.height).toBeLessThanOrEqual(vp.height + 0.5);
  // Not covered by anything else (a panel drawn over it): what the page shows at its centre is part of it.
  expect(await what.evaluate((el) => {
    const r = el.getBoundingClientRect();
    return el.contains(document.elementFromPoint(r.x + r.width / 2, r.y + r.height / 2));
  }), 'nothing is drawn over it').toBe(true);
}

/** Screenshots of the page at 1366 x 768 and 800 x 768, each after checking that `what` is in view there. */
export async function shotsAtTwoWidths(page: Page, what: () => Locator, path: (width: number) => string): Promise<void> {
  const before = page.viewportSize()!;
  for (const width of [1366, 800]) {
    await page.setViewportSize({ width, height: 768 });
    await what().first().waitFor({ timeout: 5_000 });
    await expectInView(page, what().first());
    await page.screenshot({ path: path(width) });
  }
  await page.setViewportSize(before);
}

/** Closes every dismissable message, so later checks see only new ones. */
export async function dismissAll(page: Page): Promise<void> {
  const dismiss = page.getByRole('button', { name: 'Dismiss' });
  while (await dismiss.count()) await dismiss.first().click();
}
