import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { isInputError } from '../../src/common/errors.ts';
import { decodeImage } from '../../src/image/index.ts';
import { encodePng, type PngPixels } from '../../src/report/png.ts';

const PYTHON = '/usr/bin/python3';
const hasPythonReaders = existsSync(PYTHON) &&
  spawnSync(PYTHON, ['-c', 'import cv2, PIL, numpy'], { encoding: 'utf8' }).status === 0;
if (!hasPythonReaders && process.env.CI !== 'true') {
  console.warn(`tests/report/png.test.ts: ${PYTHON} with OpenCV + Pillow not found; the outside-reader checks are skipped`);
}

/** Reproducible samples over the whole code range, with 0 and the maximum included. */
function samples(count: number, max: number, seed: number): number[] {
  let s = seed;
  return Array.from({ length: count }, (_, i) => {
    if (i === 0) return 0;
    if (i === count - 1) return max;
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0; // Numerical Recipes LCG
    return Math.floor((s / 2 ** 32) * (max + 1));
  });
}

const W = 7;
const H = 5;
const cases: { label: string; pixels: PngPixels }[] = [
  { label: 'grey 8-bit', pixels: { width: W, height: H, channels: 1, data: Uint8Array.from(samples(W * H, 255, 1)) } },
  { label: 'RGB 8-bit', pixels: { width: W, height: H, channels: 3, data: Uint8Array.from(samples(W * H * 3, 255, 2)) } },
  { label: 'RGBA 8-bit', pixels: { width: W, height: H, channels: 4, data: Uint8Array.from(samples(W * H * 4, 255, 3)) } },
  { label: 'grey 16-bit', pixels: { width: W, height: H, channels: 1, data: Uint16Array.from(samples(W * H, 65535, 4)), bitDepth: 16 } },
  { label: 'RGB 16-bit', pixels: { width: W, height: H, channels: 3, data: Uint16Array.from(samples(W * H * 3, 65535, 5)) } },
];

describe('encodePng', () => {
  for (const { label, pixels } of cases) {
    it(`${label}: our decoder reads back the exact samples (alpha dropped)`, () => {
      const img = decodeImage(encodePng(pixels), label);
      const max = pixels.data instanceof Uint16Array ? 65535 : 255;
      expect([img.width, img.height, img.bitDepth]).toEqual([W, H, max === 255 ? 8 : 16]);
      const colours = pixels.channels === 1 ? 1 : 3;
      for (let c = 0; c < colours; c++) {
        const expected = Array.from({ length: W * H }, (_, i) => Math.fround(pixels.data[i * pixels.channels + c] / max));
        expect(Array.from(img.planes[c])).toEqual(expected);
      }
    });
  }

  it('refuses data of the wrong length, type or channel count with an InputError', () => {
    const bad: [string, () => unknown][] = [
      ['short data', () => encodePng({ width: 2, height: 2, channels: 3, data: new Uint8Array(11) })],
      ['16-bit with bytes', () => encodePng({ width: 2, height: 2, channels: 1, data: new Uint8Array(4), bitDepth: 16 })],
      ['2 channels', () => encodePng({ width: 2, height: 2, channels: 2 as 1, data: new Uint8Array(8) })],
      ['zero size', () => encodePng({ width: 0, height: 2, channels: 1, data: new Uint8Array(0) })],
    ];
    for (const [label, run] of bad) {
      let caught: unknown;
      try { run(); } catch (e) { caught = e; }
      expect(isInputError(caught), label).toBe(true);
    }
  });
});

describe('encodePng read by OpenCV and Pillow (outside readers)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'retarda-png-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  // Runs in CI even without Python, so a missing reference fails loudly there.
  it.skipIf(!hasPythonReaders && process.env.CI !== 'true')('every case decodes to the same samples, bit depth and channel count', () => {
    const files = cases.map(({ pixels }, i) => {
      const file = join(dir, `case${i}.png`);
      writeFileSync(file, encodePng(pixels));
      return file;
    });
    // OpenCV keeps 16-bit colour (Pillow reduces it to 8-bit RGB), so it is the sample reference;
    // Pillow checks the header it reports. OpenCV returns BGR(A): reversed back to RGB(A) here.
    const script = `
import json, sys
import cv2, numpy as np
from PIL import Image
out = []
for f in sys.argv[1:]:
    a = cv2.imread(f, cv2.IMREAD_UNCHANGED)
    if a.ndim == 3:
        a = a[..., [2, 1, 0, 3]] if a.shape[2] == 4 else a[..., ::-1]
    with Image.open(f) as im:
        out.append({"dtype": str(a.dtype), "shape": list(a.shape), "values": a.ravel().tolist(),
                    "pillowMode": im.mode, "pillowSize": list(im.size)})
print(json.dumps(out))
`;
    const run = spawnSync(PYTHON, ['-c', script, ...files], { encoding: 'utf8' });
    expect(run.error, `could not run ${PYTHON}`).toBeUndefined();
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    const results = JSON.parse(run.stdout);
    // Pillow modes for PNG colour types: L, RGB, RGBA (8-bit), I;16 or I (16-bit grey), RGB (16-bit RGB read as 8-bit).
    const modes = ['L', 'RGB', 'RGBA', ['I;16', 'I'], 'RGB'];
    cases.forEach(({ pixels }, i) => {
      const shape = pixels.channels === 1 ? [H, W] : [H, W, pixels.channels];
      expect(results[i]).toMatchObject({ dtype: pixels.data instanceof Uint16Array ? 'uint16' : 'uint8', shape,
        pillowSize: [W, H] });
      expect(results[i].values).toEqual(Array.from(pixels.data));
      const mode = modes[i];
      if (Array.isArray(mode)) expect(mode).toContain(results[i].pillowMode);
      else expect(results[i].pillowMode).toBe(mode);
    });
  });
});
