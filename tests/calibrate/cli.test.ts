import { afterAll, describe, expect, it } from 'vitest';
import { rmSync } from 'node:fs';
import { COMMON_OPTIONS, parseArgs } from '../../src/cli/args.ts';
import { calibrateCommand } from '../../src/cli/commands/calibrate.ts';
import { renderRuler } from './render.ts';
import { tempDir, writePng16 } from '../fibre/pngFile.ts';

const dir = tempDir();
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const run = (argv: string[]) => calibrateCommand.run(parseArgs(argv, [...calibrateCommand.options, ...COMMON_OPTIONS]));

describe('retarda calibrate', () => {
  const ruler = writePng16(dir, 'ruler.png', renderRuler({ width: 500, height: 360, periodPx: 18.7, linesDeg: 100,
    contrast: -0.4, noiseSd: 0.01 }));

  it('gives umPerPx, its uncertainty, periodPx and divisions from a micrometer image', async () => {
    const out = await run([ruler, '--division-um', '10', '--json']);
    const d = out.json as Record<string, number | string>;
    // Rendered period 18.7 px (fact of the rendering), 10 um divisions -> 0.534759 um/px; goal 0.05 % (the issue's)
    expect(Math.abs((d.umPerPx as number) / (10 / 18.7) - 1)).toBeLessThan(5e-4);
    expect(Math.abs((d.periodPx as number) / 18.7 - 1)).toBeLessThan(5e-4);
    expect(d.uncertainty as number).toBeGreaterThan(0);
    expect(d.uncertaintyUmPerPx as number).toBeCloseTo((d.uncertainty as number) * (d.umPerPx as number), 12);
    expect(d.uncertaintyKind).toMatch(/relative combined standard uncertainty \(k = 1\)/);
    expect(d.uncertaintyKind).toMatch(/tolerance is not included/);
    expect(d.divisions as number).toBeGreaterThanOrEqual(20);
    const [lo, hi] = d.intervalUmPerPx as unknown as number[];
    expect(lo).toBeLessThan(d.umPerPx as number);
    expect(hi).toBeGreaterThan(d.umPerPx as number);
    // The table puts the method, u, the interval and its k beside the number.
    expect(out.table).toMatch(/um per px/);
    expect(out.table).toMatch(/u \(k = 1\)/);
    expect(out.table).toMatch(/interval \(k = 2\.\d\d\)/);
    expect(out.table).toMatch(/method +stage micrometer/);
  });

  it('adds the graticule tolerance given with --division-tolerance-um to the uncertainty (GUM 4.3.7: u = T / sqrt 3)', async () => {
    const bare = (await run([ruler, '--division-um', '10', '--json'])).json as Record<string, number>;
    const out = await run([ruler, '--division-um', '10', '--division-tolerance-um', '0.02', '--json']);
    const d = out.json as Record<string, number | string>;
    // Closed form: u^2 = u0^2 + (0.02 / (sqrt 3 x 10))^2
    expect((d.uncertainty as number) ** 2).toBeCloseTo(bare.uncertainty ** 2 + (0.02 / Math.sqrt(3) / 10) ** 2, 15);
    expect(d.divisionToleranceUm).toBe(0.02);
    expect(d.uncertaintyKind).toMatch(/tolerance of \+-0\.02 um/);
    await expect(run([ruler, '--division-um', '10', '--division-tolerance-um', '-1'])).rejects.toThrow(/division tolerance/);
  });

  it('gives the pixel size from the optics alone, and cross-checks it against the image', async () => {
    const optics = (await run(['--camera-pixel-um', '5.86', '--objective-mag', '20', '--adapter-mag', '0.5', '--json']))
      .json as Record<string, number>;
    // Closed form: 5.86 um / (20 x 0.5) = 0.586 um/px
    expect(optics.umPerPx).toBeCloseTo(0.586, 12);
    const cross = await run([ruler, '--division-um', '10', '--camera-pixel-um', '5.86', '--objective-mag', '20']);
    // Warnings stand in the table beside the number.
    expect(cross.table).toMatch(/warning: the micrometer gives .* but the optics give/);
  });

  it('warns when the pixel is larger than half the Rayleigh resolution', async () => {
    // 6.5 um at 4x = 1.625 um/px; Rayleigh 0.61 * 0.55 / 0.10 = 3.355 um, half 1.678 -> fine; at NA 0.25 -> under-sampled
    const ok = await run(['--camera-pixel-um', '6.5', '--objective-mag', '4', '--na', '0.10']);
    expect(ok.warnings).toEqual([]);
    const under = await run(['--camera-pixel-um', '6.5', '--objective-mag', '4', '--na', '0.25']);
    expect(under.warnings?.join(' ')).toMatch(/under-sampled/);
  });

  it('refuses missing or nonsense input with InputError', async () => {
    await expect(run([ruler])).rejects.toThrow(/division-um/);
    await expect(run([])).rejects.toThrow(/no micrometer image/);
    await expect(run([ruler, '--division-um', '-1'])).rejects.toThrow(/division spacing/);
    await expect(run(['--camera-pixel-um', '5'])).rejects.toThrow(/objective-mag/);
    const blank = writePng16(dir, 'blank.png', { width: 120, height: 90, data: new Float32Array(120 * 90).fill(0.3) });
    await expect(run([blank, '--division-um', '10'])).rejects.toThrow(/uniform/);
  });
});
