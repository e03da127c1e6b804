/**
 * `retarda orient` on images large enough to be streamed (more than HELD_FIELD_MAX_PIXELS) uses worker threads
 * (src/cli/threads.ts): the JSON must be the same bytes as with one thread (RETARDA_THREADS=1), for a 16-bit grey
 * TIFF written by Debian's python3-tifffile (its rows read from the file by every thread) and an 8-bit RGB PNG
 * (its grey plane held, strips sent to the workers), odd sizes, a block size that cuts the strips'
 * blocks at the image's edge, a region with odd edges and an axis. The command is built into a temporary
 * folder and run as whole processes; RETARDA_THREADS_REPORT=1 makes it say how many strips its workers
 * computed, so a run that quietly kept to one thread fails.
 */
import { describe, expect, it, beforeAll } from 'vitest';
import { spawnSync, execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { encodePng } from '../../src/report/png.ts';
import { HELD_FIELD_MAX_PIXELS } from '../../src/analyses/index.ts';
// @ts-expect-error plain JavaScript build script without types
import { buildCli } from '../../bin/build-cli.mjs';

const ROOT = resolve(import.meta.dirname, '../..');
const PY = '/usr/bin/python3';
let dir = '', cli = '', tiff = '', rgb = '';

/** Stripes whose angle swings down the image, with 5 % noise (values 0..1). */
function scene(x: number, y: number, h: number, noise: number): number {
  const a = 0.5 * Math.sin((Math.PI * y) / h);
  return 0.5 + 0.3 * Math.sin((2 * Math.PI * (-x * Math.sin(a) + y * Math.cos(a))) / 7) + 0.05 * (noise - 0.5);
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'retarda-threads-'));
  cli = join(dir, 'retarda.mjs');
  await buildCli(cli);
  // 16-bit grey TIFF, 4901 x 4903 (odd, just over the streaming limit), written by tifffile.
  tiff = join(dir, 'grey16.tif');
  execFileSync(PY, ['-c', [
    'import sys, numpy as np, tifffile',
    'w, h = 4901, 4903',
    'y = np.arange(h, dtype=np.float32)[:, None]; x = np.arange(w, dtype=np.float32)[None, :]',
    'a = 0.5 * np.sin(np.pi * y / h)',
    'v = 0.5 + 0.3 * np.sin(2 * np.pi * (-x * np.sin(a) + y * np.cos(a)) / 7)',
    'v += 0.05 * (np.random.default_rng(5).random((h, w), dtype=np.float32) - 0.5)',
    'tifffile.imwrite(sys.argv[1], np.clip(np.round(65535 * v), 0, 65535).astype(np.uint16))',
  ].join('\n'), tiff]);
  let seed = 9;
  const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32);
  {
    const W = 5003, H = 4801, data = new Uint8Array(W * H * 3);
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
      const v = scene(x, y, H, rand()), i = 3 * (y * W + x);
      data[i] = Math.round(255 * v); data[i + 1] = Math.round(230 * v); data[i + 2] = Math.round(200 * (1 - v));
    }
    rgb = join(dir, 'rgb8.png');
    writeFileSync(rgb, encodePng({ width: W, height: H, channels: 3, data }));
  }
  expect(4901 * 4903).toBeGreaterThan(HELD_FIELD_MAX_PIXELS);
  expect(5003 * 4801).toBeGreaterThan(HELD_FIELD_MAX_PIXELS);
  return () => rmSync(dir, { recursive: true, force: true });
}, 120_000);

function run(args: string[], threads: string): { json: string; err: string } {
  const r = spawnSync(process.execPath, [cli, 'orient', tiff, rgb, '--json', ...args], {
    cwd: ROOT, encoding: 'utf8', env: { ...process.env, RETARDA_THREADS: threads, RETARDA_THREADS_REPORT: '1' }, maxBuffer: 1 << 24,
  });
  expect(r.status, r.stderr).toBe(0);
  return { json: r.stdout, err: r.stderr };
}

/** Strips the workers computed, per image, from the command's report. */
const workerStrips = (err: string) => [...err.matchAll(/worker thread\(s\) computed (\d+) strip/g)].map((m) => Number(m[1]));

describe('retarda orient with worker threads', () => {
  const cases: [string, string[]][] = [
    ['defaults', []],
    ['a region with odd edges, an axis and 13 px blocks', ['--region', '101,203,3999,4401', '--axis-deg', '30', '--block-px', '13']],
  ];
  for (const [what, args] of cases) {
    it(`${what}: the same JSON bytes as one thread`, () => {
      const one = run(args, '1'), two = run(args, '2');
      expect(workerStrips(one.err)).toStrictEqual([]);
      // Each image: both passes shared (a worker always takes the first strips of each pass).
      const strips = workerStrips(two.err);
      expect(strips.length).toBe(2);
      for (const n of strips) expect(n).toBeGreaterThanOrEqual(2);
      expect(two.json).toBe(one.json);
      const results = JSON.parse(two.json).results;
      expect(results.map((r: { width: number; height: number }) => [r.width, r.height])).toStrictEqual([[4901, 4903], [5003, 4801]]);
    }, 120_000);
  }
});
