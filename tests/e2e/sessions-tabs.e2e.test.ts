/**
 * End-to-end: two tabs on one session never overwrite each other's work. The second tab that opens a session
 * the first one has open is told so, writes nothing, and can work on a copy; the first tab's saves are
 * untouched. Checked on the stored records themselves (IndexedDB, read in the page), in Debian's chromium
 * against the production build.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { CHROMIUM, OUT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';
import { dismissAll, shotsAtTwoWidths, smallChannelPng, storedRecords, storedSessions } from './sessions-support.ts';

if (!haveBrowser) {
  const msg = `END-TO-END TESTS NOT RUN: ${CHROMIUM} is missing (apt-get install -y chromium). In CI this fails the run.`;
  if (process.env.CI) throw new Error(msg);
  console.warn(`\n${'!'.repeat(78)}\n!! ${msg}\n${'!'.repeat(78)}\n`);
}

describe.runIf(haveBrowser)('two tabs on one session', () => {
  let server: { url: string; close(): Promise<void> } | null = null;
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  let tabA: Page, tabB: Page;
  const imagePath = join(OUT, 'two-tabs.png');
  const errors: string[] = [];
  const text = async (p: Page, id: string) => (await p.getByTestId(id).first().textContent())?.trim();
  const bins = (p: Page) => p.getByLabel('Bins across');

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    writeFileSync(imagePath, smallChannelPng());
    server = await buildAndServe(join(OUT, 'e2e-dist-tabs'));
    browser = await openBrowser({ profilePrefix: 'retarda-tabs-' }, errors);
    tabA = browser.page;
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
  });

  it('the second tab is told the session is open in the other one, and what it changes is not written over the first tab\'s work', async () => {
    await tabA.goto(server!.url);
    await tabA.getByTestId('file-input').setInputFiles(imagePath);
    await tabA.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await bins(tabA).fill('25');
    await expect.poll(() => text(tabA, 'save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    const [original] = await storedSessions(tabA);
    expect(original.settings.bins).toBe(25);

    tabB = await browser!.context.newPage();
    tabB.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()); });
    await tabB.goto(server!.url);
    // The second tab opens the latest session, as a tab always does, and finds it taken.
    const banner = tabB.getByTestId('session-elsewhere');
    await banner.waitFor({ timeout: 30_000 });
    expect(await banner.textContent()).toContain(`“${original.name}” is open in another tab`);
    expect(await banner.textContent()).toContain('nothing you change here is saved');
    expect(await text(tabB, 'save-state')).toBe('Not saved: open in another tab');
    await tabB.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await shotsAtTwoWidths(tabB, () => tabB.getByTestId('session-elsewhere'), (w) => join(SHOTS, `sessions-a-second-tab-${w}.png`));
    // The first tab is not told anything and goes on saving.
    expect(await tabA.getByTestId('session-elsewhere').count()).toBe(0);

    // Both change the same setting; only the first tab's change is stored.
    await bins(tabB).fill('7');
    await bins(tabA).fill('26');
    await expect.poll(() => text(tabA, 'save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    // The second tab's change is older than the first tab's last save, and nothing of it reached the store:
    // a write from it would have come within the saver's 600 ms; 2 s are waited.
    await tabB.waitForTimeout(2_000);
    const after = await storedSessions(tabA);
    expect(after).toHaveLength(1);
    expect(after[0].settings.bins).toBe(26);
    expect(await bins(tabB).inputValue()).toBe('7');
    // Images cannot be added there either (their bytes would belong to no saved session).
    await tabB.getByTestId('file-input').setInputFiles(imagePath);
    await tabB.getByRole('alert').filter({ hasText: 'Images cannot be added here while the session is open in another tab' }).waitFor({ timeout: 10_000 });
    expect(Object.keys(await storedRecords(tabA, 'image:'))).toHaveLength(1);
  }, 120_000);

  it('"Work on a copy here" keeps the second tab\'s changes in a new session with its own image, and leaves the first tab\'s alone', async () => {
    await dismissAll(tabB);
    await tabB.getByRole('button', { name: 'Work on a copy here' }).click();
    await expect.poll(() => text(tabB, 'session-name'), { timeout: 10_000 }).toMatch(/\(copy\)$/);
    expect(await tabB.getByTestId('session-elsewhere').count()).toBe(0);
    await expect.poll(() => text(tabB, 'save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    await tabB.getByTestId('image-facts').waitFor({ timeout: 30_000 });

    const sessions = await storedSessions(tabA);
    expect(sessions).toHaveLength(2);
    const copy = sessions.find((s) => s.name.endsWith('(copy)'))!, first = sessions.find((s) => !s.name.endsWith('(copy)'))!;
    expect(first.settings.bins).toBe(26);
    expect(copy.settings.bins).toBe(7);
    expect(copy.images[0].id).not.toBe(first.images[0].id);
    const images = await storedRecords<{ blob: Blob; size: number }>(tabA, 'image:');
    expect(Object.keys(images).sort()).toEqual([`image:${copy.images[0].id}`, `image:${first.images[0].id}`].sort());

    // Each tab now saves its own session.
    await bins(tabB).fill('8');
    await bins(tabA).fill('27');
    await expect.poll(async () => (await storedSessions(tabA)).map((s) => s.settings.bins).sort((a, b) => a - b), { timeout: 10_000 }).toEqual([8, 27]);
  }, 60_000);

  it('the second tab may not delete or rename the session the first has open, and may open it once the first tab is closed', async () => {
    await tabB.getByRole('button', { name: 'Sessions', exact: true }).click();
    const firstRow = tabB.locator('.session-list li').filter({ hasNot: tabB.getByText('(copy)') });
    await firstRow.getByRole('button', { name: 'Delete…' }).click();
    await firstRow.getByRole('button', { name: 'Delete for good' }).click();
    await tabB.getByRole('alert').filter({ hasText: 'That session is open in another tab, so it was not deleted here' }).waitFor({ timeout: 10_000 });
    await shotsAtTwoWidths(tabB, () => tabB.getByRole('alert').filter({ hasText: 'so it was not deleted here' }), (w) => join(SHOTS, `sessions-a-not-deleted-${w}.png`));
    expect(await storedSessions(tabA)).toHaveLength(2);
    await dismissAll(tabB);

    await tabA.close();
    // The browser lets go of a closed tab's locks: the session opens here, and saves.
    await firstRow.locator('.session-open').click();
    await expect.poll(() => text(tabB, 'session-name'), { timeout: 10_000 }).not.toMatch(/\(copy\)$/);
    expect(await tabB.getByTestId('session-elsewhere').count()).toBe(0);
    await tabB.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    expect(await bins(tabB).inputValue()).toBe('27');
    await bins(tabB).fill('28');
    await expect.poll(async () => (await storedSessions(tabB)).map((s) => s.settings.bins).sort((a, b) => a - b), { timeout: 10_000 }).toEqual([8, 28]);
    expect(errors).toEqual([]);
  }, 60_000);
});
