import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { usePlatformCodecs } from '../../src/image/index.ts';
import { NODE_CODECS } from '../../src/cli/platform.ts';
import { loadTensorKernel } from '../../src/wasm/index.ts';
import { isInputError } from '../../src/common/errors.ts';
import { decodeImage, decodeImagePages, type Image } from '../../src/image/index.ts';
import { fixtureBytes, manifest, maxCode, rawSamples, type RawPage } from './fixtures.ts';

/**
 * Compares decoded planes with the reference samples of a page. Integer references must equal
 * code / maxCode exactly (as float32); float references must be identical (NaN where NaN).
 * With a tolerance (JPEG), differences are measured in 8-bit codes.
 */
function compare(img: Image, page: RawPage, channels: number) {
  const ref = rawSamples(page);
  const max = maxCode(page.dtype);
  let exactMismatches = 0;
  let maxDiff = 0;
  let sumDiff = 0;
  const pixels = page.width * page.height;
  for (let i = 0; i < pixels; i++) {
    for (let c = 0; c < channels; c++) {
      const stored = ref[i * channels + c];
      const expected = max > 0 ? Math.fround(stored / max) : stored;
      const got = img.planes[c][i];
      if (!Object.is(got, expected)) exactMismatches++;
      const diff = max > 0 ? Math.abs(Math.round(got * max) - stored) : Math.abs(got - stored);
      if (Number.isNaN(got) !== Number.isNaN(stored)) maxDiff = Infinity;
      else if (!Number.isNaN(diff)) {
        maxDiff = Math.max(maxDiff, diff);
        sumDiff += diff;
      }
    }
  }
  return { exactMismatches, maxDiff, meanDiff: sumDiff / (pixels * channels) };
}

function expectInputError(run: () => unknown, ...phrases: string[]): string {
  let caught: unknown;
  try {
    run();
  } catch (e) {
    caught = e;
  }
  expect(caught, 'expected an InputError').toBeInstanceOf(Error);
  expect(isInputError(caught), `not an InputError: ${String(caught)}`).toBe(true);
  const message = (caught as Error).message;
  for (const p of phrases) expect(message).toContain(p);
  return message;
}

describe('decodeImagePages on reference files written by Pillow / tifffile / OpenCV', () => {
  for (const fx of manifest.readable) {
    it(`${fx.file}: size, channels, bit depth, encoding, pixel size and samples match (${fx.note || 'exact'})`, () => {
      const pages = decodeImagePages(fixtureBytes(fx.file), fx.file);
      expect(pages).toHaveLength(fx.pages.length);
      const [img] = pages;
      const page = fx.pages[0];
      expect([img.width, img.height]).toEqual([page.width, page.height]);
      expect(img.channels).toBe(fx.channels);
      expect(img.planes).toHaveLength(fx.channels);
      expect(img.bitDepth).toBe(fx.bitDepth);
      expect(img.encoding).toBe(fx.encoding);
      expect(img.source.name).toBe(fx.file);
      if (fx.pixelSizeUmPerPx === null) expect(img.pixelSizeUmPerPx).toBeUndefined();
      // make_fixtures.py wrote these resolutions; TIFF rationals round at about 1e-10 relative.
      else expect(img.pixelSizeUmPerPx).toBeCloseTo(fx.pixelSizeUmPerPx, 8);
      const result = compare(img, page, fx.channels);
      if (fx.tolerance === 0) {
        // Lossless: the values numpy wrote, divided by 255 / 65535, or the float32 values themselves.
        expect(result.exactMismatches).toBe(0);
      } else {
        // JPEG vs Pillow's (libjpeg-turbo) decode of the same file: bounds from make_fixtures.py.
        expect(result.maxDiff).toBeLessThanOrEqual(fx.tolerance);
        expect(result.meanDiff).toBeLessThanOrEqual(fx.meanTolerance);
      }
    });
  }
});

