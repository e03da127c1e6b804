import { readFileSync } from 'node:fs';
import { afterEach, describe, expect, it } from 'vitest';
import { decodeImage, toGrey, usePlatformCodecs } from '../../src/image/index.ts';
import { NODE_CODECS } from '../../src/cli/platform.ts';
import { VARIANTS } from './fixtures.ts';

/**
 * decodeImage(..., { grey: true }), which `retarda orient` reads with: a colour image comes as one plane that
 * must be, bit for bit, toGrey of the ordinary decode (Rec. 709 luma of the stored values; the ordinary decode is
 * itself checked against Pillow / tifffile / OpenCV in variants.test.ts), and a grey image as it is.
 */

const manifest: { file: string }[] = JSON.parse(readFileSync(VARIANTS + 'manifest.json', 'utf8')).readable;
const bits = (a: Float32Array) => Buffer.from(a.buffer, a.byteOffset, a.byteLength);

afterEach(() => usePlatformCodecs(null));

describe('decoding straight to grey', () => {
  for (const codecs of [null, NODE_CODECS]) {
    it(`gives toGrey's plane for every variant fixture (${codecs ? 'node:zlib' : 'fflate'})`, () => {
      usePlatformCodecs(codecs);
      let colour = 0;
      for (const { file } of manifest) {
        const bytes = new Uint8Array(readFileSync(VARIANTS + file));
        const full = decodeImage(bytes, file);
        const grey = decodeImage(bytes, file, 0, undefined, { grey: true });
        expect(grey.channels, file).toBe(1);
        expect([grey.width, grey.height, grey.bitDepth, grey.encoding, grey.pixelSizeUmPerPx], file)
          .toEqual([full.width, full.height, full.bitDepth, full.encoding, full.pixelSizeUmPerPx]);
        expect(bits(grey.planes[0]).equals(bits(toGrey(full).data)), file).toBe(true);
        if (full.channels === 3) colour++;
      }
      // RGB, RGBA and palette PNGs (Adam7 among them), colour TIFFs and JPEGs.
      expect(colour).toBeGreaterThan(10);
    });
  }
});
