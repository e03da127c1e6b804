/**
 * End-to-end: builds the app, serves the build with vite preview on a free localhost port and drives
 * Debian's chromium. The numbers the page shows are compared with the same analysis functions run
 * here in Node on the same file (what `retarda orient` / `retarda profile` call), printed the same way.
 *
 * Without /usr/bin/chromium the checks cannot run: in CI (process.env.CI) that is a failure, elsewhere
 * the file reports it loudly and runs only the check that says so.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { encode } from 'fast-png';
import type { BrowserContext, Page } from 'playwright-core';
import { analyseOrientation, analyseProfile, NOT_DETERMINED } from '../../src/analyses/index.ts';
import { decodeImage } from '../../src/image/index.ts';
import { formatCell } from '../../src/cli/format.ts';
import { parseWalls } from '../../src/channel/index.ts';
import { demoEntries } from '../../app/build/demoImages.ts';
import { CHROMIUM, OUT, ROOT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';


if (!haveBrowser) {
  const msg = `\n${'!'.repeat(78)}\n!! END-TO-END TESTS NOT RUN: ${CHROMIUM} is missing (apt-get install -y chromium).\n!! In CI this fails the run.\n${'!'.repeat(78)}\n`;
  if (process.env.CI) throw new Error(msg);
  console.warn(msg);
}

/**
 * A channel test picture (8-bit grey PNG): dark walls above y = 40 and below y = 160, between them
 * stripes at 12 deg to the walls next to them turning to 35 deg in the middle, with seeded noise. (Endless
 * straight stripes exactly along a wall do not change along it, so next to the wall they look like a line
 * marking it, and the wall finder may place the wall up to 4 px inside: README, Known limits.)
 */
function channelPng(): Uint8Array {
  const w = 320, h = 200, data = new Uint8Array(w * h);
  let seed = 12345;
  const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
    let v: number;
    if (y < 40 || y >= 160) v = 30 + 10 * rand();
    else {
      const s = (y - 100) / 60; // -1..1 across the channel
      const a = ((12 + 23 * (1 - s * s)) * Math.PI) / 180;
      // Stripes along direction a (CCW on screen, y down); the phase is taken about the image centre so
      // the angle changing with y bends the stripes only gently.
      const across = -(x - w / 2) * Math.sin(a) - (y - 100) * Math.cos(a);
      v = 150 + 70 * Math.sin((2 * Math.PI * across) / 7) + 20 * (rand() - 0.5);
    }
    data[y * w + x] = Math.max(0, Math.min(255, Math.round(v)));
  }
  return encode({ width: w, height: h, data, channels: 1, depth: 8 });
}

describe.runIf(!haveBrowser)('end-to-end (no browser)', () => {
  it('is allowed to be left out only outside CI', () => {
    expect(process.env.CI, 'chromium is required in CI').toBeFalsy();
  });
});