describe('the command line\'s PNG path (node:zlib, rows unfiltered in the tensor kernel) on the files Pillow / OpenCV wrote', () => {
  beforeAll(async () => {
    await loadTensorKernel();
    usePlatformCodecs(NODE_CODECS);
  });
  afterAll(() => usePlatformCodecs(null));
  const pngs = manifest.readable.filter((fx) => /\.png$/i.test(fx.file));
  it(`every PNG reads to the samples written (${pngs.length} files)`, () => {
    expect(pngs.length).toBeGreaterThan(5);
    for (const fx of pngs) {
      const [img] = decodeImagePages(fixtureBytes(fx.file), fx.file);
      expect(compare(img, fx.pages[0], fx.channels).exactMismatches, fx.file).toBe(0);
    }
  });
});

describe('multi-page TIFF', () => {
  const { file, pages } = manifest.multipage;

  it('decodeImagePages returns every page with its own size, bit depth and samples (tifffile wrote three)', () => {
    const images = decodeImagePages(fixtureBytes(file), file);
    expect(images).toHaveLength(3);
    images.forEach((img, i) => {
      expect([img.width, img.height, img.bitDepth, img.encoding]).toEqual(
        [pages[i].width, pages[i].height, pages[i].bitDepth, pages[i].encoding]);
      expect(img.source).toEqual({ name: file, page: i });
      expect(compare(img, pages[i], 1).exactMismatches).toBe(0);
    });
  });

  it('decodeImage(bytes, name, 1) returns only the second page (11 x 9 float32)', () => {
    const img = decodeImage(fixtureBytes(file), file, 1);
    expect([img.width, img.height, img.bitDepth, img.encoding]).toEqual([11, 9, 32, 'linear']);
    expect(compare(img, pages[1], 1).exactMismatches).toBe(0);
  });

  it('decodeImage defaults to the first page', () => {
    const img = decodeImage(fixtureBytes(file), file);
    expect(img.source.page).toBe(0);
    expect(compare(img, pages[0], 1).exactMismatches).toBe(0);
  });

  it('asking for a page that does not exist is an InputError naming the page count', () => {
    expectInputError(() => decodeImage(fixtureBytes(file), file, 3), 'multipage.tif', '3 page(s)');
    expectInputError(() => decodeImage(fixtureBytes('grey8.png'), 'grey8.png', 1), 'one image');
    expectInputError(() => decodeImage(fixtureBytes(file), file, -1), 'not a page number');
  });
});

describe('files the decoder refuses, with a message saying why', () => {
  for (const fx of manifest.rejected) {
    it(`${fx.file} (${fx.note}) -> InputError mentioning "${fx.messageContains}"`, () => {
      expectInputError(() => decodeImagePages(fixtureBytes(fx.file), fx.file), fx.file, fx.messageContains);
      expectInputError(() => decodeImage(fixtureBytes(fx.file), fx.file), fx.file, fx.messageContains);
    });
  }

  it('a header claiming too many pixels is refused with the size and what to do', () => {
    expectInputError(() => decodeImagePages(fixtureBytes('huge.tif'), 'huge.tif'), '100000 x 100000', '750 MB limit', 'Crop', 'bin');
  });
});

