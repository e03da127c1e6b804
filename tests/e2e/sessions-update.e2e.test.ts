/**
 * End-to-end: a new version of the app appears on the server while a session is open. Two production builds
 * that differ only in their version string (RETARDA_BUILD) are made; the page is opened on the first, the
 * server is switched to the second and the browser is told to look for an update, as it does on its own. The
 * page must not reload under the user: the session, a half-typed edit and the saving all carry on, the user is
 * told a new version is ready, and only their click saves and reloads into the new version, with nothing lost.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { CHROMIUM, OUT, SHOTS, haveBrowser, openBrowser } from './support.ts';
import { buildApp, serveStatic, shotsAtTwoWidths, smallChannelPng, storedSessions, type StaticServer } from './sessions-support.ts';

if (!haveBrowser) {
  const msg = `END-TO-END TESTS NOT RUN: ${CHROMIUM} is missing (apt-get install -y chromium). In CI this fails the run.`;
  if (process.env.CI) throw new Error(msg);
  console.warn(`\n${'!'.repeat(78)}\n!! ${msg}\n${'!'.repeat(78)}\n`);
}

describe.runIf(haveBrowser)('a service-worker update while a session is open', () => {
  let server: StaticServer | null = null;
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  let page: Page;
  const errors: string[] = [];
  const [first, second] = [join(OUT, 'e2e-dist-update-1'), join(OUT, 'e2e-dist-update-2')];
  const imagePath = join(OUT, 'update-channel.png');
  const text = async (id: string) => (await page.getByTestId(id).first().textContent())?.trim();
  const bins = () => page.getByLabel('Bins across');
  /** The version the page runs, as its help says. */
  const version = async () => {
    await page.getByRole('button', { name: 'Keyboard shortcuts' }).click();
    const v = (await text('app-version'))?.replace('Retarda version ', '');
    await page.getByRole('button', { name: 'Keyboard shortcuts' }).click();
    return v;
  };
  const sameDocument = () => page.evaluate(() => (window as unknown as { sameDocument?: boolean }).sameDocument === true);

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    writeFileSync(imagePath, smallChannelPng(11));
    await buildApp(first, 'update-1');
    await buildApp(second, 'update-2');
    server = await serveStatic(first);
    browser = await openBrowser({ profilePrefix: 'retarda-update-' }, errors);
    page = browser.page;
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  it('the first version runs offline-ready with a session open', async () => {
    await page.goto(server!.url);
    await page.getByTestId('file-input').setInputFiles(imagePath);
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    await bins().fill('25');
    await expect.poll(() => text('save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    // The service worker controls the page from its first reload on.
    await page.reload();
    await page.waitForFunction(() => navigator.serviceWorker.controller !== null, undefined, { timeout: 30_000 });
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    expect(await version()).toBe('0.1.0+update-1');
  }, 120_000);

  it('a new version on the server: the user is told, and the page, the session and a half-typed edit stay as they are', async () => {
    await page.evaluate(() => { (window as unknown as { sameDocument: boolean }).sameDocument = true; });
    const director = await text('director');
    const name = await text('session-name');
    // A half-typed new name for the session (not yet kept) and a change being saved.
    await page.getByRole('button', { name: 'Sessions', exact: true }).click();
    await page.locator('.session-list li').first().getByRole('button', { name: 'Rename' }).click();
    await page.getByLabel('New name').fill('Run after the update');
    await bins().fill('33');

    server!.setRoot(second);
    await page.evaluate(async () => { await (await navigator.serviceWorker.getRegistration())!.update(); });
    const banner = page.getByTestId('update-banner');
    await banner.waitFor({ timeout: 60_000 });
    expect(await banner.textContent()).toContain('A new version of the app is ready.');

    // Not reloaded: the same document, the same session and numbers, the half-typed name still in its box.
    expect(await sameDocument()).toBe(true);
    expect(await text('session-name')).toBe(name);
    expect(await text('director')).toBe(director);
    expect(await page.getByLabel('New name').inputValue()).toBe('Run after the update');
    expect(await bins().inputValue()).toBe('33');
    // Saving goes on while the new version waits.
    await expect.poll(async () => (await storedSessions(page))[0].settings.bins, { timeout: 10_000 }).toBe(33);
    await page.getByRole('button', { name: 'Keep name' }).click();
    await expect.poll(async () => (await storedSessions(page))[0].name, { timeout: 10_000 }).toBe('Run after the update');
    await page.getByRole('button', { name: 'Close the session list' }).click();
    await shotsAtTwoWidths(page, () => page.getByTestId('update-banner'), (w) => join(SHOTS, `sessions-e-update-ready-${w}.png`));
    await bins().fill('34');
    expect(await version()).toBe('0.1.0+update-1');
  }, 120_000);

  it('"Save my work and reload" starts the new version with the session whole, including the last change; another tab is not reloaded under its user', async () => {
    // A second tab, opened before the click: it runs the first version too, and finds the session taken.
    const other = await browser!.context.newPage();
    other.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()); });
    await other.goto(server!.url.replace(/\/$/, '/?second'));
    await other.getByTestId('session-elsewhere').waitFor({ timeout: 30_000 });
    await other.getByTestId('update-banner').waitFor({ timeout: 30_000 });
    await other.evaluate(() => { (window as unknown as { sameDocument: boolean }).sameDocument = true; });
    await other.getByLabel('Bins across').fill('77');

    const orient = (await storedSessions(page))[0];
    const reloaded = page.waitForEvent('load', { timeout: 30_000 });
    await page.getByRole('button', { name: 'Save my work and reload' }).click();
    await reloaded;
    expect(await sameDocument()).toBe(false);
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    expect(await version()).toBe('0.1.0+update-2');
    expect(await text('session-name')).toBe('Run after the update');
    expect(await bins().inputValue()).toBe('34');
    const [after] = await storedSessions(page);
    expect(after.settings.bins).toBe(34);
    expect(after.work[after.images[0].id].orient).toEqual(orient.work[orient.images[0].id].orient);
    expect(await page.getByTestId('update-banner').count()).toBe(0);

    // The other tab now runs under the new service worker but was not reloaded: its unsaved change is still there.
    await other.waitForFunction(() => navigator.serviceWorker.controller !== null, undefined, { timeout: 10_000 });
    expect(await other.evaluate(() => (window as unknown as { sameDocument?: boolean }).sameDocument)).toBe(true);
    expect(await other.getByLabel('Bins across').inputValue()).toBe('77');
    // Its change cannot be saved (the session is the first tab's), so it is not reloaded on its click either.
    await other.getByRole('button', { name: 'Save my work and reload' }).click();
    await other.getByRole('alert').filter({ hasText: 'The new version was not started, so that nothing is lost' }).waitFor({ timeout: 10_000 });
    await shotsAtTwoWidths(other, () => other.getByRole('alert').filter({ hasText: 'The new version was not started' }), (w) => join(SHOTS, `sessions-e-not-started-${w}.png`));
    expect(await other.evaluate(() => (window as unknown as { sameDocument?: boolean }).sameDocument)).toBe(true);
    // Kept as a copy, it reloads into the new version with the change.
    await other.getByRole('button', { name: 'Work on a copy here' }).click();
    await expect.poll(async () => (await other.getByTestId('session-name').textContent())?.trim(), { timeout: 10_000 }).toBe('Run after the update (copy)');
    const otherReloaded = other.waitForEvent('load', { timeout: 30_000 });
    await other.getByRole('button', { name: 'Save my work and reload' }).click();
    await otherReloaded;
    await other.getByTestId('image-facts').waitFor({ timeout: 60_000 });
    expect(await other.getByLabel('Bins across').inputValue()).toBe('77');
    const stored = (await storedSessions(page)).map((x) => [x.name, x.settings.bins]);
    expect(stored).toHaveLength(2);
    expect(stored).toEqual(expect.arrayContaining([['Run after the update', 34], ['Run after the update (copy)', 77]]));
    expect(errors.filter((e) => !/Failed to load resource/.test(e))).toEqual([]);
  }, 120_000);
});
