import { describe, expect, it, vi } from 'vitest';
import { decodeImagePages, MAX_DECODE_BYTES } from '../../src/image/index.ts';
import { fixtureBytes } from './fixtures.ts';

// The decompressors are replaced by functions that record calls: a size check that runs on the
// header must refuse the file before any decompression (and so any pixel buffer) is involved.
const calls = vi.hoisted(() => ({ inflate: 0, jpeg: 0 }));
vi.mock('fflate', () => ({
  Inflate: class {
    constructor() {
      calls.inflate++;
      throw new Error('inflate must not be called');
    }
  },
}));
vi.mock('jpeg-js', () => ({
  default: { decode: () => { calls.jpeg++; throw new Error('jpeg-js decode must not be called'); } },
}));

describe('size limits are checked from the header, before any decompression runs', () => {
  it.each([
    ['huge.png', '100000 x 100000'],
    ['huge.tif', '100000 x 100000'],
    ['huge.jpg', '65535 x 65535'],
    ['zero_width.png', '0 x 10'],
  ])('%s is refused with its size and no decompressor call', (file, size) => {
    expect(() => decodeImagePages(fixtureBytes(file), file)).toThrow(size);
    expect(calls).toEqual({ inflate: 0, jpeg: 0 });
  });

  it('the limit is MAX_DECODE_BYTES and is named: one pixel row more than fits is refused, one row less is not', () => {
    // A crafted uncompressed 8-bit grey TIFF: decoding takes its float plane, 4 bytes per pixel
    // (definition of the estimate in src/image/tiffDecode.ts), so the largest height that fits is
    // floor(MAX_DECODE_BYTES / 4 / width).
    const width = 10_000;
    const height = Math.floor(MAX_DECODE_BYTES / 4 / width) + 1;
    expect(4 * width * height).toBeGreaterThan(MAX_DECODE_BYTES);
    const tif = fixtureBytes('huge.tif');
    const view = new DataView(tif.buffer);
    const ifd = view.getUint32(4, true);
    const n = view.getUint16(ifd, true);
    for (let k = 0; k < n; k++) {
      const entry = ifd + 2 + 12 * k;
      const tag = view.getUint16(entry, true);
      if (tag === 256) view.setUint32(entry + 8, width, true);
      if (tag === 257 || tag === 278) view.setUint32(entry + 8, height, true);
    }
    expect(() => decodeImagePages(tif, 'limit.tif')).toThrow(`${width} x ${height}`);
    expect(() => decodeImagePages(tif, 'limit.tif')).toThrow(`${MAX_DECODE_BYTES / 1e6} MB limit`);
    // One row less passes the memory check and fails only later, on the missing pixel data.
    for (let k = 0; k < n; k++) {
      const entry = ifd + 2 + 12 * k;
      const tag = view.getUint16(entry, true);
      if (tag === 257 || tag === 278) view.setUint32(entry + 8, height - 1, true);
    }
    expect(() => decodeImagePages(tif, 'limit.tif')).toThrow('damaged');
  });
});

describe('control for the test above', () => {
  it('a normal-sized PNG does reach the (replaced) inflater, so the zero call counts above mean something', () => {
    expect(() => decodeImagePages(fixtureBytes('grey8.png'), 'grey8.png')).toThrow('inflate must not be called');
    expect(calls.inflate).toBe(1);
  });
});