describe('bad input', () => {
  it('an empty file', () => {
    expectInputError(() => decodeImagePages(new Uint8Array(0), 'empty.png'), 'empty.png', 'empty');
  });

  it('a text file says it is text and lists the accepted formats', () => {
    const text = new TextEncoder().encode('x,y,angleDeg\n1,2,45\n');
    expectInputError(() => decodeImagePages(text, 'results.csv'), 'results.csv', 'text file', 'PNG', 'JPEG', 'TIFF');
  });

  it('random bytes are an unknown format, whatever the file name says', () => {
    // A fixed linear congruential sequence (Numerical Recipes constants), so the bytes are reproducible.
    const bytes = new Uint8Array(4096);
    let s = 12345;
    for (let i = 0; i < bytes.length; i++) {
      s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
      bytes[i] = s >>> 24;
    }
    bytes[0] = 0x00; // not a signature byte of any accepted format
    expectInputError(() => decodeImagePages(bytes, 'photo.tif'), 'photo.tif', 'not an image format', 'Accepted formats');
  });

  it('other image formats are named (GIF)', () => {
    const gif = new TextEncoder().encode('GIF89a\x01\x00\x01\x00');
    expectInputError(() => decodeImagePages(gif, 'a.gif'), 'GIF', 'Accepted formats');
  });

  it('a PNG cut short anywhere after the header is an InputError, never partial pixels', () => {
    const png = fixtureBytes('rgb8.png');
    for (const keep of [20, 40, Math.floor(png.length / 2), png.length - 13, png.length - 1]) {
      expectInputError(() => decodeImagePages(png.slice(0, keep), 'cut.png'), 'cut.png', 'PNG');
    }
    const message = expectInputError(() => decodeImagePages(png.slice(0, png.length - 100), 'cut.png'));
    expect(message).toContain('cut short');
  });

  it('a TIFF cut short inside its pixel data says so', () => {
    const tif = fixtureBytes('rgb8.tif');
    // tifffile puts the page directory first, so this cut keeps the header but loses pixel strips.
    expectInputError(() => decodeImagePages(tif.slice(0, Math.floor(tif.length * 0.6)), 'cut.tif'), 'cut.tif', 'cut short');
    expectInputError(() => decodeImagePages(tif.slice(0, 6), 'cut.tif'), 'cut.tif', 'TIFF header');
    expectInputError(() => decodeImagePages(tif.slice(0, 12), 'cut.tif'), 'cut.tif', 'TIFF');
  });

  it('a TIFF cut short is refused even when the bytes are a view into a larger buffer', () => {
    // Decoders that read through the underlying ArrayBuffer could read past the view's end.
    const tif = fixtureBytes('rgb8.tif');
    const view = tif.subarray(0, Math.floor(tif.length * 0.6));
    expectInputError(() => decodeImagePages(view, 'view.tif'), 'cut short');
  });

  it('a JPEG cut short is an InputError that mentions the missing end marker', () => {
    const jpg = fixtureBytes('rgb444.jpg');
    for (const fraction of [0.1, 0.5, 0.95]) {
      expectInputError(() => decodeImagePages(jpg.slice(0, Math.floor(jpg.length * fraction)), 'cut.jpg'), 'cut.jpg', 'JPEG');
    }
    expectInputError(() => decodeImagePages(jpg.slice(0, Math.floor(jpg.length * 0.5)), 'cut.jpg'), 'EOI');
  });

  it('a PNG with flipped bits inside the compressed data is refused (CRC / inflate check)', () => {
    const png = fixtureBytes('grey16.png');
    const broken = png.slice();
    broken[Math.floor(png.length / 2)] ^= 0xff;
    expectInputError(() => decodeImagePages(broken, 'flipped.png'), 'flipped.png', 'PNG');
  });

  it('a TIFF whose page chain loops back is refused instead of looping forever', () => {
    const tif = fixtureBytes('grey8.tif');
    const view = new DataView(tif.buffer);
    const firstIfd = view.getUint32(4, true);
    const entries = view.getUint16(firstIfd, true);
    view.setUint32(firstIfd + 2 + 12 * entries, firstIfd, true); // next-IFD pointer -> itself
    expectInputError(() => decodeImagePages(tif, 'loop.tif'), 'loop.tif', 'loops');
  });

  it('a TIFF tag whose value count points past the end of the file is refused', () => {
    const tif = fixtureBytes('grey8.tif');
    const view = new DataView(tif.buffer);
    const firstIfd = view.getUint32(4, true);
    // Make the first entry claim 2^30 LONG values, i.e. 4 GiB of data in a small file.
    view.setUint16(firstIfd + 2 + 2, 4, true);
    view.setUint32(firstIfd + 2 + 4, 2 ** 30, true);
    expectInputError(() => decodeImagePages(tif, 'count.tif'), 'count.tif', 'damaged', 'past the end of the file');
  });

  it('bytes that are not a Uint8Array are refused', () => {
    expectInputError(() => decodeImagePages([1, 2, 3] as unknown as Uint8Array, 'array'), 'Uint8Array');
  });
});
