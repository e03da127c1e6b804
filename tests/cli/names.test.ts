/**
 * The words the command line prints and reads (README, "Glossary"): texture strength, not the word it replaced;
 * former option names and values still read for one release, each with one notice line on stderr and the
 * same numbers as the new name.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encode } from 'fast-png';
import { encodePng } from '../../src/report/png.ts';
import { renderSampleImage, resolveTrain, turnedTrain, type SampleRetarder } from '../../src/optics/index.ts';
import type { Image } from '../../src/image/types.ts';
import { DEG } from '../../src/common/angles.ts';
import { upgradeCommandLine, upgradeResult, SCHEMA_VERSION } from '../../src/analyses/index.ts';
import { runCli } from '../support/cliRun.ts';

// Stripes at +30 deg (construction), 16-bit grey, with a flat band at the top.
let dir = '', scene = '';
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'retarda-names-'));
  const W = 160, H = 120, a = (30 * Math.PI) / 180;
  const data = new Uint16Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
    const v = y < 20 ? 0.3 : 0.5 + 0.3 * Math.sin((2 * Math.PI * (x * Math.sin(a) + y * Math.cos(a))) / 8);
    data[y * W + x] = Math.round(v * 65535);
  }
  scene = join(dir, 'stripes.png');
  writeFileSync(scene, encodePng({ width: W, height: H, channels: 1, data, bitDepth: 16 }));
  // A 40 x 24 compensator sample (construction: a sample-free strip of 10 px, then -20 deg / 250 nm), the same
  // with the optics turned by 45 deg, and four crossed-polariser images at 0, 22.5, 45, 67.5 deg.
  const sample = (x: number): SampleRetarder => (x < 10 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: -20 * DEG, retardanceNm: 250 });
  const cam = { gains: [1, 1, 1] as [number, number, number], exposure: 0.75 };
  const t = resolveTrain();
  plateA = savePng('a.png', renderSampleImage(40, 24, (x) => sample(x), t, { noiseSd: 0.003, seed: 1, camera: cam }));
  plateB = savePng('b.png', renderSampleImage(40, 24, (x) => sample(x), turnedTrain(t, 45), { noiseSd: 0.003, seed: 2, camera: cam }));
  angles = [0, 22.5, 45, 67.5].map((a, k) => savePng(`q${k}.png`,
    renderSampleImage(40, 24, (x) => sample(x), { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.002, seed: 5 + k, camera: cam })));
});

let plateA = '', plateB = '', angles: string[] = [];

function savePng(name: string, img: Image): string {
  const data = new Uint8Array(img.width * img.height * 3);
  for (let i = 0; i < img.width * img.height; i++) for (let c = 0; c < 3; c++) data[3 * i + c] = Math.round(255 * img.planes[c][i]);
  const path = join(dir, name);
  writeFileSync(path, encode({ width: img.width, height: img.height, data, channels: 3, depth: 8 }));
  return path;
}

/** The JSON of a run without the words that name how it was asked for. */
const numbersOf = (out: string) => {
  const j = JSON.parse(out);
  return { directorDeg: j.directorDeg, order2D: j.order2D, n: j.n, options: j.options };
};

