import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encode } from 'fast-png';
import { decode as decodeTiffLibrary } from 'tiff';
import { chooseScaleBar } from '../../src/report/scaleBar.ts';
import { fieldTiffBytes } from '../../src/report/fieldTiff.ts';
import { analyseOrientation, analyseProfile } from '../../src/analyses/index.ts';
import { decodeImage, makeImage } from '../../src/image/index.ts';
import { parseWalls } from '../../src/channel/index.ts';
import { reportContent, REPORT_NOTE } from '../../app/export/reportContent.ts';
import { newSession } from '../../app/storage/records.ts';
import { sessionReducer } from '../../app/state/session.ts';
import { applied, newSetup } from '../../app/setups/setup.ts';
import type { DiameterDocument } from '../../src/analyses/diameter.ts';
import { grating } from '../support/synthetic.ts';
import { runCli } from '../support/cliRun.ts';

const dir = mkdtempSync(join(tmpdir(), 'retarda-report-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('chooseScaleBar', () => {
  it('picks the largest 1-2-5 length within a quarter of the width', () => {
    // Arithmetic: 1280 px at 0.345 um/px = 441.6 um wide; a quarter is 110.4 um; the largest 1-2-5 length below it is 100 um = 289.9 px
    const b = chooseScaleBar(1280, 0.345);
    expect(b.value).toBe(100);
    expect(b.unit).toBe('um');
    expect(b.label).toBe('100 µm');
    expect(b.lengthPx).toBeCloseTo(100 / 0.345, 9);
    // a quarter of 2048 px at 0.06 um/px is 30.72 um -> 20 um
    expect(chooseScaleBar(2048, 0.06).label).toBe('20 µm');
    // a quarter of 640 px at 0.65 um/px is exactly 104 um -> 100 um; 400 px at 1.25 um/px: exactly 125 -> 100
    expect(chooseScaleBar(640, 0.65).value).toBe(100);
    // exactly on a step: a quarter of 800 px at 1 um/px is 200 um -> 200 um, not 100
    expect(chooseScaleBar(800, 1).value).toBe(200);
    expect(chooseScaleBar(2000, 1).value).toBe(500);
  });

  it('writes 1000 um and more in mm and lengths under 1 um in nm', () => {
    expect(chooseScaleBar(4000, 2).label).toBe('2 mm');
    expect(chooseScaleBar(100, 0.02).label).toBe('500 nm');
  });

  it('without a pixel size gives a bar in px', () => {
    expect(chooseScaleBar(320, null)).toEqual({ lengthPx: 50, value: 50, unit: 'px', label: '50 px' });
    expect(chooseScaleBar(7, null)).toEqual({ lengthPx: 1, value: 1, unit: 'px', label: '1 px' });
  });

  it('refuses nonsense', () => {
    expect(() => chooseScaleBar(0, 1)).toThrow(/width/);
    expect(() => chooseScaleBar(100, -1)).toThrow(/above 0/);
    expect(() => chooseScaleBar(100, 1, 2)).toThrow(/fraction/);
  });
});

describe('fieldTiffBytes', () => {
  it('gives the same bytes as `retarda orient --field-out`, and a general TIFF reader finds the angle page in degrees', async () => {
    const g = grating(64, 48, 30, 6);
    const png = join(dir, 'g30.png');
    writeFileSync(png, encode({ width: 64, height: 48, channels: 1, depth: 8, data: Uint8Array.from(g.data, (v) => Math.round(127.5 + 100 * v)) }));
    const tif = join(dir, 'cli.tif');
    const r = await runCli(['orient', png, '--field-out', tif]);
    expect(r.code, r.err).toBe(0);
    const img = decodeImage(new Uint8Array(readFileSync(png)), png);
    const { field } = await analyseOrientation(img, { sigmaPx: 2 });
    const ours = fieldTiffBytes(field, `retarda orient ${img.source.name}`);
    expect(Buffer.from(ours).equals(readFileSync(tif))).toBe(true);
    // image-js `tiff` decoder: 32-bit float pages; the grating's stripes are at +-30 deg (its construction)
    const pages = decodeTiffLibrary(ours);
    expect(pages.length).toBe(4);
    expect(pages[0].bitsPerSample).toBe(32);
    const centre = (pages[0].data as Float32Array)[24 * 64 + 32];
    expect(Math.abs(Math.abs(centre) - 30)).toBeLessThan(1);
  });
});

