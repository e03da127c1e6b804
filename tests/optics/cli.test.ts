import { describe, expect, it, beforeAll } from 'vitest';
import { mkdtempSync, writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encode, decode } from 'fast-png';
import { decodeImagePages } from '../../src/image/index.ts';
import { parseArgs, COMMON_OPTIONS } from '../../src/cli/args.ts';
import type { Command } from '../../src/cli/command.ts';
import { plateCommand } from '../../src/cli/commands/plate.ts';
import { platePairCommand } from '../../src/cli/commands/platePair.ts';
import { angleSeriesCommand } from '../../src/cli/commands/angleSeries.ts';
import { chartCommand } from '../../src/cli/commands/chart.ts';
import { renderSampleImage, resolveTrain, turnedTrain, type SampleRetarder } from '../../src/optics/index.ts';
import type { Image } from '../../src/image/types.ts';
import { DEG, axialDiffDeg } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';

const dir = mkdtempSync(join(tmpdir(), 'retarda-optics-'));
const run = (cmd: Command, argv: string[]) => cmd.run(parseArgs(argv, [...cmd.options, ...COMMON_OPTIONS]));

function savePng(name: string, img: Image): string {
  const data = new Uint8Array(img.width * img.height * 3);
  for (let i = 0; i < img.width * img.height; i++) for (let c = 0; c < 3; c++) data[3 * i + c] = Math.round(255 * img.planes[c][i]);
  const path = join(dir, name);
  writeFileSync(path, encode({ width: img.width, height: img.height, data, channels: 3, depth: 8 }));
  return path;
}

// A 48 x 32 sample: a 12-px sample-free strip on the left (the sample-free area), then -20 deg / 200 nm and
// +20 deg / 350 nm (both readable from one plate image), with a 6-px band of 100 nm across the middle so the
// registration check has edges in both directions.
const W = 48, H = 32;
const sample = (x: number, y = 0): SampleRetarder => {
  if (x < 12) return { angleRad: 0, retardanceNm: 0 };
  const a = (x < 30 ? -20 : 20) * DEG;
  return { angleRad: a, retardanceNm: y >= 13 && y < 19 ? 100 : x < 30 ? 200 : 350 };
};
const cam = { gains: [1, 1, 1] as [number, number, number], exposure: 0.75 };
let plateA = '', plateB = '', quads: string[] = [];

beforeAll(() => {
  const t = resolveTrain();
  plateA = savePng('a.png', renderSampleImage(W, H, (x, y) => sample(x, y), t, { noiseSd: 0.003, seed: 1, camera: cam }));
  plateB = savePng('b.png', renderSampleImage(W, H, (x, y) => sample(x, y), turnedTrain(t, 45), { noiseSd: 0.003, seed: 2, camera: cam }));
  quads = [0, 22.5, 45, 67.5].map((a, k) => savePng(`q${k}.png`,
    renderSampleImage(W, H, (x, y) => sample(x, y), { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.002, seed: 5 + k, camera: cam })));
});

