// `retarda trend` as a whole command: each point is the reading `retarda orient` / `retarda profile` gives for that
// image (the same documents), the line's interval holds the slope the renderings were made with (the construction
// is the truth), a CSV table with a walls column gives the same points as --walls per image, points that cannot be
// read are left out with why, and bad input is one line with exit status 2.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { wallsText } from '../../src/channel/index.ts';
import { encodePng } from '../../src/report/png.ts';
import { parseTrendTable } from '../../src/trend/index.ts';
import { renderScene, scene } from '../validation/render/index.ts';
import { runCli } from '../support/cliRun.ts';
import type { Image } from '../../src/image/index.ts';

let dir = '';
const textures: string[] = [];
const channels: { path: string; walls: string }[] = [];
/** The draw ratios the images stand for, and the orders rendered at them: S = 0.3 + 0.1 x (construction). */
const X = [1, 2, 3, 4, 5];
const S_OF = (x: number) => 0.3 + 0.1 * x;

function writePng(img: Image, path: string): void {
  const data = new Uint16Array(img.width * img.height);
  img.planes[0].forEach((v, i) => { data[i] = Math.round(Math.min(1, Math.max(0, v)) * 65535); });
  writeFileSync(path, encodePng({ width: img.width, height: img.height, channels: 1, data, bitDepth: 16 }));
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'retarda-trend-'));
  X.forEach((x, k) => {
    const S = S_OF(x);
    const t = renderScene(scene({ name: 'trend', seed: 5200 + k, width: 320, height: 240, channel: null, directorDeg: 23, order: { core: S, skin: S } }));
    const p = join(dir, `texture-${x}.png`);
    writePng(t.image, p);
    textures.push(p);
  });
  [1, 3, 5].forEach((x, k) => {
    const S = 0.4 + 0.1 * x;
    const c = renderScene(scene({ name: 'trend-channel', seed: 5300 + k, width: 320, height: 240, order: { core: S, skin: 0.4 } }));
    const p = join(dir, `channel-${x}.png`);
    writePng(c.image, p);
    channels.push({ path: p, walls: wallsText(c.truth.walls!) });
  });
});

