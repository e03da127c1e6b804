import { Inflate } from 'fflate';
import { giveBack, takeUint8 } from '../common/index.ts';

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

/**
 * The platform's own zlib and CRC-32 (node:zlib in the command line: src/cli/platform.ts), used in place of
 * fflate and the table CRC when set: some three times quicker at inflating, and the CRC in native code.
 */
export interface PlatformCodecs {
  /**
   * Inflates one whole zlib stream (RFC 1950), checking its Adler-32, into at most `maxBytes` bytes.
   * Returns the output and the number of input bytes the stream took (less than the input when bytes
   * follow the stream's end).
   * @throws ZlibProblem in plain words for damaged or short data, a checksum that does not match, or
   *   output past maxBytes (stopping there, without making the rest)
   */
  inflate(stream: Uint8Array, maxBytes: number): { output: Uint8Array; consumed: number };
  /** CRC-32 of ISO 15948 Annex D (zlib's crc32) of the bytes. */
  crc32(bytes: Uint8Array): number;
}

let platform: PlatformCodecs | null = null;

/** Sets (or, with null, clears) the platform's codecs for every later decode in this thread. */
export function usePlatformCodecs(codecs: PlatformCodecs | null): void {
  platform = codecs;
}

/** The platform's codecs, when set. */
export const platformCodecs = (): PlatformCodecs | null => platform;

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
 * @param whole the caller can hold the whole output at once (up to maxBytes) besides what it keeps:
 *   the platform's inflater, when set, is then used, and `onData` gets the whole output in one piece
 * @returns the number of bytes produced
 * @throws ZlibProblem for a bad header, a preset dictionary, damaged or short data, too much
 *   output, a checksum that does not match, or (platform inflater) bytes after the stream's end
 */
export function inflateZlib(source: ZlibSource, maxBytes: number, onData: (chunk: Uint8Array) => void, whole = false): number {
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
  if (whole && platform) return inflateWhole(platform, source, maxBytes, onData);
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

/**
 * The stream's pieces as one array: a view of the one piece when there is only one, else a pooled copy
 * (`pooled`), to be handed back once inflated, so a batch of images touches no fresh pages here.
 */
function joined(source: ZlibSource): { bytes: Uint8Array; pooled: boolean } {
  const pieces = [...source.pieces()];
  if (pieces.length === 1) return { bytes: pieces[0], pooled: false };
  const all = takeUint8(source.total, false);
  let at = 0;
  for (const p of pieces) {
    all.set(p, at);
    at += p.length;
  }
  return { bytes: all, pooled: true };
}

/** inflateZlib through the platform's inflater: the whole stream at once (its header already checked). */
function inflateWhole(codecs: PlatformCodecs, source: ZlibSource, maxBytes: number, onData: (chunk: Uint8Array) => void): number {
  const stream = joined(source);
  const { output, consumed } = codecs.inflate(stream.bytes, maxBytes);
  if (stream.pooled) giveBack(stream.bytes);
  if (consumed !== source.total) {
    throw new ZlibProblem(`the compressed data goes on for ${source.total - consumed} bytes after the end of its zlib stream`);
  }
  onData(output);
  return output.length;
}

/**
 * A zlib stream inflated by the platform's Compression Streams (DecompressionStream 'deflate': the zlib format
 * of RFC 1950, whose Adler-32 it checks; data missing or left over after the stream's end are errors), where
 * the platform has them, about four times quicker than fflate in a browser. Gives the output when it is exactly
 * `bytes` long, else null: no Compression Streams here, damaged data, or another length, for the synchronous
 * inflater (inflateZlib) to read and, when it is damaged, to say how. Reading stops once the output passes `bytes`.
 */
export async function inflateByStreams(source: ZlibSource, bytes: number): Promise<Uint8Array | null> {
  if (typeof DecompressionStream !== 'function') return null;
  const out = new Uint8Array(bytes);
  let at = 0;
  try {
    const input = new ReadableStream<BufferSource>({
      start(c) {
        for (const p of source.pieces()) c.enqueue(p as Uint8Array<ArrayBuffer>);
        c.close();
      },
    });
    const reader = input.pipeThrough(new DecompressionStream('deflate')).getReader();
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      if (at + value.length > bytes) {
        await reader.cancel();
        return null;
      }
      out.set(value, at);
      at += value.length;
    }
  } catch {
    return null;
  }
  if (at !== bytes) return null;
  // Data after the stream's end: the stream's own Adler-32 (checked by the platform) is then not the source's
  // last four bytes. (Node.js's streams ignore such data, where inflateZlib refuses it.)
  const adler = new Adler32();
  adler.update(out);
  let stored = 0; // the source's last four bytes, big-endian
  for (const p of source.pieces()) for (let i = Math.max(0, p.length - 4); i < p.length; i++) stored = ((stored << 8) | p[i]) >>> 0;
  return source.total >= 6 && stored === adler.value() ? out : null;
}