describe('texture strength', () => {
  it('orient --help names texture strength and none of the replaced word', async () => {
    const r = await runCli(['orient', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toContain('--strength-floor');
    expect(r.out).toMatch(/texture strength/);
    expect(r.out).not.toMatch(/energy/i);
  });

  it('the JSON and the field TIFF name the layer strength', async () => {
    const tif = join(dir, 'field.tif');
    const r = await runCli(['orient', scene, '--json', '--field-out', tif]);
    expect(r.code).toBe(0);
    expect(r.out).not.toMatch(/energy/i);
    const j = JSON.parse(r.out);
    expect(j.options.strengthFloor).toBe(0.02);
    expect(j.options.weighting).toBe('coherency');
    // Page names are stored as ASCII text in the TIFF's tags.
    const text = Buffer.from(readFileSync(tif)).toString('latin1');
    expect(text).toContain('strength');
    expect(text).not.toMatch(/energy/i);
  });

  it('--energy-floor is still read, as --strength-floor, with one notice line', async () => {
    const now = await runCli(['orient', scene, '--json', '--strength-floor', '0.2']);
    const before = await runCli(['orient', scene, '--json', '--energy-floor', '0.2']);
    expect(now.code).toBe(0);
    expect(before.code).toBe(0);
    expect(now.err).toBe('');
    expect(before.err.trim().split('\n')).toEqual(['retarda orient: note: --energy-floor is now --strength-floor; the old name is read until the next release']);
    expect(numbersOf(before.out)).toEqual(numbersOf(now.out));
    // Both names at once is refused: it would be two values for one option.
    const both = await runCli(['orient', scene, '--strength-floor', '0.2', '--energy-floor', '0.1']);
    expect(both.code).toBe(2);
  });

  it('former weighting names are read as their new names with a notice', async () => {
    for (const [former, now] of [['energy', 'strength'], ['energy-confidence', 'strength-coherency'], ['confidence', 'coherency']]) {
      const a = await runCli(['orient', scene, '--json', '--weighting', former]);
      const b = await runCli(['orient', scene, '--json', '--weighting', now]);
      expect(a.code).toBe(0);
      expect(a.err).toContain(`--weighting ${former} is now --weighting ${now}`);
      expect(b.err).toBe('');
      expect(numbersOf(a.out)).toEqual(numbersOf(b.out));
      expect(JSON.parse(a.out).options.weighting).toBe(now);
    }
  });

  it('a weighting the field cannot give is refused in one line', async () => {
    // An optical reading has no texture strength; a texture field has no colour-match confidence.
    const plateImage = join(import.meta.dirname, '../../sample-images/kestrel-channel-plate.png');
    const cases: [string[], RegExp][] = [
      [['orient', scene, '--weighting', 'nonsense'], /weighting "nonsense" is not known/],
      [['plate', plateImage, '--weighting', 'strength'], /does not apply to an optical reading/],
      [['plate', plateImage, '--weighting', 'coherency'], /does not apply to an optical reading/],
    ];
    for (const [argv, why] of cases) {
      const r = await runCli(argv);
      expect(r.code).toBe(2);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(why);
    }
  });
});

/** The JSON of an optical reading without the words that name how it was asked for. */
const readingNumbers = (out: string) => {
  const j = JSON.parse(out);
  return { directorDeg: j.directorDeg, order2D: j.order2D, n: j.n, retardanceNmMedian: j.retardanceNmMedian, reading: j.reading };
};

describe('one name per concept', () => {
  it('the top-level help names the plate pair and the angle series, not their former names', async () => {
    const r = await runCli(['--help']);
    expect(r.out).toMatch(/^ {2}plate-pair /m);
    expect(r.out).toMatch(/^ {2}angle-series /m);
    expect(r.out).not.toMatch(/plate2|\bquad\b|energy/);
  });

  it('plate2 and quad still run, as plate-pair and angle-series, with one notice line and the same numbers', async () => {
    const pairs: [string[], string[], string][] = [
      [['plate-pair', plateA, plateB, '--sample-free', '0,0,10,24', '--json'], ['plate2', plateA, plateB, '--background', '0,0,10,24', '--json'], 'plate-pair'],
      [['angle-series', ...angles, '--plate', plateA, '--plate-sample-free', '0,0,10,24', '--json'], ['quad', ...angles, '--plate', plateA, '--plate-background', '0,0,10,24', '--json'], 'angle-series'],
    ];
    for (const [now, before, analysis] of pairs) {
      const a = await runCli(now), b = await runCli(before);
      expect(a.code).toBe(0);
      expect(b.code).toBe(0);
      expect(a.err).toBe('');
      const notes = b.err.trim().split('\n');
      expect(notes).toHaveLength(2);
      expect(notes[0]).toBe(`retarda ${analysis}: note: retarda ${before[0]} is now retarda ${analysis}; the old name is read until the next release`);
      expect(notes[1]).toMatch(/--(plate-)?background is now --(plate-)?sample-free/);
      expect(JSON.parse(a.out).analysis).toBe(analysis);
      expect(JSON.parse(b.out).analysis).toBe(analysis);
      expect(readingNumbers(b.out)).toEqual(readingNumbers(a.out));
      // The reading's facts are under `reading`; intervals as ...CiLow / ...CiHigh.
      const j = JSON.parse(a.out);
      expect(j).toHaveProperty('reading');
      expect(j).not.toHaveProperty('extra');
      expect(j).toHaveProperty('order2DCiLow');
      expect(j).not.toHaveProperty('order2DCi');
    }
  });

  it('the chart names the interference order, not "order" (which is S everywhere else)', async () => {
    const csv = join(dir, 'chart.csv');
    const r = await runCli(['chart', '--json', '--max-nm', '600', '--step-nm', '100', '--csv', csv]);
    expect(r.code).toBe(0);
    const rows = JSON.parse(r.out).rows;
    expect(rows[0]).toHaveProperty('interferenceOrder');
    expect(rows[0]).not.toHaveProperty('order');
    expect(readFileSync(csv, 'utf8').split('\r\n')[0].split(',')).toContain('interferenceOrder');
  });

  it('--background-degree is read as --shading-degree, with a notice', async () => {
    const h = await runCli(['diameter', '--help']);
    expect(h.out).toContain('--shading-degree');
    expect(h.out).not.toContain('--background-degree');
    const r = await runCli(['diameter', scene, '--background-degree', '9']);
    // The value is checked under its new name: 9 is out of range either way (exit 2, one line after the notice).
    expect(r.code).toBe(2);
    const lines = r.err.trim().split('\n');
    expect(lines[0]).toContain('--background-degree is now --shading-degree');
    expect(lines[1]).toMatch(/shading degree/);
  });
});

describe('results of schema 1 read with the names of schema 2', () => {
  it('upgradeResult renames without changing a number', () => {
    const orient = { schemaVersion: 1, analysis: 'orient', order2D: 0.8, order2DCi: [0.7, 0.9], axisOrder: 0.5, axisOrderCi: [0.4, 0.6], options: { energyFloor: 0.02, weighting: 'confidence', method: 'texture' } };
    expect(upgradeResult(orient)).toEqual({
      schemaVersion: SCHEMA_VERSION, analysis: 'orient', order2D: 0.8, order2DCiLow: 0.7, order2DCiHigh: 0.9, axisOrder: 0.5, axisOrderCiLow: 0.4, axisOrderCiHigh: 0.6,
      options: { strengthFloor: 0.02, weighting: 'coherency', method: 'texture' },
    });
    const quad = { schemaVersion: 1, analysis: 'quad', order2DCi: [0.1, 0.2], axisOrderCi: null, extra: { anglesDeg: [0, 45, 90] }, options: { weighting: 'confidence', method: 'four-angle' },
      profile: { fieldMethod: 'four-angle', coreSkinRatioCi: [1, 2], stations: [{ coreSkinRatioCi: [3, 4] }], options: { weighting: 'none' } } };
    expect(upgradeResult(quad)).toEqual({
      schemaVersion: SCHEMA_VERSION, analysis: 'angle-series', order2DCiLow: 0.1, order2DCiHigh: 0.2, axisOrderCiLow: null, axisOrderCiHigh: null,
      reading: { anglesDeg: [0, 45, 90] }, options: { weighting: 'confidence', method: 'angle-series' },
      profile: { fieldMethod: 'angle-series', coreSkinRatioCiLow: 1, coreSkinRatioCiHigh: 2, stations: [{ coreSkinRatioCiLow: 3, coreSkinRatioCiHigh: 4 }], options: { weighting: 'none' } },
    });
    const diameter = { schemaVersion: 1, analysis: 'diameter', backgroundDegree: 2, options: { backgroundDegree: 2 } };
    expect(upgradeResult(diameter)).toEqual({ schemaVersion: SCHEMA_VERSION, analysis: 'diameter', shadingDegree: 2, options: { shadingDegree: 2 } });
    // A document of this schema, and what is not a document, come back as they are.
    const now = { schemaVersion: SCHEMA_VERSION, analysis: 'orient', order2DCiLow: 1 };
    expect(upgradeResult(now)).toBe(now);
    expect(upgradeResult(null)).toBe(null);
  });

  it('upgradeCommandLine writes the current subcommand and option names', () => {
    expect(upgradeCommandLine('retarda plate2 a.png "b c.png" --background 0,0,9,9 --auto-walls'))
      .toBe('retarda plate-pair a.png "b c.png" --sample-free 0,0,9,9 --auto-walls');
    expect(upgradeCommandLine('retarda quad a b c d --plate p.png --plate-background 1,2,3,4')).toBe('retarda angle-series a b c d --plate p.png --plate-sample-free 1,2,3,4');
    expect(upgradeCommandLine('retarda diameter f.png --background-degree 3')).toBe('retarda diameter f.png --shading-degree 3');
    expect(upgradeCommandLine('retarda orient x.png --energy-floor 0.1 --weighting energy')).toBe('retarda orient x.png --strength-floor 0.1 --weighting strength');
    expect(upgradeCommandLine('retarda plate x.png --weighting confidence')).toBe('retarda plate x.png --weighting confidence');
  });
});
