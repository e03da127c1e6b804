/**
 * End-to-end: the optical, fibre and calibration panels in Debian's chromium, on the demo images. Every
 * number the page shows is compared with the same analysis function run here in Node on the same file
 * (what `retarda plate`, `plate-pair`, `angle-series`, `diameter`, `calibrate`, `fibre` call), printed the same way
 * (formatCell, the CLI's number format). Screenshots go to test-output/screenshots/.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import {
  analyseDiameter, analyseAngleSeries, analyseMicrometer, analysePlate, analysePlatePair, analysePlateProfile, fibreNumbersResult, readPlateField,
  NOT_DETERMINED, type OpticsResult, type ProfileResult,
} from '../../src/analyses/index.ts';
import { decodeImage, type Image } from '../../src/image/index.ts';
import { parseRect } from '../../src/common/index.ts';
import { formatCell } from '../../src/cli/format.ts';
import { demoEntries } from '../../app/build/demoImages.ts';
import { DEMO_ANALYSES } from '../../vite.config.ts';
import { CHROMIUM, OUT, ROOT, SHOTS, buildAndServe, haveBrowser, openBrowser } from './support.ts';
import { headline, reasonParts } from '../../app/components/NotDetermined.tsx';

const SAMPLES = join(ROOT, 'sample-images');
const load = (file: string): Image => decodeImage(new Uint8Array(readFileSync(join(SAMPLES, file))), file);

/**
 * What the page must show for an order number of a result computed in Node: "not determined" when the result
 * withholds it (all order numbers under `order`, or this one under its own key), else the number as the CLI prints it.
 */
const expected = (r: OpticsResult | ProfileResult, key: string, v: number | null | undefined) =>
  (r.notDetermined?.order || r.notDetermined?.[key] ? NOT_DETERMINED : formatCell(v ?? null));

describe.runIf(!haveBrowser)('analysis panels end-to-end (no browser)', () => {
  it('is allowed to be left out only outside CI', () => {
    expect(process.env.CI, `${CHROMIUM} is required in CI`).toBeFalsy();
  });
});

