/**
 * End-to-end: the "Against a variable" screen in Debian's chromium. Four channel images from the independent renderer
 * (tests/validation/render) whose core order rises with the draw ratio as S_core = 0.35 + 0.06 x by construction
 * (the truth; skin 0.4), at x = 2, 4, 6, 8, brought in as files, their walls found and profiled on the image screen.
 * On the screen: the variable named, a value per image; the slope's 95 % interval must hold the constructed 0.06, and
 * every number shown must be what the shown `retarda trend` line prints when run (in Node, on the same files). With
 * two values left the line is "not determined", with why, in view. The form (and the Over time screen's) comes back
 * after a reload. Screenshots (1366 x 768 and 800 px wide) go to test-output/screenshots/.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import type { Page } from 'playwright-core';
import { NOT_DETERMINED, type TrendResult } from '../../src/analyses/index.ts';
import { formatCell } from '../../src/report/index.ts';
import { renderScene, scene, writeRenderingPngs } from '../validation/render/index.ts';
import { runCli } from '../support/cliRun.ts';
import { CHROMIUM, OUT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';
import { shellWords } from '../support/shellWords.ts';

const X = [2, 4, 6, 8];
const SLOPE = 0.06;
const CORE = (x: number) => 0.35 + SLOPE * x;

describe.runIf(!haveBrowser)('against a variable end-to-end (no browser)', () => {
  it('is allowed to be left out only outside CI', () => {
    expect(process.env.CI, `${CHROMIUM} is required in CI`).toBeFalsy();
  });
});

describe.runIf(haveBrowser)('the Against a variable screen in chromium', () => {
  let page: Page;
  let server: { close(): Promise<void> } | null = null;
  let url = '';
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  const consoleErrors: string[] = [];
  const dir = mkdtempSync(join(tmpdir(), 'retarda-trend-images-'));
  const files: string[] = [];
  const text = async (testId: string) => (await page.getByTestId(testId).first().textContent())?.trim() ?? '';
  const idle = () => page.getByTestId('busy').waitFor({ state: 'detached', timeout: 120_000 });
  const shot = (name: string) => page.screenshot({ path: join(SHOTS, `trend-${name}.png`) });
  const inView = async (testId: string) => {
    const b = await page.getByTestId(testId).first().boundingBox();
    const v = page.viewportSize()!;
    return !!b && b.x >= 0 && b.y >= 0 && b.x + b.width <= v.width + 1 && b.y + b.height <= v.height + 1;
  };
  const openTrend = async () => {
    await page.getByRole('button', { name: 'Against a variable', exact: true }).click();
    await page.getByTestId('trend-variable').waitFor({ timeout: 10_000 });
  };

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    X.forEach((x, k) => {
      const spec = scene({ name: 'trend-e2e', seed: 8100 + k, width: 360, height: 260, order: { core: CORE(x), skin: 0.4 } });
      files.push(writeRenderingPngs(renderScene(spec), dir, `draw-${x}`)[0]);
    });
    const s = await buildAndServe(join(OUT, 'e2e-trend-dist'));
    server = s;
    url = s.url;
    browser = await openBrowser({ profilePrefix: 'retarda-e2e-trend-', height: 768, acceptDownloads: true }, consoleErrors);
    page = browser.page;
  }, 240_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
    rmSync(dir, { recursive: true, force: true });
  });

  it('core S against the draw ratio: the slope interval holds the constructed 0.06, numbers as the shown retarda trend line prints them', async () => {
    await page.goto(url);
    await page.getByText('Bring in a microscope image').waitFor({ timeout: 20_000 });
    await page.getByTestId('file-input').setInputFiles(files);
    await expect.poll(() => page.locator('.images li').count(), { timeout: 60_000 }).toBe(X.length);
    await idle();
    const names = files.map((p) => basename(p));
    for (const name of names) {
      await page.locator('.images li button', { hasText: name }).click();
      await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
      await idle();
      await page.getByRole('button', { name: 'Find walls' }).click();
      await expect.poll(() => page.getByTestId('walls-editor').getByText(/^found: ±.* px RMS/).count(), { timeout: 60_000 }).toBe(2);
      await idle();
      await page.getByRole('button', { name: 'Profile across the channel' }).click();
      await page.getByTestId('profile-results').waitFor({ timeout: 120_000 });
      await idle();
    }

    await openTrend();
    // Nothing typed yet: says what to do.
    expect(await text('trend-empty')).toMatch(/^No image has a value yet: type the variable's value beside each image\./);
    expect(await page.getByTestId('trend-reading').inputValue()).toBe('core');
    await page.getByTestId('trend-variable').fill('draw ratio');
    // Bad input in one plain line.
    await page.getByLabel(`draw ratio of ${names[0]}`).fill('2x');
    expect(await text('trend-empty')).toMatch(new RegExp(`^The value of ${names[0]} is "2x", not a number`));
    for (const [k, name] of names.entries()) await page.getByLabel(`draw ratio of ${name}`).fill(String(X[k]));
    await page.getByTestId('trend-verdict').waitFor({ timeout: 10_000 });
    await shot('1366x768');

    // The shown command line, run: its numbers are the screen's.
    const line = await text('trend-cli');
    expect(line).toBe(`retarda trend ${names.join(' ')} --reading core --variable "draw ratio" --values ${X.join(',')} --auto-walls`);
    const words = shellWords(line).slice(1).map((w) => (names.includes(w) ? join(dir, w) : w));
    const run = await runCli([...words, '--json']);
    expect(run.code, run.err).toBe(0);
    const cli = JSON.parse(run.out) as TrendResult;
    const fit = cli.fit;
    expect(await text('trend-slope')).toBe(formatCell(fit.slope));
    expect(await text('trend-slope-ci')).toBe(`95 %: ${formatCell(fit.slopeCiLow)} – ${formatCell(fit.slopeCiHigh)} per unit`);
    expect(await text('trend-n')).toBe(String(X.length));
    expect(await text('trend-verdict')).toBe(`Core S rises with draw ratio: ${formatCell(fit.slope)} per unit of draw ratio (95 %: ${formatCell(fit.slopeCiLow)} to ${formatCell(fit.slopeCiHigh)}).`);
    // The construction's slope lies in the interval shown.
    expect(fit.slopeCiLow).toBeLessThanOrEqual(SLOPE);
    expect(fit.slopeCiHigh).toBeGreaterThanOrEqual(SLOPE);
    // One dot with its error bar per image, the line and its band; the answer in view without scrolling.
    expect(await page.locator('[data-testid="trend-plot"] .series-point').count()).toBe(X.length);
    expect(await page.getByTestId('trend-line').count()).toBe(1);
    expect(await inView('trend-verdict')).toBe(true);
    expect(await inView('trend-plot')).toBe(true);
    expect(await inView('trend-slope-ci')).toBe(true);

    // Exports: the JSON is the screen's result, the CSV has the command's columns.
    const [json] = await Promise.all([page.waitForEvent('download'), page.getByTestId('trend-json').click()]);
    const saved = JSON.parse(await (await import('node:fs')).promises.readFile((await json.path())!, 'utf8')) as TrendResult;
    expect(saved.points.map((p) => p.reading)).toEqual(cli.points.map((p) => p.reading));
    expect(saved.fit.slope).toBe(fit.slope);
    const [csv] = await Promise.all([page.waitForEvent('download'), page.getByTestId('trend-csv').click()]);
    const lines = (await (await import('node:fs')).promises.readFile((await csv.path())!, 'utf8')).trim().split(/\r?\n/);
    expect(lines[0]).toBe('kind,image,value,reading,ciLow,ciHigh,se,used,notDetermined');
    expect(lines.length).toBe(X.length + 3);

    // 800 px wide: the answer sentence stays in view at the top of the screen's answer.
    await page.setViewportSize({ width: 800, height: 768 });
    await page.getByTestId('trend-verdict').scrollIntoViewIfNeeded();
    await shot('800');
    expect(await inView('trend-verdict')).toBe(true);
    await page.setViewportSize({ width: 1366, height: 768 });

    // Two values left: no line, with why and what would determine it, in view.
    await page.getByLabel(`draw ratio of ${names[2]}`).fill('');
    await page.getByLabel(`draw ratio of ${names[3]}`).fill('');
    await expect.poll(() => text('trend-slope')).toBe(NOT_DETERMINED);
    const why = await page.getByTestId('trend-results').locator('tr').first().locator('.not-determined-why').textContent();
    expect(why).toMatch(/lie at 2 values of draw ratio; a straight line needs readings at 3 or more different values/);
    expect(await text('trend-verdict')).toMatch(/^No line: /);
    expect(await inView('trend-verdict')).toBe(true);
    await shot('not-determined');
    for (const [k, name] of names.entries()) await page.getByLabel(`draw ratio of ${name}`).fill(String(X[k]));

    // The Over time screen's form is kept with the session too.
    await page.getByRole('button', { name: 'Over time', exact: true }).click();
    await page.getByTestId('series-interval').fill('7.5');
    await page.getByTestId('series-axis').fill('12');
    // Kept: reload the page (the session is written within the typing pause, and on pagehide).
    await page.waitForTimeout(1500);
    await page.reload();
    await page.locator('.images li').first().waitFor({ timeout: 30_000 });
    await openTrend();
    expect(await page.getByTestId('trend-variable').inputValue()).toBe('draw ratio');
    for (const [k, name] of names.entries()) expect(await page.getByLabel(`draw ratio of ${name}`).inputValue()).toBe(String(X[k]));
    expect(await text('trend-slope')).toBe(formatCell(fit.slope));
    await page.getByRole('button', { name: 'Over time', exact: true }).click();
    expect(await page.getByTestId('series-interval').inputValue()).toBe('7.5');
    expect(await page.getByTestId('series-axis').inputValue()).toBe('12');
    expect(consoleErrors).toEqual([]);
  }, 420_000);
});
