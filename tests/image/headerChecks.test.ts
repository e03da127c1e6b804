import { describe, expect, it, vi } from 'vitest';
import { decodeImagePages, MAX_PIXELS } from '../../src/image/index.ts';
import { fixtureBytes } from './fixtures.ts';

// The decoder libraries are replaced by functions that record calls: a size check that runs on the
// header must refuse the file before any library (and so any pixel buffer) is involved.
const calls = vi.hoisted(() => ({ png: 0, jpeg: 0, tiff: 0 }));
vi.mock('fast-png', () => ({
  decode: () => { calls.png++; throw new Error('fast-png decode must not be called'); },
  convertIndexedToRgb: () => { calls.png++; throw new Error('must not be called'); },
}));
vi.mock('jpeg-js', () => ({
  default: { decode: () => { calls.jpeg++; throw new Error('jpeg-js decode must not be called'); } },
}));
vi.mock('tiff', () => ({
  decode: () => { calls.tiff++; throw new Error('tiff decode must not be called'); },
}));

describe('size limits are checked from the header, before any decoder runs', () => {
  it.each([
    ['huge.png', '100000 x 100000'],
    ['huge.tif', '100000 x 100000'],
    ['huge.jpg', '65535 x 65535'],
    ['zero_width.png', '0 x 10'],
  ])('%s is refused with its size and no decoder call', (file, size) => {
    expect(() => decodeImagePages(fixtureBytes(file), file)).toThrow(size);
    expect(calls).toEqual({ png: 0, jpeg: 0, tiff: 0 });
  });

  it('the limit is MAX_PIXELS: one pixel more than 250 MP is refused, as a crafted 15812 x 15811 TIFF', () => {
    // 15812 * 15811 = 250,003,532 > MAX_PIXELS = 250,000,000 (types.ts).
    expect(15812 * 15811).toBeGreaterThan(MAX_PIXELS);
    const tif = fixtureBytes('huge.tif');
    const view = new DataView(tif.buffer);
    const ifd = view.getUint32(4, true);
    const n = view.getUint16(ifd, true);
    for (let k = 0; k < n; k++) {
      const entry = ifd + 2 + 12 * k;
      const tag = view.getUint16(entry, true);
      if (tag === 256) view.setUint32(entry + 8, 15812, true);
      if (tag === 257 || tag === 278) view.setUint32(entry + 8, 15811, true);
    }
    expect(() => decodeImagePages(tif, 'limit.tif')).toThrow('15812 x 15811');
    expect(calls.tiff).toBe(0);
  });
});

describe('control for the test above', () => {
  it('a normal-sized PNG does reach the (replaced) decoder, so the zero call counts above mean something', () => {
    expect(() => decodeImagePages(fixtureBytes('grey8.png'), 'grey8.png')).toThrow('fast-png decode must not be called');
    expect(calls.png).toBe(1);
  });
});