describe('retarda trend', () => {
  it('whole-image S: every point is orient\'s S_axis for that image, and the slope\'s 95 % interval holds the rendered 0.1 per unit', async () => {
    const r = await runCli(['trend', ...textures, '--values', X.join(','), '--variable', 'draw ratio', '--axis-deg', '23', '--json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.analysis).toBe('trend');
    expect(j.reading).toBe('whole');
    expect(j.variable).toEqual({ name: 'draw ratio', unit: '' });
    expect(j.points).toHaveLength(5);
    for (const [k, p] of j.points.entries()) {
      const o = JSON.parse((await runCli(['orient', textures[k], '--axis-deg', '23', '--json'])).out);
      expect(p.value).toBe(X[k]);
      expect(p.reading).toBe(o.axisOrder);
      expect(p.ciLow).toBe(o.axisOrderCiLow);
      expect(p.used).toBe(true);
    }
    expect(j.fit.slopeCiLow).toBeLessThanOrEqual(0.1);
    expect(j.fit.slopeCiHigh).toBeGreaterThanOrEqual(0.1);
    expect(j.fit.direction).toBe('rises');
    // The line at x = 0 is an extrapolation; its interval holds the rendered 0.3 too.
    expect(j.fit.interceptCiLow).toBeLessThanOrEqual(0.3);
    expect(j.fit.interceptCiHigh).toBeGreaterThanOrEqual(0.3);
  });

  it('core S from a CSV table with each image\'s walls: the points are profile\'s core S on those walls', async () => {
    const table = join(dir, 'table.csv');
    writeFileSync(table, `image,value,walls\r\n${channels.map((c, k) => `${basename(c.path)},${[1, 3, 5][k]},"${c.walls}"`).join('\r\n')}\r\n`);
    const r = await runCli(['trend', '--table', table, '--reading', 'core', '--variable', 'bath temperature', '--unit', 'deg C', '--json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    for (const [k, p] of j.points.entries()) {
      const pr = JSON.parse((await runCli(['profile', channels[k].path, '--walls', channels[k].walls, '--json'])).out);
      expect(p.reading).toBe(pr.core.order);
      expect(p.se).toBe(pr.core.se);
    }
    // Rendered core S = 0.4 + 0.1 x: the slope's interval holds 0.1 per deg C.
    expect(j.fit.slopeCiLow).toBeLessThanOrEqual(0.1);
    expect(j.fit.slopeCiHigh).toBeGreaterThanOrEqual(0.1);
    // The table as a table: one row per image, then the slope and intercept.
    const csvPath = join(dir, 'out.csv');
    const t = await runCli(['trend', '--table', table, '--reading', 'core', '--csv', csvPath]);
    expect(t.code, t.err).toBe(0);
    expect(t.out).toMatch(/core S against value/);
    expect(t.out).toMatch(/slope \(per unit\)/);
  });

  it('two values of the variable: the line is not determined, with why, and no slope is printed', async () => {
    const r = await runCli(['trend', textures[0], textures[1], textures[2], '--values', '1,1,2', '--axis-deg', '23', '--json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.fit.slope).toBeNull();
    expect(j.notDetermined.slope).toMatch(/3 or more different values/);
    const table = await runCli(['trend', textures[0], textures[1], textures[2], '--values', '1,1,2']);
    expect(table.out).toMatch(/line: not determined/);
  });

  it('an image whose walls are not found is a point without a reading (why given); the rest still fit', async () => {
    const r = await runCli(['trend', textures[0], ...channels.map((c) => c.path), '--values', '0,1,3,5', '--reading', 'core', '--auto-walls', '--json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.points[0].used).toBe(false);
    expect(j.points[0].why).toMatch(/refused: /);
    expect(j.points[0].reading).toBeNull();
  });

  it('bad input: one plain line, exit status 2', async () => {
    const cases: [string[], RegExp][] = [
      [['trend', textures[0], textures[1]], /values are not given/],
      [['trend', textures[0], textures[1], '--values', '1'], /1 values for 2 images/],
      [['trend', textures[0], '--values', '1', '--reading', 'tenacity'], /--reading must be one of/],
      [['trend', textures[0], '--values', '1', '--walls', '0,0,1,1;0,5,1,6'], /--walls does not apply to --reading whole/],
      [['trend', '--table', join(dir, 'missing.csv')], /cannot read the table/],
      [['trend', textures[0], '--values', '1,x'], /--values must be numbers/],
      [['trend', textures[0], '--values', '1', '--variable', 'a'.repeat(200)], /at most 80 characters/],
    ];
    for (const [argv, message] of cases) {
      const r = await runCli(argv);
      expect(r.code, argv.join(' ')).toBe(2);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(message);
    }
  });
});

describe('trend tables', () => {
  it('reads RFC 4180 fields: quoted walls with commas and semicolons, a header in any order, CRLF', () => {
    expect(parseTrendTable('value,image,walls\r\n2,"a b.png","1,2,3,4;5,6,7,8"\r\n3,c.png,\r\n')).toEqual([
      { image: 'a b.png', value: 2, walls: '1,2,3,4;5,6,7,8' }, { image: 'c.png', value: 3 },
    ]);
    expect(parseTrendTable('a.png,1.5\nb.png,-2')).toEqual([{ image: 'a.png', value: 1.5 }, { image: 'b.png', value: -2 }]);
  });
  it('refuses a row without a number, a header without image and value, and an open quote, naming the row', () => {
    expect(() => parseTrendTable('image,value\na.png,fast', 't.csv')).toThrow(/t.csv, row 2 \(a.png\): the value "fast" is not a number/);
    expect(() => parseTrendTable('file,ratio\na.png,1')).toThrow(/header must name the columns image and value/);
    expect(() => parseTrendTable('a.png,1\n"b.png,2')).toThrow(/never closes/);
  });
});
