import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decode as decodeTiffLib } from 'tiff';
import { isInputError } from '../../src/common/errors.ts';
import { decodeImagePages } from '../../src/image/index.ts';
import { encodeFloatTiff } from '../../src/report/tiff.ts';

const PYTHON = '/usr/bin/python3';
const hasPythonReaders = existsSync(PYTHON) &&
  spawnSync(PYTHON, ['-c', 'import tifffile, PIL, numpy'], { encoding: 'utf8' }).status === 0;
if (!hasPythonReaders && process.env.CI !== 'true') {
  console.warn(`tests/report/tiff.test.ts: ${PYTHON} with tifffile + Pillow not found; the outside-reader checks are skipped`);
}

/** Float values that must survive exactly: signs, zero, subnormal, extremes, infinities, NaN. */
const SPECIAL = [0, -0, 1, -1, 0.1, -45.5, 89.999, 1e-40, 3.4028234663852886e38, -3.4028234663852886e38,
  Infinity, -Infinity, Number.NaN];

function page(width: number, height: number, seed: number, name?: string) {
  const data = new Float32Array(width * height);
  let s = seed;
  for (let i = 0; i < data.length; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0; // Numerical Recipes LCG, reproducible
    data[i] = i < SPECIAL.length ? SPECIAL[i] : (s / 2 ** 32 - 0.5) * 180;
  }
  return name === undefined ? { width, height, data } : { width, height, data, name };
}

const pages = [page(13, 7, 1, 'orientationDeg'), page(13, 7, 2, 'coherency'), page(5, 3, 3, 'retardanceNm')];
const encoded = encodeFloatTiff(pages, { pixelSizeUmPerPx: 0.5, description: 'Retarda fields; angles in degrees' });

describe('encodeFloatTiff read back by the tiff (image-js) decoder', () => {
  const ifds = decodeTiffLib(encoded);

  it('writes one page per quantity with PageName, in order', () => {
    expect(ifds).toHaveLength(3);
    expect(ifds.map((d) => d.get(285))).toEqual(['orientationDeg', 'coherency', 'retardanceNm']);
    expect(ifds.map((d) => [d.width, d.height])).toEqual([[13, 7], [13, 7], [5, 3]]);
  });

  it('stores 32-bit IEEE float samples (BitsPerSample 32, SampleFormat 3), values bit-exact incl. NaN and infinities', () => {
    ifds.forEach((d, i) => {
      expect([d.bitsPerSample, d.sampleFormat, d.samplesPerPixel, d.compression, d.type]).toEqual([32, 3, 1, 1, 1]);
      expect(d.data).toBeInstanceOf(Float32Array);
      expect(Array.from(d.data)).toEqual(Array.from(pages[i].data));
    });
  });

  it('0.5 um/px is stored as 20000 pixels per cm with ResolutionUnit 3 (1 cm = 1e4 um)', () => {
    for (const d of ifds) {
      expect(d.xResolution).toBe(20000);
      expect(d.yResolution).toBe(20000);
      expect(d.get('ResolutionUnit')).toBe(3);
    }
    expect(ifds[0].imageDescription).toBe('Retarda fields; angles in degrees');
  });

  it('our own decoder reads it back as linear 32-bit pages with pixel size 0.5 um/px', () => {
    const images = decodeImagePages(encoded, 'fields.tif');
    expect(images.map((im) => [im.bitDepth, im.encoding, im.pixelSizeUmPerPx])).toEqual(
      [[32, 'linear', 0.5], [32, 'linear', 0.5], [32, 'linear', 0.5]]);
    expect(Array.from(images[2].planes[0])).toEqual(Array.from(pages[2].data));
  });

  it('a tall page is split in several strips and still reads back exactly', () => {
    const tall = page(100, 700, 9); // 400 bytes per row -> 163 rows per 64 KiB strip -> 5 strips
    const [d] = decodeTiffLib(encodeFloatTiff([tall], {}));
    expect(d.stripOffsets).toHaveLength(5);
    expect(Array.from(d.data)).toEqual(Array.from(tall.data));
    expect(d.get('ResolutionUnit')).toBe(1); // no pixel size: no unit
  });

  it('refuses no pages, data of the wrong length, non-ASCII names and nonsense pixel sizes', () => {
    const bad: [string, () => unknown][] = [
      ['no pages', () => encodeFloatTiff([], {})],
      ['wrong length', () => encodeFloatTiff([{ width: 3, height: 3, data: new Float32Array(8) }], {})],
      ['non-ASCII', () => encodeFloatTiff([{ ...page(2, 2, 1), name: 'angle°' }], {})],
      ['pixel size 0', () => encodeFloatTiff([page(2, 2, 1)], { pixelSizeUmPerPx: 0 })],
      ['pixel size NaN', () => encodeFloatTiff([page(2, 2, 1)], { pixelSizeUmPerPx: Number.NaN })],
    ];
    for (const [label, run] of bad) {
      let caught: unknown;
      try { run(); } catch (e) { caught = e; }
      expect(isInputError(caught), label).toBe(true);
    }
  });
});

