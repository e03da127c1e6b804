import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { decodeImage, decodeImagePages, type Image } from '../../src/image/index.ts';
import { maxCode, rawSamples, VARIANTS, type RawPage } from './fixtures.ts';

/**
 * Decoder variants (TIFF compressions, predictors, tiles, separate planes, byte orders, BigTIFF,
 * sample kinds, pages; PNG bit depths, palettes, Adam7; JPEG restart markers, progressive, CMYK,
 * YCCK) against the values an outside library gives: the arrays Pillow / tifffile / OpenCV wrote
 * (checked there to read back unchanged) or Pillow's decode, as
 * tests/fixtures/variants/make_variant_fixtures.py records in manifest.json.
 */

interface Variant {
  file: string;
  channels: number;
  /** 0 when the pages differ (multi-page files). */
  bitDepth: number;
  encoding: string;
  tolerance: number;
  meanTolerance: number;
  note: string;
  pages: RawPage[];
}

const variants: Variant[] = JSON.parse(readFileSync(VARIANTS + 'manifest.json', 'utf8')).readable;
const bytesOf = (file: string) => new Uint8Array(readFileSync(VARIANTS + file));

/**
 * Differences between decoded planes and the reference page. Integers must equal code / maxCode as
 * float32 and floats their float32 rounding (NaN where NaN): counted as exact mismatches. With a
 * tolerance (JPEG), differences are in 8-bit codes.
 */
function compare(img: Image, page: RawPage) {
  const ref = rawSamples(page, VARIANTS);
  const channels = page.shape.length === 3 ? page.shape[2] : 1;
  const max = maxCode(page.dtype);
  let exactMismatches = 0;
  let maxDiff = 0;
  let sumDiff = 0;
  const pixels = page.width * page.height;
  for (let i = 0; i < pixels; i++) {
    for (let c = 0; c < channels; c++) {
      const stored = ref[i * channels + c];
      const expected = Math.fround(max > 0 ? stored / max : stored);
      const got = img.planes[c][i];
      if (!Object.is(got, expected)) exactMismatches++;
      if (Number.isNaN(got) !== Number.isNaN(expected)) maxDiff = Infinity;
      else if (!Number.isNaN(got) && max === 255) {
        const diff = Math.abs(Math.round(got * 255) - stored);
        maxDiff = Math.max(maxDiff, diff);
        sumDiff += diff;
      }
    }
  }
  return { exactMismatches, maxDiff, meanDiff: sumDiff / (pixels * channels) };
}

describe('decoder variants against Pillow / tifffile / OpenCV (make_variant_fixtures.py)', () => {
  it('the manifest holds the variants the script writes (at least 40)', () => {
    expect(variants.length).toBeGreaterThanOrEqual(40);
  });

  for (const v of variants) {
    it(`${v.file}: ${v.note}`, () => {
      const pages = decodeImagePages(bytesOf(v.file), v.file);
      expect(pages).toHaveLength(v.pages.length);
      pages.forEach((img, i) => {
        const page = v.pages[i];
        expect([img.width, img.height, img.channels]).toEqual([page.width, page.height, v.channels]);
        if (v.bitDepth !== 0) expect([img.bitDepth, img.encoding]).toEqual([v.bitDepth, v.encoding]);
        const result = compare(img, page);
        if (v.tolerance === 0) {
          expect(result.exactMismatches, `page ${i}`).toBe(0);
        } else {
          // JPEG against libjpeg (through Pillow): bounds written by the script beside each file.
          expect(result.maxDiff, `page ${i}`).toBeLessThanOrEqual(v.tolerance);
          expect(result.meanDiff, `page ${i}`).toBeLessThanOrEqual(v.meanTolerance);
        }
      });
    });
  }

  it('decodeImage reads one page of a multi-page BigTIFF alone (page 2 of bigtiff_multipage.tif, tiled)', () => {
    const v = variants.find((x) => x.file === 'bigtiff_multipage.tif') as Variant;
    const img = decodeImage(bytesOf(v.file), v.file, 1);
    expect(img.source.page).toBe(1);
    expect(compare(img, v.pages[1]).exactMismatches).toBe(0);
  });
});
