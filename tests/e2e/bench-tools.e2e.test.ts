/**
 * End-to-end for the bench tools: the camera screen with chromium's fake camera, named set-ups, the
 * compare view and the exports. Builds the app, serves it with vite preview and drives Debian's
 * chromium (as tests/e2e/app.e2e.test.ts). Without /usr/bin/chromium it fails in CI and is reported
 * loudly elsewhere.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Download, Page } from 'playwright-core';
import { decode as decodePng, encode } from 'fast-png';
import { analyseOrientation, analyseProfile, NOT_DETERMINED } from '../../src/analyses/index.ts';
import { decodeImage } from '../../src/image/index.ts';
import { formatCell } from '../../src/cli/format.ts';
import { chooseScaleBar } from '../../src/report/scaleBar.ts';
import { fieldTiffBytes } from '../../src/report/fieldTiff.ts';
import { STATION_COLOUR, stationDrawing } from '../../app/components/stationMarks.ts';
import { CHROMIUM, OUT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';


if (!haveBrowser) {
  const msg = `\n${'!'.repeat(78)}\n!! BENCH-TOOLS END-TO-END TESTS NOT RUN: ${CHROMIUM} is missing (apt-get install -y chromium).\n!! In CI this fails the run.\n${'!'.repeat(78)}\n`;
  if (process.env.CI) throw new Error(msg);
  console.warn(msg);
}

/**
 * A channel picture (8-bit grey PNG, 320 x 200): dark walls above y = 40 and below y = 160, stripes
 * between them along +x at the walls turning by up to `turnDeg` in the middle, with seeded noise.
 */
function channelPng(turnDeg: number, seed0: number): Uint8Array {
  const w = 320, h = 200, data = new Uint8Array(w * h);
  let seed = seed0;
  const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
    let v: number;
    if (y < 40 || y >= 160) v = 30 + 10 * rand();
    else {
      const s = (y - 100) / 60;
      const a = (turnDeg * (1 - s * s) * Math.PI) / 180;
      const across = -(x - w / 2) * Math.sin(a) - (y - 100) * Math.cos(a);
      v = 150 + 70 * Math.sin((2 * Math.PI * across) / 7) + 20 * (rand() - 0.5);
    }
    data[y * w + x] = Math.max(0, Math.min(255, Math.round(v)));
  }
  return encode({ width: w, height: h, data, channels: 1, depth: 8 });
}

