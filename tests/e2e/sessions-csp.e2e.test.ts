/**
 * End-to-end: the built page carries a Content Security Policy with no 'unsafe-inline' and no 'unsafe-eval'
 * (W3C Content Security Policy Level 3), and the app works under it: the analysis worker starts (opencv.js
 * included), an image is analysed, pictures and plots are drawn, panels open, a backup is saved; no
 * violation is reported by the page (securitypolicyviolation events) or in the console of the page or of any
 * worker. Two deliberate breaches at the end show the policy is enforced and that violations would be seen.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { CHROMIUM, OUT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';
import { smallChannelPng } from './sessions-support.ts';

if (!haveBrowser) {
  const msg = `END-TO-END TESTS NOT RUN: ${CHROMIUM} is missing (apt-get install -y chromium). In CI this fails the run.`;
  if (process.env.CI) throw new Error(msg);
  console.warn(`\n${'!'.repeat(78)}\n!! ${msg}\n${'!'.repeat(78)}\n`);
}

/** The directives of a policy, by name (CSP3 "parse a serialized CSP": split on ';', then on whitespace). */
function directives(policy: string): Map<string, string[]> {
  const out = new Map<string, string[]>();
  for (const part of policy.split(';')) {
    const [name, ...values] = part.trim().split(/\s+/);
    if (name) out.set(name.toLowerCase(), values);
  }
  return out;
}

describe.runIf(haveBrowser)('the page\'s content security policy', () => {
  let server: { url: string; close(): Promise<void> } | null = null;
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  let page: Page;
  const consoleLines: string[] = [];
  const imagePath = join(OUT, 'csp-channel.png');
  const violations = () => page.evaluate(() => (window as unknown as { violations: string[] }).violations);
  const policyLines = () => consoleLines.filter((l) => /Content Security Policy|Refused to/i.test(l));

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    writeFileSync(imagePath, smallChannelPng(13));
    server = await buildAndServe(join(OUT, 'e2e-dist-csp'));
    browser = await openBrowser({ profilePrefix: 'retarda-csp-', acceptDownloads: true });
    page = browser.page;
    // Every violation the page reports, from before its first script runs.
    await browser.context.addInitScript(() => {
      const w = window as unknown as { violations: string[] };
      w.violations = [];
      document.addEventListener('securitypolicyviolation', (e) => w.violations.push(`${e.effectiveDirective}: ${e.blockedURI || e.sample}`));
    });
    page.on('console', (m) => consoleLines.push(`page ${m.type()}: ${m.text()}`));
    page.on('worker', (w) => w.on('console', (m) => consoleLines.push(`worker ${w.url()} ${m.type()}: ${m.text()}`)));
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
  });

  it('the served page has a policy without \'unsafe-inline\' or \'unsafe-eval\', and nothing inline for it to block', async () => {
    const html = await (await fetch(server!.url)).text();
    const meta = /<meta http-equiv="Content-Security-Policy" content="([^"]+)">/.exec(html);
    expect(meta, 'the policy is in the page').not.toBeNull();
    const policy = meta![1];
    expect(policy).not.toMatch(/unsafe-inline|unsafe-eval|unsafe-hashes|\*/);
    const d = directives(policy);
    expect(d.get('default-src')).toEqual(["'self'"]);
    expect(d.get('script-src')).toEqual(["'self'"]);
    expect(d.get('style-src')).toEqual(["'self'"]);
    expect(d.get('object-src')).toEqual(["'none'"]);
    expect(d.get('base-uri')).toEqual(["'self'"]);
    // No inline script, style element or style attribute in the page as served.
    expect(html).not.toMatch(/<script(?![^>]*\bsrc=)[^>]*>/);
    expect(html).not.toMatch(/<style|\sstyle=/);
    // The policy comes before every script and style sheet it governs.
    expect(html.indexOf('Content-Security-Policy')).toBeLessThan(html.search(/<script|<link rel="stylesheet"/));
  }, 30_000);

  it('the app works under it: the worker (with opencv.js) starts, an image is analysed and drawn, panels open, a backup is saved', async () => {
    await page.goto(server!.url);
    await page.getByText('Works offline').waitFor({ timeout: 60_000 });
    await page.getByTestId('file-input').setInputFiles(imagePath);
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await page.getByRole('button', { name: 'Analyse orientation' }).click();
    await page.getByTestId('director').waitFor({ timeout: 60_000 });
    await page.locator('.viewer[data-overlay="colour"]').waitFor({ timeout: 30_000 });
    await page.getByRole('button', { name: 'direction lines', exact: true }).click();
    await page.locator('.viewer[data-overlay="glyphs"]').waitFor({ timeout: 30_000 });
    await page.getByRole('button', { name: 'Find walls' }).click();
    await expect.poll(() => page.getByTestId('walls-editor').getByText(/^found: ±.* px RMS/).count(), { timeout: 60_000 }).toBe(2);
    await page.getByRole('button', { name: 'Profile across the channel' }).click();
    await page.getByTestId('core').waitFor({ timeout: 60_000 });
    await page.getByRole('button', { name: 'Keyboard shortcuts' }).click();
    await page.getByTestId('app-version').waitFor();
    await page.getByRole('button', { name: 'Keyboard shortcuts' }).click();
    await page.getByRole('button', { name: 'Sessions', exact: true }).click();
    const download = page.waitForEvent('download');
    await page.getByRole('button', { name: 'Save a backup' }).click();
    expect((await download).suggestedFilename()).toMatch(/^retarda-backup-.*\.json$/);
    await page.getByRole('button', { name: 'Close the session list' }).click();
    await page.getByRole('button', { name: 'Compare' }).click();
    await page.waitForTimeout(500);
    await page.getByRole('button', { name: 'Compare' }).click();
    await page.screenshot({ path: join(SHOTS, 'sessions-f-under-policy.png') });
    expect(await page.locator('.engine').textContent()).toBe('Works offline');
    expect(await violations()).toEqual([]);
    expect(policyLines()).toEqual([]);
  }, 180_000);

  it('the policy is enforced, and a breach would be seen: an inline style, an inline handler and eval are refused and reported', async () => {
    await page.evaluate(() => {
      const w = window as unknown as { evalOutcome?: string; handlerRan?: boolean };
      const div = document.createElement('div');
      div.innerHTML = '<span style="color: red">inline</span><img src="./no-such-picture.png" onerror="window.handlerRan = true">';
      document.body.appendChild(div);
      // Run by the page itself (code run by the test's evaluate is let through by the browser's debugger).
      setTimeout(() => { try { w.evalOutcome = String(eval('1 + 1')); } catch (e) { w.evalOutcome = (e as Error).name; } }, 0);
    });
    await expect.poll(() => page.evaluate(() => (window as unknown as { evalOutcome?: string }).evalOutcome), { timeout: 5_000 }).toBe('EvalError');
    await expect.poll(violations, { timeout: 5_000 }).toEqual(expect.arrayContaining([
      expect.stringMatching(/^style-src-attr/), expect.stringMatching(/^script-src-attr/), expect.stringMatching(/^script-src: eval/),
    ]));
    expect(await page.evaluate(() => (window as unknown as { handlerRan?: boolean }).handlerRan)).toBeUndefined();
    expect(policyLines().length).toBeGreaterThan(0);
  }, 30_000);
});
