/**
 * The words the command line prints and reads (README, "Glossary"): texture strength, not the word it replaced;
 * former option names and values still read for one release, each with one notice line on stderr and the
 * same numbers as the new name.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encodePng } from '../../src/report/png.ts';
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
});

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
