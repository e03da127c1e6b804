import { crc32, deflateSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { isInputError } from '../../src/common/errors.ts';
import { decodePng } from '../../src/image/pngDecode.ts';
import { decodeImage, decodeImageAsync, toGrey, usePlatformCodecs } from '../../src/image/index.ts';
import { NODE_CODECS } from '../../src/cli/platform.ts';
import { loadedTensorKernel, loadTensorKernel } from '../../src/wasm/index.ts';

/**
 * PNG rows are unfiltered and converted in the tensor kernel once a thread has loaded it (src/image/pngDecode.ts,
 * KernelRows), through node:zlib's inflater (the command line) and fflate's (the app).
 * Files are written here with every filter type of ISO 15948 section 9.2 chosen row by row (the writers of
 * decode.test.ts's fixtures use some of them only, on 23-pixel rows), wide enough for the kernel's 16-byte loops
 * and their tails, and tall enough for several of its bands. Each must read to its samples, code / (2^depth - 1)
 * as float32 (the standard's sample scaling), and to the same bits as the TypeScript path (read before the kernel is loaded).
 */

/** A PNG chunk: length, type, data, CRC-32 (ISO 15948 section 5.3). */
function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length), view = new DataView(out.buffer);
  view.setUint32(0, data.length);
  out.set(Buffer.from(type, 'latin1'), 4);
  out.set(data, 8);
  view.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

const paeth = (a: number, b: number, c: number) => {
  const p = a + b - c, pa = Math.abs(p - a), pb = Math.abs(p - b), pc = Math.abs(p - c);
  return pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
};

/**
 * A PNG of `samples` bytes (row-major, 8 or 16 bits per sample, big-endian) with row y filtered by filters[y],
 * each filter applied as ISO 15948 section 9.2 defines it (the filtered byte is the sample minus its predictor);
 * `after`: bytes put in IDAT after the zlib stream (a damaged file).
 */
function pngOf(width: number, height: number, depth: 8 | 16, colourType: number, perPixel: number, bytes: Uint8Array, filters: number[], after = new Uint8Array(0)): Uint8Array {
  const rowBytes = (width * perPixel * depth) / 8, bpp = (perPixel * depth) / 8;
  const raw = new Uint8Array(height * (rowBytes + 1));
  for (let y = 0; y < height; y++) {
    const f = filters[y], row = bytes.subarray(y * rowBytes, (y + 1) * rowBytes);
    const up = y > 0 ? bytes.subarray((y - 1) * rowBytes, y * rowBytes) : new Uint8Array(rowBytes);
    raw[y * (rowBytes + 1)] = f;
    for (let i = 0; i < rowBytes; i++) {
      const a = i >= bpp ? row[i - bpp] : 0, b = up[i], c = i >= bpp ? up[i - bpp] : 0;
      const predictor = [0, a, b, (a + b) >> 1, paeth(a, b, c)][f];
      raw[y * (rowBytes + 1) + 1 + i] = (row[i] - predictor) & 0xff;
    }
  }
  const ihdr = new Uint8Array(13), v = new DataView(ihdr.buffer);
  v.setUint32(0, width);
  v.setUint32(4, height);
  ihdr.set([depth, colourType, 0, 0, 0], 8);
  const parts = [Uint8Array.of(137, 80, 78, 71, 13, 10, 26, 10), chunk('IHDR', ihdr), chunk('IDAT', Uint8Array.from([...deflateSync(raw), ...after])), chunk('IEND', new Uint8Array(0))];
  return Uint8Array.from(parts.flatMap((p) => [...p]));
}

/** A deterministic byte stream (a linear congruential generator: Numerical Recipes' constants). */
function bytesOf(n: number, seed: number): Uint8Array {
  const out = new Uint8Array(n);
  let s = seed >>> 0;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    out[i] = s >>> 24;
  }
  return out;
}

const sameBits = (a: Float32Array, b: Float32Array) => Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));

const decodeWith = (codecs: typeof NODE_CODECS | null, png: Uint8Array, grey: boolean) => {
  usePlatformCodecs(codecs);
  try {
    return decodePng(png, 'made.png', undefined, grey);
  } finally {
    usePlatformCodecs(null);
  }
};

// Colour types of ISO 15948 Table 11.1 with 8 and 16 bits: grey, RGB, grey + alpha, RGBA.
const KINDS = [[0, 1], [2, 3], [4, 2], [6, 4]] as const;
// Widths below, at and past the 16-byte loops; the tallest image spans several of the kernel's bands (256 KiB).
const SIZES = [[1, 5], [15, 7], [17, 9], [33, 40], [1031, 70]] as const;

interface Case { label: string; png: Uint8Array; colour: boolean; want: Float32Array[] }

