import { inflateZlib, oneZlibPiece, platformCodecs, ZlibProblem } from './inflate.ts';
import { COMPRESSION } from './tiffHeader.ts';

/**
 * The TIFF block codecs and predictors, strict: a block must decode to exactly the bytes its place in
 * the image needs (a last strip may hold a whole strip's worth), anything else is damage. LZW and
 * PackBits carry no checksum, so the exact length and the validity of every code are what catch
 * damaged data; Deflate also has its Adler-32.
 */

/** Why a block could not be decoded, in plain words. */
export class BlockProblem extends Error {
  constructor(readonly why: string) {
    super(why);
    this.name = 'BlockProblem';
  }
}

/**
 * Decompresses one strip or tile.
 * @param src the block's bytes as stored
 * @param expected bytes the block must give
 * @param alsoAllowed another length accepted (a whole strip's worth for the last strip), or `expected`
 * @returns at least `expected` bytes (a view of `src` when uncompressed)
 */
export function decodeBlock(src: Uint8Array, compression: number, expected: number, alsoAllowed: number): Uint8Array {
  const most = Math.max(expected, alsoAllowed);
  let out: Uint8Array;
  let produced: number;
  switch (compression) {
    case COMPRESSION.none:
      return src;
    case COMPRESSION.packBits:
      [out, produced] = unpackBits(src, most);
      break;
    case COMPRESSION.lzw:
      [out, produced] = decodeLzw(src, most);
      break;
    case COMPRESSION.deflate:
    case COMPRESSION.deflateOld: {
      try {
        if (platformCodecs()) {
          // The platform's inflater writes the block into one buffer of its own: that is the output.
          let got: Uint8Array = new Uint8Array(0);
          produced = inflateZlib(oneZlibPiece(src), most, (chunk) => { got = chunk; }, true);
          out = got;
          break;
        }
        const into = new Uint8Array(most);
        let at = 0;
        produced = inflateZlib(oneZlibPiece(src), most, (chunk) => {
          into.set(chunk, at);
          at += chunk.length;
        });
        out = into;
      } catch (e) {
        if (e instanceof ZlibProblem) throw new BlockProblem(e.why);
        throw e;
      }
      break;
    }
    default:
      throw new BlockProblem(`compression ${compression} is not one this program decodes`);
  }
  if (produced !== expected && produced !== alsoAllowed) {
    throw new BlockProblem(`it decodes to ${produced} bytes where ${expected} are needed`);
  }
  return out;
}

/** PackBits (TIFF 6.0 section 9): header byte n >= 0 copies n + 1 bytes, -127..-1 repeats the next byte 1 - n times, -128 is skipped. */
function unpackBits(src: Uint8Array, most: number): [Uint8Array, number] {
  const out = new Uint8Array(most);
  let o = 0;
  let i = 0;
  while (i < src.length) {
    const n = src[i++];
    if (n < 128) {
      const len = n + 1;
      if (i + len > src.length) throw new BlockProblem('its PackBits data ends inside a run of literal bytes');
      if (o + len > most) throw new BlockProblem('its PackBits data holds more bytes than the block');
      out.set(src.subarray(i, i + len), o);
      o += len;
      i += len;
    } else if (n > 128) {
      const len = 257 - n;
      if (i >= src.length) throw new BlockProblem('its PackBits data ends inside a repeat');
      if (o + len > most) throw new BlockProblem('its PackBits data holds more bytes than the block');
      out.fill(src[i++], o, o + len);
      o += len;
    }
  }
  return [out, o];
}

const LZW_CLEAR = 256;
const LZW_EOI = 257;
const LZW_FIRST = 258;
const LZW_TABLE = 4096;

/**
 * LZW as TIFF 6.0 section 13 defines it: codes of 9 to 12 bits, highest bit first, ClearCode 256,
 * EndOfInformation 257, the code width growing one code early (at 511, 1023, 2047, as libtiff writes).
 * A code beyond the next free entry, a full table not followed by ClearCode, or more output than the
 * block holds is damage. The old LZW variant (lowest bit first, from libtiff before 1991) is refused.
 */