describe('encodeFloatTiff read by Python tifffile and Pillow (outside readers)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'retarda-tiff-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  // Runs in CI even without Python, so a missing reference fails loudly there.
  it.skipIf(!hasPythonReaders && process.env.CI !== 'true')('reads the same pages, names, values and resolution', () => {
    const file = join(dir, 'fields.tif');
    writeFileSync(file, encoded);
    const script = `
import json, math, sys, warnings
warnings.simplefilter("error")
import numpy as np, tifffile
from PIL import Image
f = sys.argv[1]
clean = lambda a: [v if math.isfinite(v) else str(v) for v in a.astype(np.float64).ravel().tolist()]
out = {"tifffile": [], "pillow": []}
with tifffile.TiffFile(f) as t:
    for p in t.pages:
        a = p.asarray()
        out["tifffile"].append({"shape": list(a.shape), "dtype": str(a.dtype), "values": clean(a),
            "name": p.tags["PageName"].value, "xres": p.tags["XResolution"].value[0] / p.tags["XResolution"].value[1],
            "unit": int(p.tags["ResolutionUnit"].value), "description": p.description})
with Image.open(f) as im:
    for i in range(im.n_frames):
        im.seek(i)
        a = np.asarray(im)
        out["pillow"].append({"mode": im.mode, "shape": list(a.shape), "values": clean(a),
            "name": im.tag_v2.get(285), "xres": float(im.tag_v2[282]), "unit": im.tag_v2[296]})
print(json.dumps(out))
`;
    const run = spawnSync(PYTHON, ['-c', script, file], { encoding: 'utf8' });
    expect(run.error, `could not run ${PYTHON}`).toBeUndefined();
    expect(run.stderr).toBe(''); // no warnings from either reader about the file structure
    expect(run.status).toBe(0);
    const { tifffile, pillow } = JSON.parse(run.stdout);
    // Python's str() of the non-finite floats: 'nan', 'inf', '-inf'.
    const pyText = (v: number) => (Number.isNaN(v) ? 'nan' : v === Infinity ? 'inf' : v === -Infinity ? '-inf' : v);
    const expected = (i: number) => Array.from(pages[i].data, pyText);
    expect(tifffile).toHaveLength(3);
    expect(pillow).toHaveLength(3);
    pages.forEach((p, i) => {
      // 0.5 um/px = 20000 px/cm (1 cm = 1e4 um), ResolutionUnit 3 = centimetre (TIFF 6.0 tag 296).
      expect(tifffile[i]).toMatchObject({ shape: [p.height, p.width], dtype: 'float32', name: p.name, unit: 3, xres: 20000 });
      expect(tifffile[i].values).toEqual(expected(i));
      expect(pillow[i]).toMatchObject({ mode: 'F', shape: [p.height, p.width], name: p.name, xres: 20000, unit: 3 });
      expect(pillow[i].values).toEqual(expected(i));
    });
    expect(tifffile[0].description).toBe('Retarda fields; angles in degrees');
  });
});