const CASES: Case[] = [8, 16].flatMap((depth) => KINDS.flatMap(([colourType, perPixel]) => SIZES.map(([width, height]): Case => {
  const rowBytes = (width * perPixel * depth) / 8;
  const bytes = bytesOf(rowBytes * height, width * 31 + colourType + depth);
  // Every filter type on rows in turn, then runs of one type (the first row's "above" is zeros).
  const filters = Array.from({ length: height }, (_, y) => (y < 10 ? y % 5 : Math.floor(y / 12) % 5));
  const colour = colourType === 2 || colourType === 6, maxCode = 2 ** depth - 1;
  const sample = (p: number, c: number) => depth === 8 ? bytes[p * perPixel + c] : (bytes[2 * (p * perPixel + c)] << 8) | bytes[2 * (p * perPixel + c) + 1];
  return {
    label: `${depth}-bit colour type ${colourType}, ${width} x ${height}`, colour,
    png: pngOf(width, height, depth as 8 | 16, colourType, perPixel, bytes, filters),
    want: Array.from({ length: colour ? 3 : 1 }, (_, c) => Float32Array.from({ length: width * height }, (_, p) => sample(p, c) / maxCode)),
  };
})));

/** Each case decoded through both inflaters, as colour planes and as luma (colour images). */
const decodeAll = (c: Case) => [NODE_CODECS, null].flatMap((codecs) => [false, ...(c.colour ? [true] : [])].map((grey) => decodeWith(codecs, c.png, grey).planes));

describe('PNG rows unfiltered and converted in the tensor kernel', () => {
  // The TypeScript path first (this thread has not loaded the kernel yet), kept to compare the kernel's with.
  let plain: Float32Array[][][] = [];
  it(`without the kernel: every filter type, 8 and 16 bits, grey / RGB / grey + alpha / RGBA, to the samples written (${CASES.length} files)`, () => {
    expect(loadedTensorKernel()).toBeNull();
    plain = CASES.map(decodeAll);
    CASES.forEach((c, i) => c.want.forEach((want, p) => expect(sameBits(plain[i][0][p], want), `${c.label}, plane ${p}`).toBe(true)));
  });

  it('with the kernel: the same bits, planes and luma, through node:zlib and fflate', async () => {
    await loadTensorKernel();
    CASES.forEach((c, i) => {
      const withKernel = decodeAll(c);
      withKernel.forEach((planes, r) => planes.forEach((p, q) => expect(sameBits(p, plain[i][r][q]), `${c.label}, reading ${r}, plane ${q}`).toBe(true)));
      c.want.forEach((want, p) => expect(sameBits(withKernel[0][p], want), `${c.label}, plane ${p}`).toBe(true));
      // Asked for grey: Rec. 709 luma, bit for bit what toGrey makes of the colour planes.
      if (c.colour) expect(sameBits(withKernel[1][0], toGrey(decodeWith(NODE_CODECS, c.png, false)).data), `${c.label}: luma`).toBe(true);
    });
  });

  it('refuses a row whose filter type the standard does not define, naming the row, as the TypeScript path does', () => {
    const width = 300, height = 400;
    // Row 300 (past the first band) names filter type 5.
    const made = pngOf(width, height, 8, 0, 1, bytesOf(width * height, 5), Array.from({ length: height }, (_, y) => (y === 299 ? 5 : 1)));
    const messages = [NODE_CODECS, null].map((codecs) => {
      try {
        decodeWith(codecs, made, false);
        return 'read';
      } catch (e) {
        expect(isInputError(e)).toBe(true);
        return (e as Error).message;
      }
    });
    expect(messages[0]).toMatch(/row 300 names filter type 5/);
    expect(messages[1]).toBe(messages[0]);
  });

  it('the app\'s reader (Compression Streams first) refuses image data that goes on after its zlib stream, as decodeImage does', async () => {
    const width = 64, height = 16, bytes = bytesOf(width * height, 9), filters = Array.from({ length: height }, () => 1);
    const good = pngOf(width, height, 8, 0, 1, bytes, filters), bad = pngOf(width, height, 8, 0, 1, bytes, filters, Uint8Array.of(1, 2, 3));
    expect(sameBits((await decodeImageAsync(good, 'good.png')).planes[0], decodePng(good, 'good.png').planes[0])).toBe(true);
    const why = (run: () => unknown) => { try { run(); return 'read'; } catch (e) { return (e as Error).message; } };
    const sync = why(() => decodeImage(bad, 'bad.png'));
    expect(sync).toMatch(/after the end|image data/);
    await expect(decodeImageAsync(bad, 'bad.png')).rejects.toThrow(sync);
  });
});