function decodeLzw(src: Uint8Array, most: number): [Uint8Array, number] {
  if (src.length >= 2 && src[0] === 0 && (src[1] & 1) === 1) {
    throw new BlockProblem('it uses the old, non-standard LZW variant (re-save it with a current program)');
  }
  const prefix = new Int32Array(LZW_TABLE);
  const suffix = new Uint8Array(LZW_TABLE);
  const lengths = new Uint16Array(LZW_TABLE);
  for (let c = 0; c < 256; c++) {
    suffix[c] = c;
    lengths[c] = 1;
    prefix[c] = -1;
  }
  const out = new Uint8Array(most);
  let o = 0;
  let inPos = 0;
  let acc = 0;
  let accBits = 0;
  let width = 9;
  let next = LZW_FIRST;
  let old = -1;
  /** Writes the string of `code` at o; returns its first byte. */
  const emit = (code: number): number => {
    const len = lengths[code];
    if (o + len > most) throw new BlockProblem('its LZW data holds more bytes than the block');
    let c = code;
    for (let k = o + len - 1; k >= o; k--) {
      out[k] = suffix[c];
      c = prefix[c];
    }
    o += len;
    return out[o - len];
  };
  for (;;) {
    // The next `width` bits, highest first (at most 19 bits are ever held).
    while (accBits < width && inPos < src.length) {
      acc = ((acc << 8) | src[inPos++]) & 0xffffff;
      accBits += 8;
    }
    if (accBits < width) return [out, o]; // the data end without EndOfInformation, which libtiff accepts
    const code = (acc >>> (accBits - width)) & ((1 << width) - 1);
    accBits -= width;
    if (code === LZW_EOI) return [out, o];
    if (code === LZW_CLEAR) {
      width = 9;
      next = LZW_FIRST;
      old = -1;
      continue;
    }
    if (old < 0) {
      if (code > 255) throw new BlockProblem('its LZW data starts with an undefined code');
      emit(code);
      old = code;
      continue;
    }
    if (next >= LZW_TABLE) throw new BlockProblem('its LZW table overflows without a clear code');
    let firstByte: number;
    if (code < next) {
      firstByte = emit(code);
    } else if (code === next) {
      const start = o;
      emit(old);
      if (o + 1 > most) throw new BlockProblem('its LZW data holds more bytes than the block');
      out[o++] = out[start];
      firstByte = out[start];
    } else {
      throw new BlockProblem(`its LZW data holds code ${code} before it is defined`);
    }
    prefix[next] = old;
    suffix[next] = firstByte;
    lengths[next] = lengths[old] + 1;
    next++;
    if (next >= (1 << width) - 1 && width < 12) width++;
    old = code;
  }
}

/**
 * Undoes horizontal differencing (predictor 2, TIFF 6.0 section 14) on one row of integer samples in
 * place: each sample adds the one `stride` samples before it, modulo 2^bits.
 */
export function undoHorizontal(row: Float64Array, n: number, stride: number, bits: number): void {
  const modulus = 2 ** bits;
  for (let i = stride; i < n; i++) {
    const v = row[i] + row[i - stride];
    row[i] = v >= modulus ? v - modulus : v;
  }
}

/**
 * Undoes the floating-point predictor (predictor 3, Adobe's TIFF Technical Note 3, as libtiff's
 * fpAcc does it) on one row of `n` samples of `bytesPerSample` bytes in place: the bytes are summed
 * along the row `stride` apart, then each sample's bytes, stored as byte planes most significant
 * first, are gathered. The result is big-endian whatever the file's byte order.
 */
export function undoFloatPredictor(row: Uint8Array, n: number, bytesPerSample: number, stride: number, scratch: Uint8Array): void {
  const total = n * bytesPerSample;
  for (let i = stride; i < total; i++) row[i] = (row[i] + row[i - stride]) & 0xff;
  scratch.set(row.subarray(0, total));
  for (let s = 0; s < n; s++) {
    for (let b = 0; b < bytesPerSample; b++) row[s * bytesPerSample + b] = scratch[b * n + s];
  }
}