describe.runIf(haveBrowser)('the analysis panels in chromium', () => {

  let page: Page;
  let server: { close(): Promise<void> } | null = null;
  let url = '';
  let browser: Awaited<ReturnType<typeof openBrowser>> | null = null;
  const consoleErrors: string[] = [];
  const shot = async (name: string) => { await page.screenshot({ path: join(SHOTS, `analyses-${name}.png`) }); };
  const text = async (testId: string) => (await page.getByTestId(testId).first().textContent())?.trim();
  const idle = () => page.getByTestId('busy').waitFor({ state: 'detached', timeout: 120_000 });
  const tab = (name: string) => page.getByRole('tab', { name }).click();
  const fill = async (testId: string, value: string) => { await page.getByTestId(testId).fill(value); };
  const newSession = async () => {
    await page.getByRole('button', { name: 'Sessions' }).click();
    await page.getByRole('button', { name: 'New session' }).click();
    await page.getByText('Bring in a microscope image').waitFor({ timeout: 10_000 });
  };
  /** Finds the walls, profiles the channel on the current field, and keeps a screenshot. */
  const profileWithFoundWalls = async (shotName: string) => {
    await page.getByRole('button', { name: 'Find walls' }).click();
    // each found wall's row in the walls table gives its fit
    await expect.poll(() => page.getByTestId('walls-editor').getByText(/^found: ±.* px RMS/).count(), { timeout: 60_000 }).toBe(2);
    await idle();
    await page.getByRole('button', { name: 'Profile across the channel' }).click();
    await page.getByTestId('profile-results').waitFor({ timeout: 120_000 });
    await idle();
    await shot(shotName);
  };
  const addSample = async (file: string) => {
    await page.getByTestId('file-input').setInputFiles(join(SAMPLES, file));
    await page.locator('.images li', { hasText: file }).waitFor({ timeout: 30_000 });
    await page.locator('.images li button', { hasText: file }).click();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
  };

  beforeAll(async () => {
    mkdirSync(SHOTS, { recursive: true });
    const s = await buildAndServe(join(OUT, 'e2e-analyses-dist'));
    server = s;
    url = s.url;
    browser = await openBrowser({ profilePrefix: 'retarda-e2e-analyses-', height: 900 }, consoleErrors);
    page = browser.page;
  }, 240_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close().catch(() => undefined);
  });

  it('offers every sample image with the analysis it is for', async () => {
    await page.goto(url);
    await page.getByText('Bring in a microscope image').waitFor({ timeout: 20_000 });
    await expect.poll(() => page.getByText('Works offline').count(), { timeout: 30_000 }).toBe(1);
    const pngs = readdirSync(SAMPLES).filter((f) => f.endsWith('.png'));
    const offered = demoEntries(SAMPLES, DEMO_ANALYSES);
    // every image file in sample-images/ is offered once
    expect(offered.map((d) => d.file).sort()).toEqual(pngs.sort());
    for (const d of offered) expect(await page.getByRole('button', { name: d.title, exact: true }).count()).toBe(1);
    await shot('20-demo-list-all-analyses');
  }, 60_000);

  it('reads the compensator demo image: the numbers are analysePlate\'s, with the advice and the mirror ambiguity', async () => {
    const file = 'kestrel-channel-plate.png';
    const demo = demoEntries(SAMPLES, DEMO_ANALYSES).find((d) => d.file === file)!;
    await page.getByRole('button', { name: demo.title, exact: true }).click();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await tab('Polarised colours');
    // the advice is where the reading is chosen, before anything runs
    expect(await text('plate-advice')).toContain('Lay the channel or fibre axis along that slow axis');
    // what one image needs is listed where it is chosen, with the sample-free area and the sample retardance beside it
    expect(await text('one-image-status')).toContain('not determined');
    await fill('plate-background', '0,0,60,60');
    await fill('optics-axis', '10');
    // 10 deg is 35 deg from the compensator's slow axis: the form warns before the run
    await page.getByText('is 35° from the compensator\'s slow axis').waitFor({ timeout: 5_000 });
    expect(await text('one-image-needs')).toContain('sample retardance not given');
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    await page.getByTestId('optics-results').waitFor({ timeout: 120_000 });
    await idle();
    await shot('21-plate-orientation-map');

    const options = { sampleFree: { x: 0, y: 0, width: 60, height: 60 }, axisDeg: 10, compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive' as const, match: 'lab' as const, profile: null };
    const { result } = await analysePlate(load(file), options);
    // Without the sample retardance and with the axis 35 deg off the compensator, one image does not determine S.
    expect(result.notDetermined?.order).toBeTruthy();
    expect(await text('optics-director')).toBe(expected(result, 'directorDeg', result.directorDeg));
    expect(await text('optics-order2d')).toBe(expected(result, 'order2D', result.order2D));
    expect(await text('optics-axis-order')).toBe(expected(result, 'axisOrder', result.axisOrder));
    // beside the withheld numbers: what is missing (each part of the analysis's reason), and the remedies it calls for
    const why = await text('optics-not-determined');
    for (const part of reasonParts(result.notDetermined!.order)) expect(why).toContain(headline(part));
    const remedies = page.getByTestId('optics-results').locator('[data-testid^="remedy-"]');
    expect(await remedies.evaluateAll((bs) => bs.map((b) => b.getAttribute('data-testid')))).toEqual(['remedy-retardance', 'remedy-axis', 'remedy-platePair']);
    expect(await text('optics-retardance')).toBe(formatCell(result.retardanceNmMedian));
    expect(await text('optics-confidence')).toBe(formatCell(result.confidence.mean));
    expect(await text('optics-n')).toBe(formatCell(result.n));
    expect(await text('optics-mirror-mattered')).toBe(formatCell(result.reading.mirrorChoiceMatteredFraction as number));
    expect(await text('optics-ambiguity')).toContain('mirror image about the compensator axis');
    expect(await text('optics-cli')).toBe(`retarda plate ${file} --sample-free 0,0,60,60 --axis-deg 10`);

    // The retardance, confidence and line views of the reading are made when first shown.
    await page.getByRole('button', { name: 'retardance', exact: true }).click();
    await page.getByLabel(/Retardance colour scale/).waitFor({ timeout: 5_000 });
    await page.locator('.viewer[data-overlay="retardance"]').waitFor({ timeout: 30_000 });
    await shot('22-plate-retardance-map');
    await page.getByRole('button', { name: 'confidence', exact: true }).click();
    await page.locator('.viewer[data-overlay="coherency"]').waitFor({ timeout: 30_000 });
    await shot('23-plate-confidence');
    await page.getByRole('button', { name: 'direction lines', exact: true }).click();
    await page.locator('.viewer[data-overlay="glyphs"]').waitFor({ timeout: 30_000 });
    await shot('23b-plate-lines');
    await page.getByRole('button', { name: 'orientation', exact: true }).click();
  }, 180_000);

  it('profiles the channel on the compensator field, as `retarda profile --source plate` does', async () => {
    const file = 'kestrel-channel-plate.png';
    expect(await text('profile-field')).toContain('plate reading');
    await profileWithFoundWalls('24-plate-profile');
    const img = load(file);
    const reading = { sampleFree: { x: 0, y: 0, width: 60, height: 60 }, compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive' as const, match: 'lab' as const };
    const { field } = readPlateField(img, { ...reading, axisDeg: undefined });
    // Optical fields are profiled unweighted by default, in the app as on the command line; one image through
    // analysePlateProfile, which withholds what one image does not determine (here: no sample retardance).
    const r = await analysePlateProfile(img, field, reading, { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 });
    expect(r.fieldMethod).toBe('plate');
    expect(r.notDetermined?.order).toContain('sample retardance');
    expect(await text('core')).toBe(expected(r, 'core', r.core.order));
    expect(await text('skin')).toBe(expected(r, 'skin', r.skin.order));
    expect(await text('ratio')).toBe(expected(r, 'coreSkinRatio', r.coreSkinRatio));
    for (const part of reasonParts(r.notDetermined!.order)) expect(await text('profile-not-determined')).toContain(headline(part));
    expect(await page.getByTestId('profile-results').getByTestId('remedy-retardance').count()).toBe(1);
    expect(await text('profile-cli')).toBe(`retarda profile ${file} --auto-walls --source plate --sample-free 0,0,60,60`);
  }, 180_000);

  it('the plate pair picks the turned image and shows the registration', async () => {
    await newSession();
    const turned = demoEntries(SAMPLES, DEMO_ANALYSES).find((d) => d.file === 'kestrel-channel-plate-turned.png')!;
    await page.getByRole('button', { name: `Open these ${turned.set!.length} together` }).first().click();
    await page.locator('.images li', { hasText: turned.file }).waitFor({ timeout: 30_000 });
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await tab('Polarised colours');
    await page.getByLabel('plate pair: two compensator images, optics turned 45°').check();
    const b = page.getByTestId('plate2-image-b');
    expect(await b.locator('option:checked').textContent()).toBe(turned.file);
    // Stop works: the worker is ended, the page says so, and the next run starts a fresh one.
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    await page.getByRole('button', { name: 'Stop (Esc)' }).click();
    await page.getByText('Plate pair stopped.').waitFor({ timeout: 10_000 });
    expect(await page.getByTestId('optics-results').count()).toBe(0);
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    await page.getByTestId('optics-results').waitFor({ timeout: 120_000 });
    await idle();
    await shot('25-plate-pair');
    const { result } = await analysePlatePair(load(turned.set![0]), load(turned.file), { compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive', turnDeg: 45, profile: null });
    expect(await text('optics-director')).toBe(formatCell(result.directorDeg));
    expect(await text('optics-order2d')).toBe(formatCell(result.order2D));
    expect(await text('optics-retardance')).toBe(formatCell(result.retardanceNmMedian));
    expect(await text('optics-shift')).toBe(formatCell((result.reading.registration as { shiftPx: number }).shiftPx));
    expect(await text('optics-ambiguity')).toContain('full orientation');
    expect(await text('optics-cli')).toBe(`retarda plate-pair ${turned.set![0]} ${turned.file}`);

    // The channel profile on this field is the one `retarda plate-pair A B --auto-walls ...` prints.
    expect(await text('profile-field')).toContain('plate pair');
    await profileWithFoundWalls('25b-plate-pair-profile');
    const request = { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 };
    const withProfile = await analysePlatePair(load(turned.set![0]), load(turned.file), { compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive', turnDeg: 45, profile: request });
    const p = withProfile.result.profile!;
    expect(p.fieldMethod).toBe('plate-pair');
    expect(await text('core')).toBe(formatCell(p.core.order));
    expect(await text('skin')).toBe(formatCell(p.skin.order));
    expect(await text('profile-cli')).toBe(`retarda plate-pair ${turned.set![0]} ${turned.file} --auto-walls`);
  }, 240_000);

  it('the angle series takes four images and their angles, with the demo\'s compensator image preselected', async () => {
    await newSession();
    // The compensator image of the demo angle series comes last in its set, and the form takes it with its sample-free area.
    const plateDemo = demoEntries(SAMPLES, DEMO_ANALYSES).find((d) => d.file === 'kestrel-angles-plate.png')!;
    const angles = plateDemo.set!.filter((f) => f !== plateDemo.plate);
    expect(angles).toHaveLength(4);
    await page.getByRole('button', { name: `Open these ${plateDemo.set!.length} together` }).click();
    await page.locator('.images li', { hasText: plateDemo.file }).waitFor({ timeout: 30_000 });
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await tab('Polarised colours');
    await page.getByLabel('angle series: crossed polarisers at 3 or more angles').check();
    for (let k = 0; k < 4; k++) expect(await page.getByTestId(`quad-image-${k}`).locator('option:checked').textContent()).toBe(angles[k]);
    expect(await page.getByTestId('quad-plate').locator('option:checked').textContent()).toBe(plateDemo.plate);
    expect(await page.getByTestId('quad-plate-sample-free').inputValue()).toBe(plateDemo.plateSampleFree);
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    await page.getByTestId('optics-results').waitFor({ timeout: 120_000 });
    await idle();
    await shot('26-angle-series');
    const reading = {
      anglesDeg: [0, 22.5, 45, 67.5], compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K',
      plate: load(plateDemo.plate!), plateSampleFree: parseRect(plateDemo.plateSampleFree!, 'sample-free'),
    };
    const r = await analyseAngleSeries(angles.map(load), { ...reading, profile: null });
    // With the compensator image the demo's order numbers are determined: the page shows the numbers Node gives.
    expect(r.result.notDetermined).toBeUndefined();
    expect(await text('optics-director')).toBe(formatCell(r.result.directorDeg));
    expect(await text('optics-order2d')).toBe(formatCell(r.result.order2D));
    expect(await page.getByTestId('optics-results').textContent()).toContain(`95 %: ${formatCell(r.result.order2DCiLow)} – ${formatCell(r.result.order2DCiHigh)}`);
    expect(await text('optics-n')).toBe(formatCell(r.result.n));
    expect(await text('optics-ambiguity')).toContain('the one at 90° to it');
    expect(await text('optics-cli')).toBe(`retarda angle-series ${angles.join(' ')} --plate ${plateDemo.plate} --plate-sample-free ${plateDemo.plateSampleFree}`);

    // The channel profile on this field is the one `retarda angle-series ... --plate ... --auto-walls` prints.
    expect(await text('profile-field')).toContain('angle series');
    await profileWithFoundWalls('26b-angle-series-profile');
    const request = { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 };
    const p = (await analyseAngleSeries(angles.map(load), { ...reading, profile: request })).result.profile!;
    expect(p.fieldMethod).toBe('angle-series');
    expect(await text('core')).toBe(expected(p, 'core', p.core.order));
    expect(await text('skin')).toBe(expected(p, 'skin', p.skin.order));
    expect(await text('ratio')).toBe(expected(p, 'coreSkinRatio', p.coreSkinRatio));
    expect(await text('profile-cli')).toBe(`retarda angle-series ${angles.join(' ')} --plate ${plateDemo.plate} --plate-sample-free ${plateDemo.plateSampleFree} --auto-walls`);
  }, 240_000);

  let umPerPx = 0;
  /**
   * The diameter command line carries the session's pixel size in full: the page's micrometer value, which may
   * differ from Node's in the last of its 17 digits (the two engines' floating point, seen: 1 unit in the last
   * place), never in the 5 digits shown.
   */
  // The micrometer's relative uncertainty (k = 1) goes with its pixel size into the diameters.
  let umPerPxU = NaN;
  const expectDiameterCli = (cli: string | undefined, file: string) => {
    const m = /^retarda diameter (\S+) --um-per-px (\S+) --um-per-px-uncertainty (\S+) --step-px 8$/.exec(cli ?? '');
    expect(m?.[1]).toBe(file);
    expect(Math.abs(Number(m?.[2]) / umPerPx - 1)).toBeLessThan(1e-12);
    expect(Math.abs(Number(m?.[3]) / umPerPxU - 1)).toBeLessThan(1e-9); // the browser and Node may differ in the last digits
  };
  it('calibrates from the micrometer image and offers its pixel size to the session', async () => {
    await newSession();
    const file = 'kestrel-micrometer.png';
    await addSample(file);
    await tab('Micrometer');
    await fill('division-um', '10');
    await page.getByRole('button', { name: 'Measure the pixel size' }).click();
    await page.getByTestId('micrometer-results').waitFor({ timeout: 60_000 });
    await idle();
    await shot('27-micrometer');
    const c = analyseMicrometer(load(file), { divisionUm: 10, polarity: 'auto' });
    expect(await text('um-per-px')).toBe(formatCell(c.umPerPx));
    expect(await text('um-per-px-u')).toBe(formatCell(c.uncertaintyUmPerPx));
    expect(await text('period-px')).toBe(formatCell(c.periodPx));
    expect(await text('micrometer-cli')).toBe(`retarda calibrate ${file} --division-um 10`);
    expect(await text('calibration-state')).toBe('not calibrated');
    await page.getByTestId('use-pixel-size').click();
    expect(await text('session-pixel-size')).toContain(c.umPerPx.toPrecision(5));
    umPerPx = c.umPerPx;
    umPerPxU = c.uncertainty;
    // One calibration state: applying it says so, and the header and the status line give the same size, with the digits the
    // micrometer panel shows, and where it came from.
    await page.getByText(/^Lengths in this session now use/).waitFor({ timeout: 5_000 });
    expect(await text('calibration-state')).toBe(`${umPerPx.toPrecision(5)} µm/px (micrometer)`);
    expect(await text('image-calibration')).toBe(`${umPerPx.toPrecision(5)} µm/px from the micrometer image ${file}`);
    await shot('27b-calibration-applied');
  }, 120_000);

  it('measures the fibre diameters with the session\'s pixel size, edges drawn, as analyseDiameter does', async () => {
    const file = 'kestrel-fibres.png';
    await addSample(file);
    // another image of the session: the same pixel size, from the same place, in the status line and the diameter panel
    const calibrated = `${umPerPx.toPrecision(5)} µm/px from the micrometer image kestrel-micrometer.png`;
    expect(await text('image-calibration')).toBe(calibrated);
    await tab('Fibre diameter');
    await page.getByText(`Using ${calibrated}; type a value to use another.`).waitFor({ timeout: 5_000 });
    await fill('diameter-step-px', '8');
    await page.getByRole('button', { name: 'Measure fibre diameters' }).click();
    await page.getByTestId('diameter-table').waitFor({ timeout: 120_000 });
    await idle();
    await shot('28-fibre-diameter');
    const d = analyseDiameter(load(file), { pixelSizeUmPerPx: umPerPx, pixelSizeUncertainty: umPerPxU, stepPx: 8, averagePx: 5, polarity: 'auto', shadingDegree: 2 });
    // One row per fibre that the analysis run in Node finds in the same file (a demo image is not an expected value).
    expect(d.fibres.length).toBeGreaterThan(0);
    expect(await page.locator('[data-testid^="diameter-mean-"]:not([data-testid^="diameter-mean-all"]):not([data-testid$="-interval"])').count()).toBe(d.fibres.length);
    for (const fb of d.fibres) expect(await text(`diameter-mean-${fb.index}`)).toBe(formatCell(fb.meanUm));
    expect(await text('diameter-mean-all')).toBe(formatCell(d.meanUm));
    expectDiameterCli(await text('diameter-cli'), file);
    if (d.dropped > 0) expect(await page.getByTestId('diameter-dropped').locator('summary').textContent()).toContain(`${d.dropped} station(s) dropped`);
    expect(await page.getByRole('img', { name: /histogram of \d+ values/ }).count()).toBe(1);

    // Compare keeps lengths and pixel counts apart and says which pixel size a length was measured with.
    await page.getByRole('button', { name: 'Compare', exact: true }).click();
    await page.getByTestId('compare-table').waitFor({ timeout: 10_000 });
    const head = (await page.getByTestId('compare-table').locator('thead').textContent()) ?? '';
    expect(head).toContain('Diameter, µm');
    expect(head).not.toContain('Diameter, px');
    const row = page.getByTestId('compare-table').locator('tbody tr', { hasText: file });
    expect(await row.getByTestId('compare-diameter-um').locator('strong').textContent()).toBe(formatCell(d.meanUm));
    expect(await row.getByTestId('compare-diameter-um').textContent()).toContain(`at ${umPerPx.toPrecision(5)} µm/px (micrometer image kestrel-micrometer.png)`);
    await shot('28b-compare-calibrated');
    await page.getByRole('button', { name: 'Back to the images' }).click();
    // The report states the same calibration.
    await page.getByRole('button', { name: 'report', exact: true }).click();
    await page.getByTestId('report').waitFor({ timeout: 10_000 });
    expect(await page.getByTestId('report-calibration').first().textContent()).toContain(calibrated);
    await page.getByRole('button', { name: 'Close the report' }).click();
  }, 180_000);

  it('works out the fibre numbers from the measured diameter, as `retarda fibre` does', async () => {
    await tab('Fibre numbers');
    const d = analyseDiameter(load('kestrel-fibres.png'), { pixelSizeUmPerPx: umPerPx, pixelSizeUncertainty: umPerPxU, stepPx: 8 });
    await page.getByRole('button', { name: /use the measured mean/ }).click();
    // The mean is carried over to 6 significant digits. (The browser's engine and Node's may differ in the last few
    // of the 17 digits, seen: 2e-13 relative, never in the shown ones.)
    const diameterUm = Number(await page.getByTestId('fibre-diameter').inputValue());
    expect(diameterUm).toBe(Number(d.meanUm!.toPrecision(6)));
    await fill('fibre-density', '1.8');
    await fill('fibre-linear-density', '0.5');
    await page.getByLabel('Linear density unit').selectOption('dtex');
    await fill('fibre-retardance', '300');
    await page.getByRole('button', { name: 'Work out the fibre numbers' }).click();
    await page.getByTestId('fibre-results').waitFor({ timeout: 30_000 });
    await idle();
    await shot('29-fibre-numbers');
    // The measured mean came with its standard uncertainty and degrees of freedom (retarda diameter's uUm, dofUm).
    const cli = (await text('fibre-cli')) ?? '';
    const m = /^retarda fibre --diameter-um (\S+) --diameter-uncertainty-um (\S+) --diameter-dof (\S+) --density 1\.8 --linear-density-dtex 0\.5 --retardance-nm 300$/.exec(cli);
    expect(m, cli).not.toBeNull();
    expect(Number(m![1])).toBe(diameterUm);
    const uncertainties = { diameterUm: Number(m![2]), diameterDof: Number(m![3]) };
    expect(Math.abs(uncertainties.diameterUm / d.uUm! - 1)).toBeLessThan(1e-5);
    const r = fibreNumbersResult({ diameterUm, densityGPerCm3: 1.8, linearDensity: { value: 0.5, unit: 'dtex' }, retardanceNm: 300, uncertainties });
    for (const key of ['areaUm2', 'solidTex', 'solidDtex', 'solidDenier', 'linearDensityTex', 'packingFraction', 'birefringence'] as const) {
      expect(await text(`fibre-${key}`)).toBe(formatCell(r[key]));
    }
  }, 60_000);

  it('after a reload the micrometer calibration, the session pixel size, the diameters and the compensator reading are shown again, with their settings', async () => {
    await expect.poll(() => text('save-state'), { timeout: 10_000 }).toBe('Saved on this device');
    await page.reload();
    // The newest session opens: the micrometer and fibre images.
    await page.locator('.images li button', { hasText: 'kestrel-micrometer.png' }).click();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await tab('Micrometer');
    const c = analyseMicrometer(load('kestrel-micrometer.png'), { divisionUm: 10, polarity: 'auto' });
    expect(await text('um-per-px')).toBe(formatCell(c.umPerPx));
    expect(await text('um-per-px-u')).toBe(formatCell(c.uncertaintyUmPerPx));
    expect(await text('period-px')).toBe(formatCell(c.periodPx));
    expect(await text('micrometer-cli')).toBe('retarda calibrate kestrel-micrometer.png --division-um 10');
    expect(await text('session-pixel-size')).toContain(umPerPx.toPrecision(5));
    await shot('30-micrometer-after-reload');

    // The fibre image's diameters come back with the station step that made them.
    await page.locator('.images li button', { hasText: 'kestrel-fibres.png' }).click();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await tab('Fibre diameter');
    const d = analyseDiameter(load('kestrel-fibres.png'), { pixelSizeUmPerPx: umPerPx, pixelSizeUncertainty: umPerPxU, stepPx: 8 });
    await page.getByTestId('diameter-table').waitFor({ timeout: 10_000 });
    for (const fb of d.fibres) expect(await text(`diameter-mean-${fb.index}`)).toBe(formatCell(fb.meanUm));
    expect(await text('diameter-mean-all')).toBe(formatCell(d.meanUm));
    expectDiameterCli(await text('diameter-cli'), 'kestrel-fibres.png');
    expect(await page.getByTestId('diameter-step-px').inputValue()).toBe('8');
    await shot('30b-diameter-after-reload');

    // The first session (listed last: the list is newest change first) holds the compensator reading.
    await page.getByRole('button', { name: 'Sessions' }).click();
    await page.locator('.session-list li .session-open').last().click();
    await page.getByTestId('image-facts').waitFor({ timeout: 30_000 });
    await idle();
    await tab('Polarised colours');
    const file = 'kestrel-channel-plate.png';
    const options = { sampleFree: { x: 0, y: 0, width: 60, height: 60 }, axisDeg: 10, compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive' as const, match: 'lab' as const, profile: null };
    const { result } = await analysePlate(load(file), options);
    expect(await text('optics-director')).toBe(expected(result, 'directorDeg', result.directorDeg));
    expect(await text('optics-order2d')).toBe(expected(result, 'order2D', result.order2D));
    expect(await text('optics-axis-order')).toBe(expected(result, 'axisOrder', result.axisOrder));
    expect(await text('optics-retardance')).toBe(formatCell(result.retardanceNmMedian));
    expect(await text('optics-n')).toBe(formatCell(result.n));
    expect(await text('optics-cli')).toBe(`retarda plate ${file} --sample-free 0,0,60,60 --axis-deg 10`);
    expect(await text('optics-kept')).toContain('read again to see its maps');
    // The form that made the reading is back: the reference axis and the sample-free area typed before the reload.
    expect(await page.getByTestId('optics-axis').inputValue()).toBe('10');
    expect(await page.getByTestId('plate-background').inputValue()).toBe('0,0,60,60');
    expect(await page.getByLabel('one compensator image').isChecked()).toBe(true);
    await shot('31-plate-reading-after-reload');
    expect(consoleErrors).toEqual([]);
  }, 120_000);

  it('the keys the help lists for "More analyses" switch its tabs and run the shown tab with its settings', async () => {
    // Still on the compensator image, "Polarised colours" shown, its form restored.
    const selected = () => page.getByRole('tab', { selected: true }).textContent();
    await page.keyboard.press('?');
    const help = page.getByRole('region', { name: 'Keyboard shortcuts' });
    await help.waitFor({ timeout: 5_000 });
    const listed = await help.locator('dt').evaluateAll((dts) => dts.map((dt) => [dt.textContent ?? '', dt.nextElementSibling?.textContent ?? '']));
    const keyFor = (what: string) => listed.find(([, does]) => does.includes(what))?.[0];
    const nextKey = keyFor('next tab of “More analyses”'), runKey = keyFor('run the analysis of the tab shown');
    expect(nextKey).toBe('M');
    expect(runKey).toBe('R');
    await shot('32-shortcuts-help');
    await page.keyboard.press('?');
    await help.waitFor({ state: 'detached', timeout: 5_000 });

    expect(await selected()).toBe('Polarised colours');
    await page.keyboard.press(nextKey!.toLowerCase());
    expect(await selected()).toBe('Fibre diameter');
    await page.keyboard.press(nextKey!.toLowerCase());
    expect(await selected()).toBe('Micrometer');
    await page.keyboard.press(`Shift+${nextKey!}`);
    await page.keyboard.press(`Shift+${nextKey!}`);
    expect(await selected()).toBe('Polarised colours');

    // A new reference axis in the form, then the run key: the reading is made again with it.
    await fill('optics-axis', '45');
    await page.evaluate(() => (document.activeElement as HTMLElement | null)?.blur());
    await page.keyboard.press(runKey!.toLowerCase());
    const file = 'kestrel-channel-plate.png';
    await expect.poll(() => text('optics-cli'), { timeout: 120_000 }).toBe(`retarda plate ${file} --sample-free 0,0,60,60 --axis-deg 45`);
    await idle();
    const { result } = await analysePlate(load(file), { sampleFree: { x: 0, y: 0, width: 60, height: 60 }, axisDeg: 45, compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive', match: 'lab', profile: null });
    expect(await text('optics-axis-order')).toBe(expected(result, 'axisOrder', result.axisOrder));
    expect(await text('optics-director')).toBe(expected(result, 'directorDeg', result.directorDeg));
    await shot('33-run-key-plate-reading');
    expect(consoleErrors).toEqual([]);
  }, 180_000);

  it('the remedies beside "not determined": the sample-free area drawn on the image and the sample retardance entered give analysePlate\'s numbers', async () => {
    const file = 'kestrel-channel-plate.png';
    const img = load(file);
    // Without a sample-free area and a sample retardance, the profile on the compensator field is withheld, with its remedies.
    await fill('plate-background', '');
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    await expect.poll(() => text('optics-cli'), { timeout: 120_000 }).toBe(`retarda plate ${file} --axis-deg 45`);
    await idle();
    await profileWithFoundWalls('34-plate-profile-withheld');
    const profileTable = page.getByTestId('profile-results');
    expect(await profileTable.getByTestId('core').textContent()).toBe(NOT_DETERMINED);

    // "Draw the sample-free area": the viewer asks for a rectangle; drag one over the sample-free corner.
    await profileTable.getByTestId('remedy-background').click();
    await page.getByTestId('rect-hint').waitFor({ timeout: 5_000 });
    await shot('35-drawing-sample-free-area');
    const box = (await page.locator('.viewer canvas').boundingBox())!;
    // Image-to-screen mapping of a fitted view (Viewer.fit): 96 % of the canvas, centred.
    const k = Math.min(box.width / img.width, box.height / img.height) * 0.96;
    const ox = box.x + (box.width - img.width * k) / 2, oy = box.y + (box.height - img.height * k) / 2;
    const at = (x: number, y: number) => [ox + (x + 0.5) * k, oy + (y + 0.5) * k] as const;
    await page.mouse.move(...at(10, 10)); await page.mouse.down(); await page.mouse.move(...at(70, 70), { steps: 8 }); await page.mouse.up();
    await expect.poll(() => page.getByTestId('plate-background').inputValue(), { timeout: 5_000 }).not.toBe('');
    const v = (await page.getByTestId('plate-background').inputValue()).split(',').map(Number);
    // the rectangle covers the dragged pixels: each edge within one screen pixel (1/k image px) and the rounding to whole pixels
    [[v[0], 10], [v[1], 10], [v[0] + v[2], 71], [v[1] + v[3], 71]].forEach(([got, want]) => expect(Math.abs(got - want)).toBeLessThanOrEqual(1 / k + 0.5));
    const background = { x: v[0], y: v[1], width: v[2], height: v[3] };

    // "Enter the sample retardance" takes the user to its field.
    await profileTable.getByTestId('remedy-retardance').click();
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('data-testid')), { timeout: 5_000 }).toBe('sample-retardance');
    await page.keyboard.type('150');
    // nothing the form can give is missing any more
    expect(await page.getByTestId('one-image-needs').locator('li.missing').count()).toBe(0);
    await page.getByRole('button', { name: 'Read orientation and retardance' }).click();
    const bg = `${v[0]},${v[1]},${v[2]},${v[3]}`;
    await expect.poll(() => text('optics-cli'), { timeout: 120_000 }).toBe(`retarda plate ${file} --sample-free ${bg} --sample-retardance-nm 150 --axis-deg 45`);
    await idle();
    await shot('36-plate-with-sample-retardance');
    const reading = { sampleFree: background, sampleRetardanceNm: 150, compensatorDeg: 45, polariserDeg: 0, illuminant: '3200K', retardanceMaxNm: 800, sign: 'positive' as const, match: 'lab' as const };
    const { result } = await analysePlate(img, { ...reading, axisDeg: 45, profile: null });
    // the page shows what the analysis decides with these options: the numbers, or "not determined" with the reason
    if (result.notDetermined?.order) {
      for (const part of reasonParts(result.notDetermined.order)) expect(await text('optics-not-determined')).toContain(headline(part));
    }
    expect(await text('optics-director')).toBe(expected(result, 'directorDeg', result.directorDeg));
    expect(await text('optics-order2d')).toBe(expected(result, 'order2D', result.order2D));
    expect(await text('optics-axis-order')).toBe(expected(result, 'axisOrder', result.axisOrder));
    expect(await text('optics-retardance')).toBe(formatCell(result.retardanceNmMedian));
    expect(await text('optics-n')).toBe(formatCell(result.n));

    // The profile on this reading is `retarda profile --source plate` with the same options.
    await profileWithFoundWalls('37-plate-profile-with-sample-retardance');
    const { field } = readPlateField(img, { ...reading, axisDeg: undefined });
    const p = await analysePlateProfile(img, field, reading, { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 });
    expect(await text('core')).toBe(expected(p, 'core', p.core.order));
    expect(await text('skin')).toBe(expected(p, 'skin', p.skin.order));
    expect(await text('ratio')).toBe(expected(p, 'coreSkinRatio', p.coreSkinRatio));
    expect(await text('profile-cli')).toBe(`retarda profile ${file} --auto-walls --source plate --sample-free ${bg} --sample-retardance-nm 150`);
    expect(consoleErrors).toEqual([]);
  }, 300_000);
});