describe('reportContent', () => {
  const at = new Date('2026-03-01T10:00:00Z');

  async function session() {
    const g = grating(96, 64, 30, 6);
    const img = makeImage({ width: 96, height: 64, channels: 1, planes: [g.data], bitDepth: 32, encoding: 'linear', source: { name: 'run 1.tif' } });
    const { result, field } = await analyseOrientation(img, { sigmaPx: 2, weighting: 'coherency' });
    const profile = await analyseProfile(img, field, { channel: parseWalls('4,8,92,8;4,56,92,56'), bins: 8, coreMax: 0.5, skinMin: 0.8, weighting: 'coherency' });
    let s = newSession('s', 'Spin line 3', at);
    s = sessionReducer(s, { type: 'addImages', images: [
      { id: 'a', name: 'run 1.tif', type: 'image/tiff', size: 1, page: 0, addedAt: at.toISOString() },
      { id: 'b', name: 'blank.png', type: 'image/png', size: 1, page: 0, addedAt: at.toISOString() },
      { id: 'c', name: 'fibre.png', type: 'image/png', size: 1, page: 0, addedAt: at.toISOString() },
    ] });
    s = sessionReducer(s, { type: 'orient', id: 'a', result });
    s = sessionReducer(s, { type: 'profile', id: 'a', result: profile });
    const diameter = {
      schemaVersion: 1, analysis: 'diameter', source: 'fibre.png', width: 200, height: 100, pixelSizeUmPerPx: 0.5, pixelSizeFrom: 'option', warnings: [],
      meanUm: 12.5, ciLowUm: 12.1, ciHighUm: 12.9, meanPx: 25, ciLowPx: 24.2, ciHighPx: 25.8, n: 40, dropped: 2, fibres: [{}], options: { stepPx: 10, polarity: 'auto' },
      interval: '95 % t interval on the station mean',
    } as unknown as DiameterDocument;
    s = sessionReducer(s, { type: 'diameter', id: 'c', result: diameter });
    return { s, result, profile };
  }

  it('lists each analysed image with its numbers, 95 % intervals, n, settings and command lines', async () => {
    const { s, result, profile } = await session();
    const c = reportContent(s, at);
    expect(c.title).toBe('Retarda report: Spin line 3');
    expect(c.images.map((i) => i.name)).toEqual(['run 1.tif', 'fibre.png']);
    expect(c.notAnalysed).toEqual(['blank.png']);
    const [orient, prof] = c.images[0].sections;
    expect(orient.numbers[0]).toEqual({ label: 'Order S_2D', value: result.order2D, ci: [result.order2DCiLow, result.order2DCiHigh], n: result.n, unit: '' });
    // Settings at their defaults are left out of the command line: the analysis applies the same ones.
    expect(orient.commandLine).toBe('retarda orient "run 1.tif"');
    expect(prof.numbers[0]).toEqual({ label: 'Core S (position |s| < 0.5)', value: profile.core.order, ci: [profile.core.ciLow, profile.core.ciHigh], n: profile.core.n, unit: '' });
    expect(prof.commandLine).toBe('retarda profile "run 1.tif" --walls "4,8,92,8;4,56,92,56" --bins 8');
    expect(prof.settings[0]).toBe('walls drawn by hand: 4,8,92,8;4,56,92,56 px');
    const dia = c.images[1].sections[0];
    expect(dia.numbers[0]).toEqual({ label: 'Mean diameter', value: 12.5, ci: [12.1, 12.9], n: 40, unit: 'µm' });
    expect(dia.commandLine).toBe('retarda diameter fibre.png --um-per-px 0.5 --step-px 10 --polarity auto');
    expect(c.note).toBe(REPORT_NOTE);
    expect(c.note).toMatch(/not a safety or quality certification/);
  });

  it('states the calibration: not calibrated, from the applied set-up, or from a micrometer image', async () => {
    const { s } = await session();
    expect(reportContent(s).images[0].calibration).toBe('not calibrated (lengths in px)');
    // the diameter was measured with a pixel size given to it, not the file's: the image itself is not calibrated,
    // and the diameter names the pixel size it used
    expect(reportContent(s).images[1].calibration).toBe('not calibrated (lengths in px)');
    expect(reportContent(s).images[1].sections[0].settings).toContain('pixel size 0.5 µm/px from the value given');
    expect(reportContent(s).setup).toBeNull();
    const su = { ...newSetup('x', 'Bench 2', at), pixelSize: { source: 'typed' as const, pixelSizeUmPerPx: 0.345 } };
    const withSetup = sessionReducer(s, { type: 'applySetup', setup: applied(su, at) });
    const c = reportContent(withSetup);
    expect(c.images[1].calibration).toBe('0.345 µm/px from the set-up "Bench 2": typed');
    // A pixel size chosen from a micrometer image is used in its place, and named as such.
    const withMicrometer = sessionReducer(withSetup, { type: 'pixelSize', pixelSize: { umPerPx: 0.6512, from: 'micrometer ruler.png' } });
    expect(reportContent(withMicrometer).images[1].calibration).toBe('0.65120 µm/px from the micrometer image ruler.png');
    expect(c.setup?.commandOptions).toEqual(['--polariser-deg 0', '--compensator-nm 550', '--compensator-deg 45', '--illuminant 3200K', '--sign positive', '--um-per-px 0.345']);
  });
});