/** What `retarda profile FILE --auto-walls` gives with the app's default settings. */
async function cliProfile(path: string) {
  const img = decodeImage(new Uint8Array(readFileSync(path)), path.replace(/^.*\//, ''));
  const { field } = await analyseOrientation(img, { sigmaPx: 2 });
  return analyseProfile(img, field, { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8, weighting: 'coherency' });
}

describe.runIf(!haveBrowser)('bench tools end-to-end (no browser)', () => {
  it('is allowed to be left out only outside CI', () => {
    expect(process.env.CI, 'chromium is required in CI').toBeFalsy();
  });
});

describe.runIf(haveBrowser)('the bench tools in chromium', () => {

  let page: Page;
  let server: { close(): Promise<void> } | null = null;
  let url = '';
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  const consoleErrors: string[] = [];
  const shot = async (name: string) => { await page.screenshot({ path: join(SHOTS, `${name}.png`) }); };
  const text = async (testId: string) => (await page.getByTestId(testId).first().textContent())?.trim() ?? '';

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    const served = await buildAndServe(join(OUT, 'e2e-bench-tools-dist'));
    server = served;
    url = served.url;
    browser = await openBrowser({ profilePrefix: 'retarda-e2e-tools-', acceptDownloads: true, extraArgs: ['--use-fake-device-for-media-stream', '--use-fake-ui-for-media-stream'] }, consoleErrors);
    page = browser.page;
    await page.goto(url);
    await page.getByText('Works offline').waitFor({ timeout: 30_000 });
  }, 180_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
  });

  it('the fake camera gives live readouts of order and director that keep updating', async () => {
    await page.getByRole('button', { name: 'Camera', exact: true }).click();
    await page.getByTestId('live-order').waitFor({ timeout: 60_000 });
    const count = async () => Number(await page.getByTestId('live-readout').getAttribute('data-readings'));
    const first = await count();
    // S_2D lies in [0, 1] and the director in (-90, 90] by definition (docs/methods.md §8.1)
    const order = Number(await text('live-order'));
    expect(order).toBeGreaterThanOrEqual(0);
    expect(order).toBeLessThanOrEqual(1);
    // the director is a number in (-90, 90], or "not determined" when S_2D's interval reaches 0 (the fake camera's
    // moving pattern may have no clear direction)
    const directorText = await text('live-director');
    if (directorText !== NOT_DETERMINED) {
      const director = Number(directorText);
      expect(director).toBeGreaterThan(-90);
      expect(director).toBeLessThanOrEqual(90);
    }
    await expect.poll(count, { timeout: 20_000 }).toBeGreaterThan(first + 3);
    await expect.poll(async () => Number(await text('live-fps')), { timeout: 10_000 }).toBeGreaterThan(0);
    expect(Number(await text('live-latency'))).toBeGreaterThan(0);
    expect(await text('live-basis')).toMatch(/Analysed at \d+ × \d+ px/);
    expect(await page.getByText('Turn the lamp down before you switch from the camera to the eyepieces').count()).toBe(1);
    await shot('20-camera-live');
  }, 120_000);

  it('at full size a frame converts itself (VideoFrame.copyTo), to the bytes drawing it on a canvas gives', async () => {
    // The worker reads a full-size frame with copyTo when its part lies on even pixels, else through a canvas
    // (app/worker/analysis.worker.ts, framePixels): both must give the analysis the same RGBA bytes.
    const diff = await page.evaluate(async () => {
      const v = document.querySelector('video[aria-label="Live camera picture"]') as HTMLVideoElement;
      const frame = new VideoFrame(v), w = frame.displayWidth, h = frame.displayHeight;
      const counts: number[] = [];
      for (const r of [{ x: 0, y: 0, width: w, height: h }, { x: 40, y: 22, width: w / 2, height: h / 2 }]) {
        const c = new OffscreenCanvas(r.width, r.height), g = c.getContext('2d', { willReadFrequently: true })!;
        g.drawImage(frame, r.x, r.y, r.width, r.height, 0, 0, r.width, r.height);
        const drawn = g.getImageData(0, 0, r.width, r.height).data, copied = new Uint8Array(r.width * r.height * 4);
        await frame.copyTo(copied, { format: 'RGBA', colorSpace: 'srgb', rect: r });
        let n = 0;
        for (let i = 0; i < copied.length; i++) if (copied[i] !== drawn[i]) n++;
        counts.push(n);
      }
      frame.close();
      return counts;
    });
    expect(diff).toEqual([0, 0]);
    await page.getByLabel('Readout size').selectOption({ index: 0 });
    await expect.poll(() => text('live-basis'), { timeout: 20_000 }).toMatch(/full size/);
    const before = Number(await page.getByTestId('live-readout').getAttribute('data-readings'));
    await expect.poll(async () => Number(await page.getByTestId('live-readout').getAttribute('data-readings')), { timeout: 20_000 }).toBeGreaterThan(before + 3);
    const order = Number(await text('live-order'));
    expect(order).toBeGreaterThanOrEqual(0);
    expect(order).toBeLessThanOrEqual(1);
    await page.getByLabel('Readout size').selectOption({ index: 1 });
  }, 60_000);

  it('a rectangle drawn on the live picture is what the readout reads', async () => {
    await page.getByRole('button', { name: 'Read a rectangle' }).click();
    const box = (await page.getByLabel('Live picture overlay').boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height * 0.35);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.65, box.y + box.height * 0.7, { steps: 6 });
    await page.mouse.up();
    await page.getByText('Live readout of the rectangle').waitFor({ timeout: 5_000 });
    const before = Number(await page.getByTestId('live-readout').getAttribute('data-readings'));
    await expect.poll(async () => Number(await page.getByTestId('live-readout').getAttribute('data-readings')), { timeout: 20_000 }).toBeGreaterThan(before + 2);
    // The analysed picture is the rectangle plus the tensor's halo: smaller than the whole frame (readings of
    // frames grabbed before the rectangle was drawn may still be arriving, so wait for the first of the new ones).
    const [fw, fh] = (await text('camera-size')).match(/(\d+) × (\d+)/)!.slice(1).map(Number);
    await expect.poll(async () => {
      const [w, h] = (await text('live-basis')).match(/Analysed at (\d+) × (\d+)/)!.slice(1).map(Number);
      return w * h;
    }, { timeout: 20_000 }).toBeLessThan((fw * fh) / 4);
    await page.getByLabel('orientation colours').check();
    await page.waitForTimeout(600);
    await shot('21-camera-rectangle');
  }, 60_000);

  it('a frozen frame is kept as an image of the session', async () => {
    await page.getByRole('button', { name: 'Freeze frame' }).click();
    await page.getByRole('button', { name: 'Keep this frame' }).click();
    await page.getByTestId('kept-frames').waitFor({ timeout: 30_000 });
    const kept = (await text('kept-frames')).replace('Kept: ', '');
    expect(kept).toMatch(/^camera-\d{8}-\d{6}\.png$/);
    await shot('22-camera-kept');
    await page.getByRole('button', { name: 'Close the camera' }).click();
    await page.locator('.images li', { hasText: kept }).waitFor({ timeout: 10_000 });
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    expect(await text('image-facts')).toMatch(/^\d+ × \d+ px, RGB, 8-bit/);
  }, 60_000);

  it('a named set-up is saved, applied to the session, and its pixel size from the optics replaces the file\'s', async () => {
    await page.getByTestId('setup-button').click();
    await page.getByLabel('Set-up name').fill('Bench 2, 10x red plate');
    await page.getByLabel('from the optics').check();
    await page.getByLabel('Camera pixel', { exact: true }).fill('3.45');
    await page.getByLabel('Objective', { exact: true }).fill('10');
    // docs/methods.md §11.7 (sensor sizes from memory; arithmetic derived): 3.45 um at 10x and 1x = 0.345 um/px
    await expect.poll(() => text('setup-pixel-size'), { timeout: 5_000 }).toContain('0.345 µm/px');
    expect(await text('setup-cli')).toContain('--polariser-deg 0 --compensator-nm 550 --compensator-deg 45 --illuminant 3200K --sign positive');
    expect(await text('setup-cli')).toContain('--um-per-px 0.345');
    await shot('23-setup-form');
    await page.getByRole('button', { name: 'Save and apply to this session' }).click();
    // the header's set-up line names the set-up and the pixel size it gives, with where that came from; applying it says so
    await expect.poll(() => text('setup-button'), { timeout: 5_000 }).toBe('Set-up: Bench 2, 10x red plate · 0.345 µm/px (objective and camera)');
    await page.getByText(/^Set-up "Bench 2, 10x red plate" applied to every image of this session\. Lengths in this session now use 0\.345 µm\/px/).waitFor({ timeout: 5_000 });
    await expect.poll(() => text('setups-session-lengths'), { timeout: 5_000 }).toContain('0.345 µm/px from the set-up "Bench 2, 10x red plate"');
    await page.getByRole('button', { name: 'Close the set-ups' }).click();
    await expect.poll(() => text('image-facts'), { timeout: 5_000 }).toContain('0.345 µm/px from the set-up "Bench 2, 10x red plate": objective 10× and camera pixel 3.45 µm');
    await expect.poll(() => text('save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    await page.reload();
    await expect.poll(() => text('setup-button'), { timeout: 20_000 }).toBe('Set-up: Bench 2, 10x red plate · 0.345 µm/px (objective and camera)');
    await page.getByTestId('setup-button').click();
    await page.getByRole('button', { name: 'Bench 2, 10x red plate (applied)' }).waitFor({ timeout: 5_000 });
    await shot('24-setup-saved');
    await page.getByRole('button', { name: 'Close the set-ups' }).click();
  }, 60_000);

  const straight = join(OUT, 'compare-straight.png'), turned = join(OUT, 'compare-turned.png');

  it('compare: two profiled images side by side, with the same core, skin and ratio as the command line, sortable and saved as CSV', async () => {
    // Stripes turned -35 and 40 deg at the middle (along the walls at the walls): the finder places both walls within
    // about half a pixel. At 8 deg the stripes run along the walls almost everywhere, and the finder refuses rather
    // than place the walls up to 7 px off as it did before.
    writeFileSync(straight, channelPng(-35, 7));
    writeFileSync(turned, channelPng(40, 11));
    await page.getByRole('button', { name: 'Sessions' }).click();
    await page.getByRole('button', { name: 'New session' }).click();
    await page.getByTestId('file-input').setInputFiles([straight, turned]);
    await page.locator('.images li', { hasText: 'compare-turned.png' }).waitFor({ timeout: 30_000 });
    for (const name of ['compare-straight.png', 'compare-turned.png']) {
      await page.locator('.images li button', { hasText: name }).click();
      await expect.poll(() => text('image-facts'), { timeout: 20_000 }).toContain('320 × 200');
      await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 30_000 });
      await page.getByRole('button', { name: 'Find walls' }).click();
      await expect.poll(() => page.getByTestId('walls-editor').getByText(/^found: ±.* px RMS/).count(), { timeout: 60_000 }).toBe(2);
      await page.getByRole('button', { name: 'Profile across the channel' }).click();
      await page.getByTestId('core').waitFor({ timeout: 60_000 });
      await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 30_000 });
    }
    await page.getByRole('button', { name: 'Compare', exact: true }).click();
    await page.getByTestId('compare-table').waitFor({ timeout: 10_000 });
    const rows = page.getByTestId('compare-table').locator('tbody tr');
    expect(await rows.count()).toBe(2);
    const a = await cliProfile(straight), b = await cliProfile(turned);
    const cell = async (i: number, id: string) => ((await rows.nth(i).getByTestId(id).locator('strong').textContent()) ?? '').trim();
    expect(await cell(0, 'compare-core')).toBe(formatCell(a.core.order));
    expect(await cell(0, 'compare-skin')).toBe(formatCell(a.skin.order));
    expect(await cell(0, 'compare-ratio')).toBe(formatCell(a.coreSkinRatio));
    expect(await cell(1, 'compare-core')).toBe(formatCell(b.core.order));
    // the more the stripes turn in the middle, the lower the core S against the channel axis
    expect(b.core.order).toBeLessThan(a.core.order);
    expect(await page.getByTestId('compare-plot').locator('polyline').count()).toBe(2);
    await shot('25-compare');
    // Core S, first click: highest first
    await page.getByRole('button', { name: /^Core S/ }).click();
    expect((await rows.nth(0).textContent())).toContain('compare-straight.png');
    await page.getByRole('button', { name: /^Core S/ }).click();
    expect((await rows.nth(0).textContent())).toContain('compare-turned.png');
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Save the table as CSV' }).click()]);
    const csv = readFileSync((await (download as Download).path())!, 'utf8').split('\r\n');
    expect(csv[0].split(',').slice(0, 4)).toEqual(['session', 'image', 'field', 'coreOrder']);
    expect(csv).toHaveLength(4);
    // rows in the order shown (Core S ascending); the session name is quoted (it has commas), so match the middle.
    // The CSV has every digit of the page's numbers, which may differ from Node's in the last of 17 (the two engines'
    // floating point, seen: one unit in the last place).
    const coreOf = (line: string, image: string) => Number(new RegExp(`,${image.replace('.', '\\.')},texture,([^,]+),`).exec(line)?.[1]);
    expect(Math.abs(coreOf(csv[1], 'compare-turned.png') / b.core.order - 1)).toBeLessThan(1e-12);
    expect(Math.abs(coreOf(csv[2], 'compare-straight.png') / a.core.order - 1)).toBeLessThan(1e-12);
  }, 240_000);

  it('compare across sessions: a duplicated session shows beside the first, labelled by session', async () => {
    await page.getByRole('button', { name: 'Back to the images' }).click();
    await page.getByRole('button', { name: 'Sessions' }).click();
    await page.locator('.session-list li.current').getByRole('button', { name: 'Duplicate' }).click();
    await expect.poll(() => page.locator('.session-list li').count(), { timeout: 10_000 }).toBe(3);
    await page.getByRole('button', { name: 'Close the session list' }).click();
    await page.getByRole('button', { name: 'Compare', exact: true }).click();
    await page.locator('.compare-sessions label', { hasText: '(copy)' }).locator('input').check();
    await expect.poll(() => page.getByTestId('compare-table').locator('tbody tr').count(), { timeout: 10_000 }).toBe(4);
    expect(await page.getByTestId('compare-table').locator('thead').textContent()).toContain('Session');
    await shot('26-compare-sessions');
    await page.getByRole('button', { name: 'Back to the images' }).click();
  }, 60_000);

  it('exports: the view as PNG with a scale bar of the chosen length, the field TIFF, and the printable report', async () => {
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 30_000 });
    const [pngDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'picture', exact: true }).click()]);
    const pngBytes = readFileSync((await pngDownload.path())!);
    writeFileSync(join(SHOTS, '29-exported-view.png'), pngBytes);
    const png = decodePng(pngBytes);
    // small pictures are enlarged by a whole factor; the caption goes below the picture
    const up = png.width / 320;
    expect(Number.isInteger(up)).toBe(true);
    expect(png.height).toBeGreaterThan(200 * up);
    // the scale bar: the longest run of pure white in the bottom-left quarter is as long as chooseScaleBar
    // says (no pixel size: 50 px), times the enlargement
    const bar = chooseScaleBar(320, null);
    const ch = png.channels;
    const white = (x: number, y: number) => [0, 1, 2].every((c) => png.data[(y * png.width + x) * ch + c] === 255);
    let longest = 0;
    for (let y = Math.floor(150 * up); y < 200 * up; y++) {
      let run = 0;
      for (let x = 0; x < png.width / 2; x++) { run = white(x, y) ? run + 1 : 0; longest = Math.max(longest, run); }
    }
    expect(Math.abs(longest - bar.lengthPx * up)).toBeLessThanOrEqual(1);

    // The field TIFF download is byte for byte what `retarda orient --field-out` writes.
    const field = page.getByRole('button', { name: 'field TIFF' });
    const [tif] = await Promise.all([page.waitForEvent('download'), field.click()]);
    const img = decodeImage(new Uint8Array(readFileSync(turned)), 'compare-turned.png');
    const { field: f } = await analyseOrientation(img, { sigmaPx: 2 });
    expect(readFileSync((await tif.path())!).equals(Buffer.from(fieldTiffBytes(f, 'retarda orient compare-turned.png')))).toBe(true);

    await page.getByRole('button', { name: 'report', exact: true }).click();
    const report = page.getByTestId('report');
    await report.waitFor({ timeout: 10_000 });
    const b = await cliProfile(turned);
    const body = (await report.textContent()) ?? '';
    expect(body).toContain('not a safety or quality certification');
    expect(body).toContain(formatCell(b.core.order));
    expect(body).toContain('retarda profile compare-turned.png --auto-walls');
    expect(body).toContain('retarda orient compare-turned.png');
    expect(await report.getByTestId('report-calibration').first().textContent()).toBe('not calibrated (lengths in px)');
    expect(await report.locator('img').count()).toBe(2);
    await shot('27-report');
    await page.emulateMedia({ media: 'print' });
    await shot('28-report-print');
    await page.emulateMedia({ media: 'screen' });
    await page.getByRole('button', { name: 'Close the report' }).click();
    expect(consoleErrors.filter((e) => !/Failed to load resource/.test(e))).toEqual([]);
  }, 120_000);

  it('the exported view shows the profile\'s station lines where the stations lie', async () => {
    // The same export as above, now with three stations along the channel.
    await page.getByLabel('Stations along').fill('3');
    await page.getByRole('button', { name: 'Profile across the channel' }).click();
    await page.getByTestId('station-table').waitFor({ timeout: 60_000 });
    await page.getByTestId('busy').waitFor({ state: 'detached', timeout: 60_000 });
    const [pngDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'picture', exact: true }).click()]);
    const pngBytes = readFileSync((await pngDownload.path())!);
    writeFileSync(join(SHOTS, '29b-exported-view-stations.png'), pngBytes);
    const rgb = [1, 3, 5].map((i) => parseInt(STATION_COLOUR.slice(i, i + 2), 16));
    const stationPixel = (p: ReturnType<typeof decodePng>) => (x: number, y: number) =>
      x >= 0 && y >= 0 && x < p.width && y < p.height && [0, 1, 2].every((c) => p.data[(y * p.width + x) * p.channels + c] === rgb[c]);
    const countStationPixels = (p: ReturnType<typeof decodePng>) => {
      const at = stationPixel(p);
      let n = 0;
      for (let y = 0; y < p.height; y++) for (let x = 0; x < p.width; x++) if (at(x, y)) n++;
      return n;
    };
    // The export made with one station (the test above) has no pixel of the station colour: the image and its overlay never give it.
    expect(countStationPixels(decodePng(readFileSync(join(SHOTS, '29-exported-view.png'))))).toBe(0);
    const png = decodePng(pngBytes);
    const up = png.width / 320;
    const at = stationPixel(png);
    // Where the stations lie: the profile `retarda profile --auto-walls --stations 3` gives, through the viewer's geometry.
    const img = decodeImage(new Uint8Array(readFileSync(turned)), 'compare-turned.png');
    const { field } = await analyseOrientation(img, { sigmaPx: 2 });
    const r = await analyseProfile(img, field, { autoWalls: true, bins: 20, stations: 3, coreMax: 0.5, skinMin: 0.8, weighting: 'coherency' });
    const { boundaries } = stationDrawing(r);
    expect(boundaries).toHaveLength(4);
    for (const b of boundaries) {
      // Points along each boundary (inside the picture): a dashed line 2/3 drawn, so most points have the colour within 2 picture px.
      let near = 0, tried = 0;
      for (let t = 0.1; t <= 0.9; t += 0.02) {
        const x = Math.round((b.x1 + t * (b.x2 - b.x1) + 0.5) * up), y = Math.round((b.y1 + t * (b.y2 - b.y1) + 0.5) * up);
        if (x < 0 || y < 0 || x >= png.width || y >= 200 * up) continue;
        tried++;
        let hit = false;
        for (let dy = -2; dy <= 2 && !hit; dy++) for (let dx = -2; dx <= 2 && !hit; dx++) hit = at(x + dx, y + dy);
        if (hit) near++;
      }
      expect(tried).toBeGreaterThan(10);
      expect(near / tried).toBeGreaterThan(0.5);
    }
  }, 90_000);

  it('the camera, compare and set-up screens fit a tablet screen without sideways scrolling', async () => {
    await page.setViewportSize({ width: 1024, height: 768 });
    const overflow = () => page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    await page.getByRole('button', { name: 'Compare', exact: true }).click();
    await page.getByTestId('compare-table').waitFor({ timeout: 10_000 });
    expect(await overflow()).toBeLessThanOrEqual(0);
    await shot('30-compare-tablet');
    await page.getByRole('button', { name: 'Camera', exact: true }).click();
    await page.getByTestId('live-order').waitFor({ timeout: 60_000 });
    expect(await overflow()).toBeLessThanOrEqual(0);
    await shot('31-camera-tablet');
    await page.getByRole('button', { name: 'Close the camera' }).click();
    await page.getByTestId('setup-button').click();
    expect(await overflow()).toBeLessThanOrEqual(0);
    await shot('32-setup-tablet');
    await page.getByRole('button', { name: 'Close the set-ups' }).click();
    await page.setViewportSize({ width: 1366, height: 860 });
  }, 90_000);
});
