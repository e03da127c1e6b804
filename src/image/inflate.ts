import { Inflate } from 'fflate';

/**
 * zlib streams (RFC 1950: a 2-byte header, DEFLATE data (RFC 1951), an Adler-32 checksum of the
 * output) inflated with an output cap and the checksum checked, as PNG image data and TIFF Deflate
 * strips need. fflate does the DEFLATE part; it neither caps its output nor checks Adler-32, so this
 * module feeds it small pieces (one piece of 16 KiB can give at most about 16.5 MB, DEFLATE's
 * longest copy being 258 bytes per 1 bit pair) and stops as soon as the output passes the cap.
 */

/** Why a zlib stream was refused, in plain words (the caller adds the file and what to do). */
export class ZlibProblem extends Error {
  constructor(readonly why: string) {
    super(why);
    this.name = 'ZlibProblem';
  }
}

/** Bytes pushed to the inflater at a time: bounds the memory one push can produce (see above). */
const PIECE_BYTES = 16_384;

/** Largest prime below 2^16, the Adler-32 modulus (RFC 1950, section 8.2). */
const ADLER_BASE = 65_521;
/** Bytes that can be summed before the 32-bit sums must be reduced (RFC 1950 reference code's NMAX). */
const ADLER_NMAX = 5_552;

/** A running Adler-32 (RFC 1950, section 8.2): a = 1 + sum of bytes, b = sum of the a's, both mod 65521. */
export class Adler32 {
  private a = 1;
  private b = 0;

  update(bytes: Uint8Array): void {
    let { a, b } = this;
    for (let i = 0; i < bytes.length;) {
      const end = Math.min(bytes.length, i + ADLER_NMAX);
      for (; i < end; i++) {
        a += bytes[i];
        b += a;
      }
      a %= ADLER_BASE;
      b %= ADLER_BASE;
    }
    this.a = a;
    this.b = b;
  }

  /** The checksum as an unsigned 32-bit number: b * 65536 + a. */
  value(): number {
    return this.b * 65_536 + this.a;
  }
}

/** A zlib stream in consecutive pieces (PNG's IDAT chunks), handed out one at a time. */
export interface ZlibSource {
  /** Bytes in all pieces together. */
  total: number;
  pieces(): Iterable<Uint8Array>;
}

/** One piece as a ZlibSource. */
export const oneZlibPiece = (bytes: Uint8Array): ZlibSource => ({ total: bytes.length, pieces: () => [bytes] });

/** fflate's error codes (its FlateErrorCode) in plain words. */
const INFLATE_WHY: Record<number, string> = {
  0: 'the compressed data ends too soon',
  1: 'the compressed data has an invalid block type',
  2: 'the compressed data has an invalid code',
  3: 'the compressed data refers back to data that does not exist',
};

/**
 * Inflates one zlib stream given as consecutive pieces (PNG's IDAT chunks, or one TIFF strip),
 * handing the output to `onData` as it comes, and checks the header and the Adler-32 checksum.
 *
 * @param source the stream's bytes, in pieces (views; nothing is copied whole)
 * @param maxBytes the most output the caller can use: inflating stops with a ZlibProblem as soon as
 *   the output passes it (a decompression bomb, or data longer than the header says)
 * @param onData receives each piece of output, in order; it may throw to stop
 * @returns the number of bytes produced
 * @throws ZlibProblem for a bad header, a preset dictionary, damaged or short data, too much
 *   output, or a checksum that does not match
 */
export function inflateZlib(source: ZlibSource, maxBytes: number, onData: (chunk: Uint8Array) => void): number {
  const { total } = source;
  if (total < 6) throw new ZlibProblem('the compressed data is too short to be a zlib stream');
  const byteAt = (index: number): number => {
    let i = index;
    for (const p of source.pieces()) {
      if (i < p.length) return p[i];
      i -= p.length;
    }
    return 0;
  };
  const cmf = byteAt(0);
  const flg = byteAt(1);
  // RFC 1950 section 2.2: CM 8 = deflate, CINFO <= 7 (window up to 32 KiB), FCHECK makes CMF*256+FLG a multiple of 31.
  if ((cmf & 0x0f) !== 8 || cmf >> 4 > 7 || (cmf * 256 + flg) % 31 !== 0) {
    throw new ZlibProblem('the compressed data does not start with a valid zlib header');
  }
  if (flg & 0x20) throw new ZlibProblem('the compressed data asks for a preset dictionary, which image files never use');
  const stored = ((byteAt(total - 4) << 24) | (byteAt(total - 3) << 16) | (byteAt(total - 2) << 8) | byteAt(total - 1)) >>> 0;

  const adler = new Adler32();
  let produced = 0;
  const inflater = new Inflate((chunk) => {
    produced += chunk.length;
    if (produced > maxBytes) {
      throw new ZlibProblem(`the compressed data expands to more than the ${maxBytes} bytes the image needs`);
    }
    adler.update(chunk);
    onData(chunk);
  });
  // Push everything between the 2-byte header and the 4-byte checksum in pieces of PIECE_BYTES,
  // gathering small chunks (a file may hold millions of tiny IDATs); the last push is the final one.
  const start = 2;
  const end = total - 4;
  let offset = 0;
  let stage = new Uint8Array(PIECE_BYTES);
  let staged = 0;
  try {
    for (const p of source.pieces()) {
      const to = Math.min(end - offset, p.length);
      for (let i = Math.max(start - offset, 0); i < to;) {
        if (staged === PIECE_BYTES) {
          inflater.push(stage, false);
          stage = new Uint8Array(PIECE_BYTES);
          staged = 0;
        }
        const n = Math.min(PIECE_BYTES - staged, to - i);
        stage.set(p.subarray(i, i + n), staged);
        staged += n;
        i += n;
      }
      offset += p.length;
    }
    inflater.push(stage.subarray(0, staged), true);
  } catch (e) {
    if (e instanceof ZlibProblem) throw e;
    const code = (e as { code?: number }).code;
    if (code !== undefined && INFLATE_WHY[code]) throw new ZlibProblem(INFLATE_WHY[code]);
    throw e;
  }
  if (adler.value() !== stored) {
    throw new ZlibProblem('the checksum of the decompressed data (zlib Adler-32) does not match');
  }
  return produced;
}
