/**
 * End-to-end: the angle series with a compensator image but no sample-free area for it, in Debian's chromium, on the
 * demo set (sample-images/kestrel-angle-*.png with kestrel-angles-plate.png). The form says before the run that S
 * will be "not determined" without the area; the reading then shows "not determined" with the reason and its remedy
 * in words (PLATE_SAMPLE_FREE_GAP through screenWords), as analyseAngleSeries gives it in Node; the area drawn on the
 * image goes into the form, and the reading gives the numbers Node gives with that area. Screenshots at 1366 x 768
 * and 800 px wide go to test-output/screenshots/.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { analyseAngleSeries, NOT_DETERMINED } from '../../src/analyses/index.ts';
import { PLATE_SAMPLE_FREE_GAP } from '../../src/analyses/optics.ts';
import { decodeImage, type Image } from '../../src/image/index.ts';
import { formatCell } from '../../src/cli/format.ts';
import { demoEntries } from '../../app/build/demoImages.ts';
import { DEMO_ANALYSES } from '../../vite.config.ts';
import { screenWords } from '../../app/screenWords.ts';
import { headline } from '../../app/components/NotDetermined.tsx';
import { CHROMIUM, OUT, ROOT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';

const SAMPLES = join(ROOT, 'sample-images');
const load = (file: string): Image => decodeImage(new Uint8Array(readFileSync(join(SAMPLES, file))), file);

describe.runIf(!haveBrowser)('angle series without the compensator image\'s sample-free area end-to-end (no browser)', () => {
  it('is allowed to be left out only outside CI', () => {
    expect(process.env.CI, `${CHROMIUM} is required in CI`).toBeFalsy();
  });
});

describe.runIf(haveBrowser)('the angle series without the compensator image\'s sample-free area, in chromium', () => {
  let page: Page;
  let server: { close(): Promise<void> } | null = null;
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  const consoleErrors: string[] = [];
  const text = async (testId: string) => (await page.getByTestId(testId).first().textContent())?.trim();
  const idle = () => page.getByTestId('busy').waitFor({ state: 'detached', timeout: 120_000 });
  /** A screenshot at 1366 x 768 and at 800 px wide, of what is in view. */
  const shots = async (name: string, testId: string) => {
    for (const [w, tag] of [[1366, 'wide'], [800, 'narrow']] as const) {
      await page.setViewportSize({ width: w, height: 768 });
      await page.getByTestId(testId).scrollIntoViewIfNeeded();
      await page.screenshot({ path: join(SHOTS, `angle-plate-sample-free-${name}-${tag}.png`) });
    }
    await page.setViewportSize({ width: 1366, height: 768 });
  };

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    const s = await buildAndServe(join(OUT, 'e2e-angle-plate-dist'));
    server = s;
    browser = await openBrowser({ profilePrefix: 'retarda-e2e-angle-plate-', height: 768 }, consoleErrors);
    page = browser.page;
    await page.goto(s.url);
  }, 240_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
  });

  it('says S will not be determined, shows "not determined" with the remedy in words, and gives the numbers once the area is drawn', async () => {
    const plateDemo = demoEntries(SAMPLES, DEMO_ANALYSES).find((d) => d.file === 'kestrel-angles-plate.png')!;
    const angles = plateDemo.set!.filter((f) => f !== plateDemo.plate);
    await page.getByText('Bring in a microscope image').waitFor({ timeout: 20_000 });
    await page.getByRole('button', { name: `Open these ${plateDemo.set!.length} together` }).click();
    await page.locator('.images li', { hasText: plateDemo.file }).waitFor({ timeout: 30_000 });
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await page.getByRole('tab', { name: 'Polarised colours' }).click();
    await page.getByLabel('angle series: crossed polarisers at 3 or more angles').check();
    // the demo's area is preselected: nothing to warn about
    expect(await page.getByTestId('quad-plate-sample-free').inputValue()).toBe(plateDemo.plateSampleFree);
    expect(await page.getByTestId('quad-plate-needs').count()).toBe(0);

    // Without it: said before the run, then "not determined" with why and the remedy in words.
    await page.getByTestId('quad-plate-sample-free').fill('');
    expect(await text('quad-plate-needs')).toContain('S will be “not determined”');
    await shots('1-form', 'quad-plate-needs');
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    await page.getByTestId('optics-results').waitFor({ timeout: 120_000 });
    await idle();
    const reading = { anglesDeg: [0, 22.5, 45, 67.5], compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', plate: load(plateDemo.plate!) };
    const bare = (await analyseAngleSeries(angles.map(load), { ...reading, profile: null })).result;
    expect(bare.notDetermined?.order).toBe(PLATE_SAMPLE_FREE_GAP);
    expect(await text('optics-cli')).toBe(`retarda angle-series ${angles.join(' ')} --plate ${plateDemo.plate}`);
    expect(await text('optics-director')).toBe(NOT_DETERMINED);
    expect(await text('optics-order2d')).toBe(NOT_DETERMINED);
    expect(await text('optics-not-determined')).toBe(screenWords(headline(PLATE_SAMPLE_FREE_GAP)));
    await page.getByText('Why, in full').first().click();
    const full = await page.locator('.not-determined-remedies details li').allTextContents();
    expect(full).toEqual([screenWords(PLATE_SAMPLE_FREE_GAP)]);
    expect(full[0]).toContain("draw the compensator image's sample-free area on the image");
    expect(full[0]).not.toContain('--');
    await shots('2-not-determined', 'optics-results');

    // Drawn on the image (the compensator image has the angle images' framing): the form takes it.
    await page.getByTestId('draw-quad-plate-sample-free').click();
    await page.getByTestId('rect-hint').waitFor({ timeout: 5_000 });
    const img = load(angles[0]);
    const box = (await page.locator('.viewer canvas').boundingBox())!;
    // Image-to-screen mapping of a fitted view (Viewer.fit): 96 % of the canvas, centred.
    const k = Math.min(box.width / img.width, box.height / img.height) * 0.96;
    const ox = box.x + (box.width - img.width * k) / 2, oy = box.y + (box.height - img.height * k) / 2;
    const at = (x: number, y: number) => [ox + (x + 0.5) * k, oy + (y + 0.5) * k] as const;
    await page.mouse.move(...at(20, 10)); await page.mouse.down(); await page.mouse.move(...at(900, 100), { steps: 8 }); await page.mouse.up();
    await expect.poll(() => page.getByTestId('quad-plate-sample-free').inputValue(), { timeout: 5_000 }).not.toBe('');
    const v = (await page.getByTestId('quad-plate-sample-free').inputValue()).split(',').map(Number);
    // the rectangle covers the dragged pixels: each edge within one screen pixel (1/k image px) and the rounding to whole pixels
    [[v[0], 20], [v[1], 10], [v[0] + v[2], 901], [v[1] + v[3], 101]].forEach(([got, want]) => expect(Math.abs(got - want)).toBeLessThanOrEqual(1 / k + 0.5));
    expect(await page.getByTestId('quad-plate-needs').count()).toBe(0);
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    const area = v.join(',');
    await expect.poll(() => text('optics-cli'), { timeout: 120_000 }).toBe(`retarda angle-series ${angles.join(' ')} --plate ${plateDemo.plate} --plate-sample-free ${area}`);
    await idle();
    const withArea = (await analyseAngleSeries(angles.map(load), { ...reading, plateSampleFree: { x: v[0], y: v[1], width: v[2], height: v[3] }, profile: null })).result;
    expect(withArea.notDetermined).toBeUndefined();
    expect(await text('optics-order2d')).toBe(formatCell(withArea.order2D));
    expect(await text('optics-director')).toBe(formatCell(withArea.directorDeg));
    await shots('3-with-area', 'optics-results');
    expect(consoleErrors).toEqual([]);
  }, 360_000);
});