describe('retarda plate', () => {
  it('reads orientation and retardance, calibrates from the background, writes the field', async () => {
    const out = await run(plateCommand, [plateA, '--sample-free', '0,0,12,32', '--compensator-nm', '550', '--json', '--field-out', join(dir, 'p.tif')]);
    const j = out.json as Record<string, any>;
    expect(j.analysis).toBe('plate');
    expect(j.ambiguity).toBe('mirror-about-compensator');
    expect(j.reading.calibration.compensatorNm).toBe(550);
    expect(j.reading.calibration.exposure).toBeCloseTo(0.75, 1);
    // Sample pixels all stay; the 12-px sample-free strip reads near 0 nm and is mostly masked (20 nm floor).
    expect(j.confidence.n).toBeGreaterThanOrEqual((W - 12) * H);
    expect(j.confidence.n).toBeLessThanOrEqual((W - 12) * H + 0.5 * 12 * H);
    // retardanceNmMedian is the median over the kept pixels with confidence >= 0.5 (src/analyses/optics.ts): the
    // construction's retardance (0, 100, 200 or 350 nm, see sample above) over those same pixels, read from the
    // field TIFF (pages angleDeg, confidence, retardanceNm, mask), gives the value it must report. Within 10 nm, the
    // two-image round trip's retardance tolerance (common practice, no source).
    const pages = decodeImagePages(new Uint8Array(readFileSync(join(dir, 'p.tif'))), 'p.tif');
    expect(pages).toHaveLength(4);
    const [, conf, , mask] = pages.map((p) => p.planes[0]);
    const truth: number[] = [];
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) if (mask[y * W + x] && conf[y * W + x] >= 0.5) truth.push(sample(x, y).retardanceNm);
    truth.sort((a, b) => a - b);
    expect(truth.length).toBeGreaterThan(0);
    expect(Math.abs(j.retardanceNmMedian - truth[truth.length >> 1])).toBeLessThanOrEqual(10);
    expect(out.table).toContain('retardance nm (median)');
  });

  it('the S profile options and the mirror advice', async () => {
    const out = await run(plateCommand, [plateA, '--sample-free', '0,0,12,32', '--axis-deg', '0']);
    const j = out.json as Record<string, any>;
    expect(j.axisDeg).toBe(0);
    expect(j.reading.advice).toContain('45 deg from the compensator axis');
    expect(j.reading.mirrorChoiceMatteredFraction).toBeGreaterThan(0);
    expect(out.warnings!.join(' ')).toContain('compensator axis');
  });

  it('bad options are input errors', async () => {
    await expect(run(plateCommand, [plateA, '--match', 'rgb'])).rejects.toThrow(InputError);
    await expect(run(plateCommand, [plateA, '--sample-free', '0,0,100,100'])).rejects.toThrow(InputError);
    await expect(run(plateCommand, [plateA, '--illuminant', 'candle'])).rejects.toThrow(InputError);
    await expect(run(plateCommand, [])).rejects.toThrow(InputError);
    await expect(run(plateCommand, [plateA, '--white-rgb', '300,2,1'])).rejects.toThrow(InputError);
  });

  it('a white reference sets the white balance', async () => {
    // An open beam recorded at exposure 0.75 with a neutral camera: sRGB code of 0.75 on every channel.
    const code = Math.round(255 * (1.055 * 0.75 ** (1 / 2.4) - 0.055));
    const j = (await run(plateCommand, [plateA, '--white-rgb', `${code},${code},${code}`])).json as Record<string, any>;
    // Sample pixels all stay; the 12-px sample-free strip reads near 0 nm and is mostly masked (20 nm floor).
    expect(j.confidence.n).toBeGreaterThanOrEqual((W - 12) * H);
    expect(j.confidence.n).toBeLessThanOrEqual((W - 12) * H + 0.5 * 12 * H);
    expect(j.warnings.join(' ')).not.toContain('no sample-free area');
  });
});

describe('retarda plate-pair', () => {
  it('gives the full orientation of both halves and checks registration', async () => {
    const out = await run(platePairCommand, [plateA, plateB, '--compensator-nm', '550', '--retardance-max-nm', '600', '--sample-free', '0,0,12,32', '--field-out', join(dir, 'p2.tif')]);
    const j = out.json as Record<string, any>;
    expect(j.analysis).toBe('plate-pair');
    expect(j.ambiguity).toBe('none');
    expect(j.reading.registration.shiftPx).toBeLessThan(1);
    // Two halves at -20 and +20 deg with equal areas: the director is near 0 (or 90 when the 350-nm half weighs more).
    expect(Math.min(axialDiffDeg(j.directorDeg, 0), axialDiffDeg(j.directorDeg, 90))).toBeLessThan(5);
    await expect(run(platePairCommand, [plateA])).rejects.toThrow(InputError);
  });
});

describe('retarda angle-series', () => {
  it('fits the four angles and resolves the 90-deg choice with the plate image', async () => {
    const out = await run(angleSeriesCommand, [...quads, '--plate', plateA, '--plate-sample-free', '0,0,12,32', '--field-out', join(dir, 'q.tif'), '--axis-deg', '-20']);
    const j = out.json as Record<string, any>;
    expect(j.analysis).toBe('angle-series');
    expect(j.reading.plateResolvedFraction).toBeGreaterThan(0.5);
    expect(j.n).toBeGreaterThan(0);
    await expect(run(angleSeriesCommand, quads.slice(0, 3))).rejects.toThrow(InputError);
    await expect(run(angleSeriesCommand, [...quads, '--angles', '0,45,90,135'])).rejects.toThrow(InputError);
  });
});

describe('retarda chart', () => {
  it('writes the PNG and the table, and gives CSV rows', async () => {
    const png = join(dir, 'chart.png');
    const out = await run(chartCommand, ['--illuminant', 'D65', '--out', png, '--width-px', '200']);
    const img = decode(readFileSync(png));
    expect(img.width).toBe(200);
    expect(out.csvRows!.length).toBe(401);
    // The sensitive tint at 550 nm: the reference script (tests/fixtures/reference/make_optics_reference.py, numpy) on the
    // chart's own grid (D65, 380-780 nm in 5-nm steps) gives sRGB8 (106, 0, 177).
    const want = JSON.parse(readFileSync(new URL('../fixtures/reference/optics-reference.json', import.meta.url), 'utf8')).chart.d65From380To780At550.srgb8;
    const row = out.csvRows!.find((r) => r.retardanceNm === 550)!;
    expect([row.srgbR8, row.srgbG8, row.srgbB8].map(Number)).toEqual(want);
    expect(out.table).toContain('sensitive tint');
  });
});