describe.runIf(haveBrowser)('the app in chromium', () => {
  let context: BrowserContext;
  let page: Page;
  let server: { close(): Promise<void> } | null = null;
  let url = '';
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  const imagePath = join(OUT, 'e2e-channel.png');
  const brokenPath = join(OUT, 'broken-image.png');
  const badBackupPath = join(OUT, 'not-a-backup.json');
  const consoleErrors: string[] = [];

  const shot = async (name: string) => { await page.screenshot({ path: join(SHOTS, `${name}.png`) }); };
  const text = async (testId: string) => (await page.getByTestId(testId).first().textContent())?.trim();
  /** The walls as the walls table shows them, written as --walls takes them ("x1,y1,x2,y2;x3,y3,x4,y4"). */
  const drawnWalls = async () => (await Promise.all([1, 2].map((k) => page.getByLabel(`wall ${k} end points`).inputValue()))).map((t) => t.replace(/\s/g, '')).join(';');

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    writeFileSync(imagePath, channelPng());
    writeFileSync(brokenPath, new TextEncoder().encode('this is a text file pretending to be an image'));
    writeFileSync(badBackupPath, '{"sessions": "nope"}');
    const served = await buildAndServe(join(OUT, 'e2e-dist'));
    server = served;
    url = served.url;
    browser = await openBrowser({ profilePrefix: 'retarda-e2e-' }, consoleErrors);
    context = browser.context;
    page = browser.page;
  }, 180_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
  });

  it('opens with a place to bring images in and the safety notes', async () => {
    await page.goto(url);
    await expect.poll(() => page.getByText('Bring in a microscope image').count(), { timeout: 20_000 }).toBe(1);
    await expect.poll(() => page.getByText('Works offline').count(), { timeout: 30_000 }).toBe(1);
    expect(await page.getByText('Your lab\'s safety rules come first').count()).toBe(1);
    await shot('01-empty-app');
  }, 60_000);

  it('shows the same director, order and coherency as analyseOrientation in Node', async () => {
    await page.getByTestId('file-input').setInputFiles(imagePath);
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    expect(await text('image-facts')).toContain('320 × 200 px, grey, 8-bit');
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    await shot('02-orientation-map');

    const img = decodeImage(new Uint8Array(readFileSync(imagePath)), 'e2e-channel.png');
    // The CLI's defaults, as the app's default settings: sigma 2 px, coherency (confidence) weights.
    const { result } = await analyseOrientation(img, { sigmaPx: 2, weighting: 'coherency' });
    expect(await text('director')).toBe(formatCell(result.directorDeg));
    expect(await text('order2d')).toBe(formatCell(result.order2D));
    expect(await text('coherency')).toBe(formatCell(result.coherencyMean));
    expect(await text('n')).toBe(formatCell(result.n));
    // the stripes run between 0 and 30 deg, so the director lies between them
    expect(result.directorDeg).toBeGreaterThan(0);
    expect(result.directorDeg).toBeLessThan(30);

    // The glyphs and the coherency picture are made when first shown.
    await page.getByRole('button', { name: 'direction lines', exact: true }).click();
    await page.locator('.viewer[data-overlay="glyphs"]').waitFor({ timeout: 30_000 });
    await shot('03-line-glyphs');
    await page.getByRole('button', { name: 'coherency', exact: true }).click();
    await page.locator('.viewer[data-overlay="coherency"]').waitFor({ timeout: 30_000 });
    await shot('04-coherency');
    await page.getByRole('button', { name: 'orientation', exact: true }).click();
  }, 120_000);

  it('finds the walls and shows the same core, skin and ratio as analyseProfile in Node', async () => {
    await page.getByRole('button', { name: 'Find walls' }).click();
    // each found wall's row in the walls table gives its fit
    await expect.poll(() => page.getByTestId('walls-editor').getByText(/^found: ±.* px RMS/).count(), { timeout: 60_000 }).toBe(2);
    await page.getByRole('button', { name: 'Profile across the channel' }).click();
    await page.getByTestId('core').waitFor({ timeout: 60_000 });
    await shot('05-profile');

    const img = decodeImage(new Uint8Array(readFileSync(imagePath)), 'e2e-channel.png');
    const { field } = await analyseOrientation(img, { sigmaPx: 2 });
    const r = await analyseProfile(img, field, { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8, weighting: 'coherency' });
    expect(await text('core')).toBe(formatCell(r.core.order));
    expect(await text('skin')).toBe(formatCell(r.skin.order));
    expect(await text('ratio')).toBe(r.notDetermined?.coreSkinRatio ? NOT_DETERMINED : formatCell(r.coreSkinRatio));
    // walls were rendered at y = 40 and y = 160: the found ones lie within 3 px of them
    const ys = r.walls.map((s) => (s.y1 + s.y2) / 2).sort((a, b) => a - b);
    expect(Math.abs(ys[0] - 39.5)).toBeLessThan(3);
    expect(Math.abs(ys[1] - 159.5)).toBeLessThan(3);
    // the stripes lie at 12 deg to the walls near them and turn to 35 deg in the middle: skin more aligned
    expect(r.skin.order).toBeGreaterThan(r.core.order);
  }, 120_000);

  it('walls drawn by dragging land where they were drawn and give the CLI\'s profile for those walls', async () => {
    // Image-to-screen mapping of a fitted view (Viewer.fit): 96 % of the canvas, centred.
    const box = (await page.locator('.viewer canvas').boundingBox())!;
    const k = Math.min(box.width / 320, box.height / 200) * 0.96;
    const ox = box.x + (box.width - 320 * k) / 2, oy = box.y + (box.height - 200 * k) / 2;
    const at = (x: number, y: number) => [ox + (x + 0.5) * k, oy + (y + 0.5) * k] as const;
    const drag = async (a: readonly [number, number], b: readonly [number, number]) => {
      await page.mouse.move(...a); await page.mouse.down(); await page.mouse.move(...b, { steps: 8 }); await page.mouse.up();
    };
    await page.keyboard.press('w');
    await page.getByText('Drag along the first wall').waitFor({ timeout: 5_000 });
    await drag(at(10, 40), at(310, 40));
    await page.getByText('Now drag along the second wall').waitFor({ timeout: 5_000 });
    await drag(at(10, 160), at(310, 160));
    await expect.poll(() => page.getByTestId('walls-editor').getByText('drawn or typed').count(), { timeout: 5_000 }).toBe(2);
    const wallsText = await drawnWalls();
    const v = wallsText.split(/[;,]/).map(Number);
    // each drawn end lies within one screen pixel (1/k image px, plus rounding to 0.1 px) of where it was put
    [[10, 40], [310, 40], [10, 160], [310, 160]].forEach(([x, y], i) => {
      expect(Math.abs(v[2 * i] - x)).toBeLessThan(1 / k + 0.1);
      expect(Math.abs(v[2 * i + 1] - y)).toBeLessThan(1 / k + 0.1);
    });
    await page.keyboard.press('p');
    await page.getByTestId('profile-results').getByText('drawn by hand').waitFor({ timeout: 60_000 });
    await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 60_000 });
    await shot('05b-drawn-walls-profile');
    const img = decodeImage(new Uint8Array(readFileSync(imagePath)), 'e2e-channel.png');
    const { field } = await analyseOrientation(img, { sigmaPx: 2 });
    const r = await analyseProfile(img, field, { channel: parseWalls(wallsText), bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8, weighting: 'coherency' });
    expect(await text('core')).toBe(formatCell(r.core.order));
    expect(await text('skin')).toBe(formatCell(r.skin.order));
    expect(await text('ratio')).toBe(r.notDetermined?.coreSkinRatio ? NOT_DETERMINED : formatCell(r.coreSkinRatio));
  }, 90_000);

  it('draws the stations of a profile across the channel, numbered as in the station table', async () => {
    const wallsText = await drawnWalls();
    await page.getByLabel('Stations along').fill('3');
    await page.getByRole('button', { name: 'Profile across the channel' }).click();
    await page.getByTestId('station-table').waitFor({ timeout: 60_000 });
    await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 60_000 });
    await shot('05c-stations-on-image');
    const img = decodeImage(new Uint8Array(readFileSync(imagePath)), 'e2e-channel.png');
    const { field } = await analyseOrientation(img, { sigmaPx: 2 });
    const r = await analyseProfile(img, field, { channel: parseWalls(wallsText), bins: 20, stations: 3, coreMax: 0.5, skinMin: 0.8, weighting: 'coherency' });
    const rows = await page.getByTestId('station-table').locator('tbody tr').allTextContents();
    expect(rows).toHaveLength(3);
    const cells = await page.getByTestId('station-table').locator('tbody tr').evaluateAll((trs) => trs.map((tr) => [...tr.querySelectorAll('td')].map((td) => td.textContent)));
    r.stations.forEach((st, k) => {
      expect(cells[k][0]).toBe(String(st.station));
      expect(cells[k][2]).toBe(formatCell(st.core.order));
      expect(cells[k][3]).toBe(formatCell(st.skin.order));
    });
  }, 90_000);

  it('after a reload the session is there with its image and numbers', async () => {
    const director = await text('director');
    const core = await text('core');
    await expect.poll(() => text('save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    await page.reload();
    await page.getByTestId('director').waitFor({ timeout: 30_000 });
    expect(await text('director')).toBe(director);
    expect(await text('core')).toBe(core);
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await page.getByRole('button', { name: 'Sessions' }).click();
    expect(await page.locator('.session-list li').count()).toBe(1);
    expect(await page.locator('.session-meta').first().textContent()).toContain('1 image(s), 1 analysed');
    await shot('06-sessions');
    await page.getByRole('button', { name: 'Close the session list' }).click();
  }, 60_000);

  it('says clearly why an unreadable file was not added', async () => {
    await page.getByTestId('file-input').setInputFiles(brokenPath);
    const alert = page.getByRole('alert').filter({ hasText: 'broken-image.png was not added' });
    await alert.waitFor({ timeout: 20_000 });
    const msg = (await alert.textContent()) ?? '';
    expect(msg).toMatch(/PNG|JPEG|TIFF/);
    await shot('07-unreadable-file');
    await page.getByRole('button', { name: 'Sessions' }).click();
    await page.getByTestId('restore-input').setInputFiles(badBackupPath);
    await page.getByRole('alert').filter({ hasText: 'not a Retarda backup' }).waitFor({ timeout: 10_000 });
    await shot('08-not-a-backup');
    await page.getByRole('button', { name: 'Close the session list' }).click();
  }, 60_000);

  it('takes a set of 16-bit and float TIFF files at once', async () => {
    const fixtures = join(ROOT, 'tests', 'fixtures', 'images');
    await page.getByTestId('file-input').setInputFiles([join(fixtures, 'grey16.tif'), join(fixtures, 'float32.tif')]);
    await page.locator('.images li', { hasText: 'float32.tif' }).waitFor({ timeout: 20_000 });
    expect(await page.locator('.images li').count()).toBe(3);
    await expect.poll(() => text('image-facts'), { timeout: 20_000 }).toMatch(/16-bit.*shown stretched/);
    await page.locator('.images li button', { hasText: 'float32.tif' }).click();
    await expect.poll(() => text('image-facts'), { timeout: 20_000 }).toMatch(/32-bit/);
    await shot('08b-float-tiff');
    await page.locator('.images li button', { hasText: 'e2e-channel.png' }).click();
    await page.getByTestId('director').waitFor({ timeout: 30_000 });
  }, 60_000);

  it('an image large enough to be shared between the workers shows the same numbers as analyseOrientation in Node', async () => {
    // 1.5 MP: above the size from which tiles go to the helper worker (SHARE_MIN_PIXELS).
    const w = 1500, h = 1000, data = new Uint8Array(w * h);
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
      const a = 0.5 + 0.3 * Math.sin(x / 400), across = -x * Math.sin(a) + y * Math.cos(a);
      data[y * w + x] = Math.round(128 + 90 * Math.sin(across / 1.4) + 20 * Math.sin(x * 7.1 + y * 3.3));
    }
    const largePath = join(OUT, 'e2e-large.png');
    writeFileSync(largePath, encode({ width: w, height: h, data, channels: 1, depth: 8 }));
    // Three workers: a still image is shared only with two helpers or more (on two cores one helper costs more than it saves).
    await page.goto(`${url}?workers=3`);
    await expect.poll(() => page.locator('.engine').getAttribute('data-helpers'), { timeout: 30_000 }).toBe('2');
    await page.getByTestId('file-input').setInputFiles(largePath);
    await expect.poll(() => text('image-facts'), { timeout: 30_000 }).toContain('1500 × 1000 px');
    await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 60_000 });
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByText('Orientation analysis done.').waitFor({ timeout: 60_000 });
    expect(Number(await page.getByTestId('orient-section').getAttribute('data-helper-tiles'))).toBeGreaterThan(0);
    const { result } = await analyseOrientation(decodeImage(new Uint8Array(readFileSync(largePath)), 'e2e-large.png'), { sigmaPx: 2, weighting: 'coherency' });
    // the director is "not determined" where the Node result withholds it (S_2D's interval reaching 0)
    expect(await text('director')).toBe(result.notDetermined?.directorDeg ? NOT_DETERMINED : formatCell(result.directorDeg));
    expect(await text('order2d')).toBe(formatCell(result.order2D));
    expect(await text('coherency')).toBe(formatCell(result.coherencyMean));
    expect(await text('n')).toBe(formatCell(result.n));
    await page.goto(url);
    await page.locator('.images li button', { hasText: 'e2e-channel.png' }).click();
    await page.getByTestId('director').waitFor({ timeout: 30_000 });
  }, 120_000);

  it('works offline: with the network off and the server stopped, a reload still analyses', async () => {
    await page.waitForFunction(() => navigator.serviceWorker?.controller !== null, undefined, { timeout: 30_000 });
    const director = await text('director');
    await context.setOffline(true);
    await server?.close();
    server = null;
    await page.reload();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 60_000 });
    const dismiss = page.getByRole('button', { name: 'Dismiss' });
    while (await dismiss.count()) await dismiss.first().click();
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByText('Orientation analysis done.').waitFor({ timeout: 60_000 });
    expect(await text('director')).toBe(director);
    await shot('09-offline');
  }, 120_000);

  it('takes an image dropped on the page (still offline) and fits a tablet screen', async () => {
    const b64 = readFileSync(imagePath).toString('base64');
    await page.evaluate((data) => {
      const bytes = Uint8Array.from(atob(data), (c) => c.charCodeAt(0));
      const dt = new DataTransfer();
      dt.items.add(new File([bytes], 'dropped.png', { type: 'image/png' }));
      document.querySelector('.app')!.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
    }, b64);
    await page.locator('.images li', { hasText: 'dropped.png' }).waitFor({ timeout: 20_000 });
    expect(await page.locator('.images li').count()).toBe(5);
    await page.setViewportSize({ width: 1024, height: 768 });
    await page.getByTestId('image-facts').waitFor({ timeout: 20_000 });
    await shot('10-tablet');
    // every control of the analysis panel stays reachable: the panel scrolls instead of overflowing the page
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await page.setViewportSize({ width: 1366, height: 860 });
  }, 60_000);

  it('offers the demo images from an empty session, and they work offline', async () => {
    // The demo list the build emitted (app/build/demoImages.ts reads sample-images/README.md).
    const demos: { file: string; title: string }[] = demoEntries(join(ROOT, 'sample-images'), ['orient', 'profile']);
    expect(demos.length).toBeGreaterThan(0);
    await page.getByRole('button', { name: 'Sessions' }).click();
    await page.getByRole('button', { name: 'New session' }).click();
    await page.getByText('Bring in a microscope image').waitFor({ timeout: 10_000 });
    await shot('11-empty-session-with-demo');
    await page.getByRole('button', { name: demos[0].title }).click();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    const img = decodeImage(new Uint8Array(readFileSync(join(ROOT, 'sample-images', demos[0].file))), demos[0].file);
    const { result } = await analyseOrientation(img, { sigmaPx: 2, weighting: 'coherency' });
    expect(await text('director')).toBe(formatCell(result.directorDeg));
    expect(await text('order2d')).toBe(formatCell(result.order2D));
    await shot('12-demo-orientation');
    expect(consoleErrors.filter((e) => !/Failed to load resource|ERR_INTERNET_DISCONNECTED/.test(e))).toEqual([]);
  }, 120_000);
});
