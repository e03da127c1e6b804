import { afterAll, describe, expect, it } from 'vitest';
import { rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { COMMON_OPTIONS, parseArgs } from '../../src/cli/args.ts';
import { diameterCommand } from '../../src/cli/commands/diameter.ts';
import { fibreCommand } from '../../src/cli/commands/fibre.ts';
import { encodeFloatTiff } from '../../src/report/tiff.ts';
import { fibreNumbersResult } from '../../src/analyses/index.ts';
import { fibreArgs } from '../../src/options/index.ts';
import { renderFibres } from './render.ts';
import { tempDir, writePng16 } from './pngFile.ts';

const dir = tempDir();
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const run = (cmd: typeof diameterCommand, argv: string[]) =>
  cmd.run(parseArgs(argv, [...cmd.options, ...COMMON_OPTIONS]));

type Doc = Record<string, unknown> & { stations: Record<string, unknown>[]; fibres: Record<string, unknown>[] };

describe('retarda diameter', () => {
  const one = writePng16(dir, 'one.png', renderFibres({ width: 300, height: 240, noiseSd: 0.005,
    fibres: [{ cx: 150, cy: 120, angleDeg: 17, widthPx: 24, contrast: -0.4 }] }));
  const two = writePng16(dir, 'two.png', renderFibres({ width: 300, height: 240, noiseSd: 0.005,
    fibres: [{ cx: 80, cy: 120, angleDeg: 85, widthPx: 14, contrast: -0.3 }, { cx: 210, cy: 120, angleDeg: 95, widthPx: 30, contrast: -0.3 }] }));

  it('gives the contract keys, in um with --um-per-px', async () => {
    const out = await run(diameterCommand, [one, '--um-per-px', '0.5', '--json']);
    const d = out.json as Doc;
    for (const k of ['meanPx', 'meanUm', 'sdUm', 'cv', 'n', 'dropped', 'ciLowUm', 'ciHighUm', 'minUm', 'maxUm', 'fibres']) {
      expect(d).toHaveProperty(k);
    }
    // Rendered width 24 px (fact of the rendering) x 0.5 um/px = 12 um, within the 0.3 px / 1 % target
    expect(Math.abs((d.meanPx as number) - 24)).toBeLessThan(0.3);
    expect(d.meanUm as number).toBeCloseTo((d.meanPx as number) * 0.5, 10);
    expect(d.stations[0]).toHaveProperty('alongPx');
    expect(d.stations[0].diameterUm as number).toBeCloseTo((d.stations[0].diameterPx as number) * 0.5, 10);
    expect(d.pixelSizeFrom).toBe('option');
    expect(out.table).toMatch(/mean um/);
    expect(out.csvRows?.[0].meanUm).toBe(d.meanUm);
  });

  it('carries the pixel size\'s uncertainty into the um interval (--um-per-px-uncertainty)', async () => {
    const d = (await run(diameterCommand, [one, '--um-per-px', '0.5', '--um-per-px-uncertainty', '0.01', '--json'])).json as Doc;
    expect(d.pixelSizeUncertainty).toBe(0.01);
    // GUM law of propagation (independent inputs): u(D_um)^2 = (0.5 u(D_px))^2 + (D_um 0.01)^2
    const uPx = d.uPx as number;
    const meanUm = d.meanUm as number;
    expect(d.uUmPixelSize as number).toBeCloseTo(0.01 * meanUm, 12);
    expect(d.uUm as number).toBeCloseTo(Math.hypot(0.5 * uPx, 0.01 * meanUm), 12);
    expect(d.ciLowUm as number).toBeLessThan(meanUm);
    expect(d.ciHighUm as number).toBeGreaterThan(meanUm);
    expect(d.warnings as string[]).toEqual([]);
    await expect(run(diameterCommand, [one, '--um-per-px', '0.5', '--um-per-px-uncertainty', '-1'])).rejects.toThrow(/um-per-px-uncertainty/);
    await expect(run(diameterCommand, [one, '--um-per-px-uncertainty', '0.01'])).rejects.toThrow(/without a pixel size/);
  });

  it('says "not determined" with an upper bound for a fibre narrower than two blur widths', async () => {
    // 2.5 px wide, blurred by sigma 2 px: below 2 sigma the width and the contrast trade off (construction).
    const thin = writePng16(dir, 'thin.png', renderFibres({ width: 200, height: 160, noiseSd: 0.002,
      fibres: [{ cx: 100, cy: 80, angleDeg: 20, widthPx: 2.5, contrast: -0.5, sigmaPx: 2 }] }));
    const out = await run(diameterCommand, [thin, '--um-per-px', '0.65', '--json']);
    const d = out.json as Doc;
    expect(d.meanPx).toBeNull();
    expect(d.determined).toBe(false);
    expect(d.upperBoundPx as number).toBeGreaterThanOrEqual(2.5);
    expect(d.upperBoundUm as number).toBeCloseTo((d.upperBoundPx as number) * 0.65, 9);
    expect(d.fibres).toHaveLength(1);
    expect(d.fibres[0].droppedByReason).toMatchObject({ unresolved: expect.any(Number) });
    expect(out.warnings?.join(' ')).toMatch(/width not determined.*higher magnification/);
    const table = (await run(diameterCommand, [thin, '--um-per-px', '0.65'])).table as string;
    expect(table).toMatch(/at most um/);
  });

  it('leaves the um fields null with a warning when there is no pixel size', async () => {
    const out = await run(diameterCommand, [one, '--json']);
    const d = out.json as Doc;
    expect(d.meanUm).toBeNull();
    expect(d.sdUm).toBeNull();
    expect(d.ciLowUm).toBeNull();
    expect(d.stations[0].diameterUm).toBeNull();
    expect(out.warnings?.join(' ')).toMatch(/no pixel size/);
    expect(out.table).toMatch(/mean px/);
  });

  it('uses the pixel size in the TIFF resolution tags', async () => {
    const plane = renderFibres({ width: 300, height: 240, noiseSd: 0.005,
      fibres: [{ cx: 150, cy: 120, angleDeg: -40, widthPx: 20, contrast: -0.4 }] });
    const path = join(dir, 'calibrated.tif');
    writeFileSync(path, encodeFloatTiff([plane], { pixelSizeUmPerPx: 0.25 }));
    const d = (await run(diameterCommand, [path, '--json'])).json as Doc;
    expect(d.pixelSizeFrom).toBe('file');
    expect(d.pixelSizeUmPerPx as number).toBeCloseTo(0.25, 9);
    expect(Math.abs((d.meanUm as number) - 5)).toBeLessThan(0.3 * 0.25);
  });

  it('lists several fibres and summarises several images', async () => {
    const d = (await run(diameterCommand, [two, '--json'])).json as Doc;
    expect(d.fibres).toHaveLength(2);
    const means = d.fibres.map((f) => f.meanPx as number).sort((p, q) => p - q);
    // Rendered widths 14 and 30 px
    expect(Math.abs(means[0] - 14)).toBeLessThan(0.3);
    expect(Math.abs(means[1] - 30)).toBeLessThan(0.3);
    const both = await run(diameterCommand, [one, two, '--um-per-px', '1']);
    expect(both.csvRows).toHaveLength(2);
    expect((both.json as { results: unknown[] }).results).toHaveLength(2);
    expect(both.table).toMatch(/all/);
  });

  it('refuses a blank image, bad options and no files with InputError', async () => {
    const blank = writePng16(dir, 'blank.png', { width: 100, height: 80, data: new Float32Array(8000).fill(0.5) });
    await expect(run(diameterCommand, [blank])).rejects.toThrow(/uniform/);
    await expect(run(diameterCommand, [one, '--um-per-px', '-2'])).rejects.toThrow(/um-per-px/);
    await expect(run(diameterCommand, [one, '--polarity', 'grey'])).rejects.toThrow(/polarity/);
    await expect(run(diameterCommand, [])).rejects.toThrow(/no image/);
    await expect(run(diameterCommand, [join(dir, 'missing.png')])).rejects.toThrow(/missing.png/);
  });
});

describe('retarda fibre', () => {
  it('gives the carbon-fibre numbers of the closed forms', async () => {
    const out = await run(fibreCommand, ['--diameter-um', '7', '--density', '1.8', '--linear-density-tex', '0.05',
      '--strength-gpa', '4.9', '--json']);
    const d = out.json as Record<string, number>;
    // Closed forms (docs/methods.md §13.2-13.3): tex = rho pi D^2 / 4 x 1e-3 = 1.8 x pi x 49 / 4 x 1e-3 = 0.0692721 tex
    // = 0.692721 dtex (x 10) = 0.623449 den (x 9); tenacity = stress / rho = 4.9 / 1.8 = 2.72222 N/tex
    expect(Math.abs(d.solidTex - 0.069272)).toBeLessThan(1e-5);
    expect(Math.abs(d.solidDtex - 0.69272)).toBeLessThan(1e-5);
    expect(Math.abs(d.solidDenier - 0.62345)).toBeLessThan(1e-5);
    expect(Math.abs(d.tenacityNPerTex - 2.7222)).toBeLessThan(1e-4);
    expect(d.packingFraction).toBeCloseTo(0.05 / d.solidTex, 12);
    expect(out.table).toMatch(/packing fraction/);
  });
  it('takes dtex / denier and cN/dtex spellings and the birefringence inputs', async () => {
    const d = (await run(fibreCommand, ['--diameter-um', '12', '--density', '1.38', '--linear-density-den', '1.4047',
      '--tenacity-cn-per-dtex', '4', '--retardance-nm', '1200', '--intrinsic-birefringence', '0.2', '--json'])).json as Record<string, number>;
    // Closed form: 1.38 x pi x 144 / 4 x 1e-3 = 0.156075 tex = 1.40467 den, so the packing fraction is 1 within 1e-4
    expect(Math.abs(d.packingFraction - 1)).toBeLessThan(1e-4);
    expect(d.tenacityNPerTex).toBeCloseTo(0.4, 12); // 1 cN/dtex = 0.01 N / 0.1 tex = 0.1 N/tex (definitions)
    expect(d.birefringence).toBeCloseTo(0.1, 12); // 1200 nm / 12 um (definition)
    expect(d.orientationFactor).toBeCloseTo(0.5, 12);
  });
  it('gives 95 % intervals from the inputs\' standard uncertainties', async () => {
    const out = await run(fibreCommand, ['--diameter-um', '10', '--diameter-uncertainty-um', '0.1', '--density', '1.38',
      '--density-uncertainty', '0.01', '--json']);
    const d = out.json as { solidTex: number; intervals: Record<string, { u: number; ciLow: number; ciHigh: number }> };
    // tex ~ rho D^2 (law of propagation): u(tex)/tex = sqrt((2 x 0.01)^2 + (0.01/1.38)^2)
    expect(d.intervals.solidTex.u / d.solidTex).toBeCloseTo(Math.hypot(0.02, 0.01 / 1.38), 12);
    expect(out.table).toMatch(/solid tex .*95 % interval/);
    expect(out.csvRows?.[0].solidTexCiLow).toBe(d.intervals.solidTex.ciLow);
    await expect(run(fibreCommand, ['--diameter-um', '7', '--density', '1.8', '--tenacity-uncertainty', '0.1'])).rejects.toThrow(/tenacity/);
    await expect(run(fibreCommand, ['--diameter-um', '7', '--density', '1.8', '--diameter-uncertainty-um', '-1'])).rejects.toThrow(/uncertainty/);
  });

  it('gives the app\'s numbers from the app\'s command line (fibreArgs parsed back by the CLI)', async () => {
    const request = {
      diameterUm: 8.123, densityGPerCm3: 1.38, linearDensity: { value: 0.7, unit: 'dtex' as const },
      tenacity: { value: 4, unit: 'cN/dtex' as const }, retardanceNm: 350,
      uncertainties: { diameterUm: 0.05, diameterDof: 12.5, densityGPerCm3: 0.01, linearDensity: 0.02, tenacity: 0.2, retardanceNm: 10 },
    };
    const argv = fibreArgs(request);
    const d = (await run(fibreCommand, [...argv, '--json'])).json as Record<string, unknown>;
    expect(d).toEqual(fibreNumbersResult(request));
  });

  it('warns on a packing fraction above 1 and refuses nonsense', async () => {
    const out = await run(fibreCommand, ['--diameter-um', '7', '--density', '1.8', '--linear-density-tex', '0.1']);
    expect(out.warnings?.join(' ')).toMatch(/above 1/);
    await expect(run(fibreCommand, ['--density', '1.8'])).rejects.toThrow(/diameter-um/);
    await expect(run(fibreCommand, ['--diameter-um', '0', '--density', '1.8'])).rejects.toThrow(/diameter/);
    await expect(run(fibreCommand, ['--diameter-um', '7', '--density', '1.8', '--linear-density-tex', '1',
      '--linear-density-dtex', '10'])).rejects.toThrow(/once/);
    await expect(run(fibreCommand, ['x.png', '--diameter-um', '7', '--density', '1.8'])).rejects.toThrow(/no files/);
  });
});
