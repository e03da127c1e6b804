/**
 * Rows of a plain grey TIFF read from the file on demand (greyTiffRows, src/image/tiffRows.ts) against the plane
 * decodeImage makes of the same file (itself checked against tifffile's samples, tests/image/decode.test.ts):
 * the same values, in either byte order and from any byte offset; every other kind of TIFF is left to
 * decodeImage. And `retarda orient`'s numbers from the rows equal those from the decoded plane, to the bit.
 */
import { describe, expect, it } from 'vitest';
import { decodeImage, greyTiffRows } from '../../src/image/index.ts';
import { analyseOrientationRows, analyseOrientationStreamed } from '../../src/analyses/index.ts';
import { fixtureBytes } from './fixtures.ts';

describe('greyTiffRows', () => {
  for (const file of ['grey8.tif', 'grey16.tif', 'grey16_be.tif', 'grey8_miniswhite.tif', 'res_cm.tif']) {
    it(`${file}: every row and part of a row as decodeImage's plane, also from an odd byte offset`, () => {
      const bytes = fixtureBytes(file);
      const img = decodeImage(bytes, file);
      if (img.channels !== 1) return;
      const shifted = new Uint8Array(bytes.length + 1).subarray(1);
      shifted.set(bytes);
      for (const b of [bytes, shifted]) {
        const found = greyTiffRows(b, file)!;
        expect(found, file).not.toBeNull();
        expect(found.head.width).toBe(img.width);
        expect(found.head.height).toBe(img.height);
        expect(found.head.pixelSizeUmPerPx).toBe(img.pixelSizeUmPerPx);
        const row = new Float32Array(img.width);
        for (let y = 0; y < img.height; y++) {
          found.rows.readRow(y, 0, img.width, row);
          expect(Buffer.from(row.buffer).equals(Buffer.from(img.planes[0].buffer, 4 * y * img.width, 4 * img.width)), `${file} row ${y}`).toBe(true);
        }
        const x = Math.floor(img.width / 3), w = Math.max(1, Math.floor(img.width / 2));
        const part = new Float32Array(w);
        found.rows.readRow(img.height - 1, x, w, part);
        expect(Array.from(part)).toEqual(Array.from(img.planes[0].subarray((img.height - 1) * img.width + x, (img.height - 1) * img.width + x + w)));
      }
    });
  }

  it('leaves compressed, tiled, colour, float and other TIFFs to decodeImage', () => {
    for (const file of ['grey16_deflate.tif', 'grey16_lzw_predictor.tif', 'grey8_packbits.tif', 'grey8_tiled.tif', 'rgb8.tif', 'float32.tif', 'greyalpha16.tif', 'palette.tif', 'bilevel.tif']) {
      expect(greyTiffRows(fixtureBytes(file), file), file).toBeNull();
    }
  });

  it('orient from the rows gives the numbers of the decoded plane, to the bit', async () => {
    const bytes = fixtureBytes('grey16.tif');
    const found = greyTiffRows(bytes, 'grey16.tif')!;
    for (const o of [{}, { axisDeg: 30, weighting: 'strength' as const }]) {
      const fromRows = await analyseOrientationRows(found.head, found.rows, o);
      const fromPlane = await analyseOrientationStreamed(decodeImage(bytes, 'grey16.tif'), o);
      expect(fromRows).toStrictEqual(fromPlane);
    }
  });
});
