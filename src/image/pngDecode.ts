import { takeFloat32 } from '../common/index.ts';
import { checkDecodeBytes, checkDecodedSize, corrupt, sizeWords } from './checks.ts';
import { inflateByStreams, inflateZlib, platformCodecs, ZlibProblem, type ZlibSource } from './inflate.ts';
import { pngPixelSizeUm } from './pixelSize.ts';
import { unitTable } from './samples.ts';
import { makeImage, MAX_DECODE_BYTES, type Image } from './types.ts';
import { KernelArena, loadedTensorKernel, type KernelExports } from '../wasm/index.ts';

/**
 * PNG decoding (ISO/IEC 15948:2004, "PNG (Second Edition)"), written here: the decoder library used
 * before inflated ancillary chunks (iCCP, zTXt, iTXt) without bound and did not check the zlib
 * checksum. This one reads only the chunks the analysis uses (IHDR,
 * PLTE, IDAT, IEND and pHYs), checks every one of their CRCs, skips every other ancillary chunk
 * unread, inflates the image data row by row with a cap of exactly the size IHDR implies, checks the
 * Adler-32 and writes samples straight into the float planes, so memory is the planes plus a few rows.
 * With the platform's inflater (node:zlib in the command line, usePlatformCodecs), when the filtered image
 * fits beside the planes in the memory limit, it is inflated at once (same cap and checks) and unfiltered
 * where it lies: the planes plus the filtered bytes, at most as large again. Rows of 8 or 16 bits per sample
 * (no palette, not interlaced) are unfiltered and converted by the WebAssembly kernel, as they are inflated, when
 * this thread has loaded it (KernelRows: the same bits, four to ten times quicker).
 */

const FORMAT = 'PNG';
const SIGNATURE_BYTES = 8;

/** IHDR colour types (ISO 15948 Table 11.1): samples per pixel and the bit depths each allows. */
const COLOUR_TYPES: Record<number, { name: string; samples: number; depths: number[] }> = {
  0: { name: 'grey', samples: 1, depths: [1, 2, 4, 8, 16] },
  2: { name: 'RGB', samples: 3, depths: [8, 16] },
  3: { name: 'palette', samples: 1, depths: [1, 2, 4, 8] },
  4: { name: 'grey + alpha', samples: 2, depths: [8, 16] },
  6: { name: 'RGBA', samples: 4, depths: [8, 16] },
};

/** Adam7 passes (ISO 15948 section 8.2): x start, y start, x step, y step. */
const ADAM7: [number, number, number, number][] = [
  [0, 0, 8, 8], [4, 0, 8, 8], [0, 4, 4, 8], [2, 0, 4, 4], [0, 2, 2, 4], [1, 0, 2, 2], [0, 1, 1, 2],
];

export interface PngHeader {
  width: number;
  height: number;
  bitDepth: number;
  colourType: number;
  interlaced: boolean;
}

/** CRC-32 table of ISO 15948 Annex D (polynomial 0xEDB88320, reflected). */
const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/** CRC-32 of bytes[start, end) (ISO 15948 Annex D): the platform's (usePlatformCodecs) when set. */
export function crc32(bytes: Uint8Array, start: number, end: number): number {
  const codecs = platformCodecs();
  if (codecs) return codecs.crc32(bytes.subarray(start, end));
  let c = 0xffffffff;
  for (let i = start; i < end; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** Where the data of the chunks used lie: IDAT as a compact list of ranges (a file may hold millions). */
interface PngChunks {
  /** Data start and length of each IDAT chunk, in pairs. */
  idat: Float64Array;
  idatCount: number;
  plte?: { at: number; length: number };
  phys?: { at: number; length: number };
}

const u32 = (b: Uint8Array, at: number) => ((b[at] << 24) | (b[at + 1] << 16) | (b[at + 2] << 8) | b[at + 3]) >>> 0;
const isCritical = (type: string) => type.charCodeAt(0) >= 65 && type.charCodeAt(0) <= 90;
/** Chunks whose content is used; all others are skipped unread (their CRC too). */
const USED = new Set(['IHDR', 'PLTE', 'IDAT', 'IEND', 'pHYs']);

/**
 * Walks the chunks from the signature to IEND: lengths inside the file, CRCs of the chunks used,
 * the order ISO 15948 section 5.6 requires (IHDR first and once, PLTE once and before IDAT, IDATs
 * consecutive, IEND last) and no unknown critical chunk. Empty IDAT chunks are passed over.
 */
function readChunks(bytes: Uint8Array, what: string): PngChunks {
  const found: PngChunks = { idat: new Float64Array(64), idatCount: 0 };
  let pos = SIGNATURE_BYTES;
  let previous = '';
  let idatSeen = false;
  let idatEnded = false;
  for (;;) {
    if (pos + 12 > bytes.length) {
      throw corrupt(what, FORMAT, 'the file ends before the IEND chunk, so it was cut short');
    }
    const length = u32(bytes, pos);
    const type = String.fromCharCode(bytes[pos + 4], bytes[pos + 5], bytes[pos + 6], bytes[pos + 7]);
    if (!/^[A-Za-z]{4}$/.test(type)) {
      throw corrupt(what, FORMAT, `the chunk structure is broken at byte ${pos}`);
    }
    const at = pos + 8;
    if (length > 0x7fffffff || at + length + 4 > bytes.length) {
      throw corrupt(what, FORMAT, `the ${type} chunk at byte ${pos} runs past the end of the file, so it was cut short`);
    }
    if (pos === SIGNATURE_BYTES && type !== 'IHDR') throw corrupt(what, FORMAT, `the first chunk is ${type}, not IHDR`);
    if (USED.has(type) && crc32(bytes, pos + 4, at + length) !== u32(bytes, at + length)) {
      throw corrupt(what, FORMAT, `the checksum (CRC) of its ${type} chunk does not match`);
    }
    if (!USED.has(type) && isCritical(type)) {
      throw corrupt(what, FORMAT, `it holds a critical chunk "${type}" that the PNG standard does not define`);
    }
    if (type === 'IDAT') {
      if (idatSeen && previous !== 'IDAT') idatEnded = true;
      if (idatEnded) throw corrupt(what, FORMAT, 'its image data (IDAT) chunks are not consecutive');
      idatSeen = true;
      if (length > 0) {
        if (2 * found.idatCount + 2 > found.idat.length) {
          const grown = new Float64Array(found.idat.length * 2);
          grown.set(found.idat);
          found.idat = grown;
        }
        found.idat[2 * found.idatCount] = at;
        found.idat[2 * found.idatCount + 1] = length;
        found.idatCount++;
      }
    }
    if ((type === 'IHDR' && pos !== SIGNATURE_BYTES) || (type === 'PLTE' && (found.plte || idatSeen))) {
      throw corrupt(what, FORMAT, `a ${type} chunk is out of place`);
    }
    if (type === 'PLTE') found.plte = { at, length };
    if (type === 'pHYs' && !found.phys) found.phys = { at, length };
    previous = type;
    pos = at + length + 4;
    if (type === 'IEND') return found;
  }
}

/** Bytes in all IDAT chunks together. */
function idatBytes(chunks: PngChunks): number {
  let n = 0;
  for (let k = 0; k < chunks.idatCount; k++) n += chunks.idat[2 * k + 1];
  return n;
}

/**
 * Reads IHDR (ISO 15948 section 11.2.2) and refuses impossible sizes and combinations the standard
 * does not define.
 */
export function readPngHeader(bytes: Uint8Array, what: string): PngHeader {
  if (bytes.length < 33) throw corrupt(what, FORMAT, `the file ends inside the PNG header (${bytes.length} bytes)`);
  if (u32(bytes, 8) !== 13 || String.fromCharCode(...bytes.subarray(12, 16)) !== 'IHDR') {
    throw corrupt(what, FORMAT, 'it does not start with an IHDR chunk of 13 bytes');
  }
  const header: PngHeader = {
    width: u32(bytes, 16), height: u32(bytes, 20), bitDepth: bytes[24], colourType: bytes[25], interlaced: bytes[28] === 1,
  };
  const kind = COLOUR_TYPES[header.colourType];
  if (!kind || !kind.depths.includes(header.bitDepth)) {
    throw corrupt(what, FORMAT, `the header names colour type ${header.colourType} with bit depth ${header.bitDepth}, ` +
      'a combination the PNG standard does not define');
  }
  if (bytes[26] !== 0 || bytes[27] !== 0 || bytes[28] > 1) {
    throw corrupt(what, FORMAT, 'the header names a compression, filter or interlace method the PNG standard does not define');
  }
  checkDecodedSize(what, FORMAT, header.width, header.height);
  return header;
}

/** Bytes of one filtered row of `width` pixels, without the filter-type byte (ISO 15948 section 7.2). */
const rowBytes = (width: number, bitsPerPixel: number) => Math.ceil((width * bitsPerPixel) / 8);

/** The Paeth predictor (ISO 15948 section 9.4). */
function paeth(a: number, b: number, c: number): number {
  const p = a + b - c;
  const pa = Math.abs(p - a);
  const pb = Math.abs(p - b);
  const pc = Math.abs(p - c);
  return pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
}

/**
 * Reverses one row's filter in place (ISO 15948 section 9.2). `bpp` is the filter's byte step
 * (bytes per complete pixel, at least 1); `prev` is the unfiltered row above (zeros for a pass's first row).
 */
function unfilter(type: number, row: Uint8Array, prev: Uint8Array, bpp: number): boolean {
  const n = row.length;
  switch (type) {
    case 0: return true;
    case 1: for (let i = bpp; i < n; i++) row[i] = (row[i] + row[i - bpp]) & 0xff; return true;
    case 2: for (let i = 0; i < n; i++) row[i] = (row[i] + prev[i]) & 0xff; return true;
    case 3:
      for (let i = 0; i < n; i++) row[i] = (row[i] + (((i >= bpp ? row[i - bpp] : 0) + prev[i]) >> 1)) & 0xff;
      return true;
    case 4:
      for (let i = 0; i < n; i++) {
        row[i] = (row[i] + (i >= bpp ? paeth(row[i - bpp], prev[i], prev[i - bpp]) : prev[i])) & 0xff;
      }
      return true;
    default: return false;
  }
}

/**
 * What a header implies: whether the image is in colour, the planes it is decoded into (a colour image asked for
 * grey is one plane of luma, toGrey's weights, the same bits) and their bytes, the non-empty passes in stream order
 * (first column and row, steps, size, row bytes) and the filtered bytes they hold.
 */
function pngLayout(header: PngHeader, grey: boolean) {
  const { width, height, bitDepth, colourType } = header;
  const samples = COLOUR_TYPES[colourType].samples;
  const colour = colourType === 3 || samples >= 3;
  const channels: 1 | 3 = colour && !grey ? 3 : 1;
  const bitsPerPixel = samples * bitDepth;
  const passes = header.interlaced ? ADAM7 : [[0, 0, 1, 1] as [number, number, number, number]];
  const plan = passes.map(([x0, y0, dx, dy]) => {
    const w = Math.ceil((width - x0) / dx);
    const h = Math.ceil((height - y0) / dy);
    return { x0, y0, dx, dy, w, h, bytes: w > 0 && h > 0 ? rowBytes(w, bitsPerPixel) : 0 };
  }).filter((p) => p.w > 0 && p.h > 0);
  return {
    colour, channels, planeBytes: width * height * channels * 4, plan,
    expectedBytes: plan.reduce((n, p) => n + p.h * (p.bytes + 1), 0),
  };
}

/** The refusal of a row whose filter type ISO 15948 section 9.2 does not define (`row` 0-based). */
const badFilter = (name: string, row: number, type: number) =>
  corrupt(name, FORMAT, `row ${row + 1} names filter type ${type}, which the PNG standard does not define`);

/** The image data (IDAT chunks) as one zlib stream in pieces. */
function idatSource(bytes: Uint8Array, chunks: PngChunks, name: string): ZlibSource {
  if (chunks.idatCount === 0) throw corrupt(name, FORMAT, 'it has no image data (IDAT chunk)');
  return {
    total: idatBytes(chunks),
    *pieces() {
      for (let k = 0; k < chunks.idatCount; k++) {
        const at = chunks.idat[2 * k];
        yield bytes.subarray(at, at + chunks.idat[2 * k + 1]);
      }
    },
  };
}

/**
 * A PNG's image data inflated by the platform's Compression Streams (inflateByStreams), for decodePng, where
 * they exist and the file's chunks and sizes pass decodePng's checks; else null (decodePng then inflates it
 * and refuses whatever is wrong, in its own words).
 */
export async function inflatePng(bytes: Uint8Array, name: string, maxBytes?: number, grey = false): Promise<Uint8Array | null> {
  try {
    const { planeBytes, expectedBytes } = pngLayout(readPngHeader(bytes, name), grey);
    if (planeBytes + expectedBytes > (maxBytes ?? MAX_DECODE_BYTES)) return null;
    return await inflateByStreams(idatSource(bytes, readChunks(bytes, name), name), expectedBytes);
  } catch {
    return null;
  }
}

/**
 * Decodes a PNG: grey (1/2/4/8/16 bits), grey + alpha, RGB, RGBA (8/16 bits) and palette (1/2/4/8-bit
 * indices; tRNS is read past), interlaced or not. Alpha is dropped; a sample of bit depth d becomes
 * code / (2^d - 1) in [0, 1]; encoding 'srgb' up to 8 bits and 'linear' for 16 (scientific cameras
 * store 16-bit data linearly: common practice, no source); pixel size from pHYs.
 *
 * @param maxBytes memory the decode may take (default MAX_DECODE_BYTES): the planes, 4 bytes per
 *   pixel and channel, must fit
 * @param grey give a colour image as one plane of Rec. 709 luma, bit for bit what toGrey makes of its planes
 *   (for analyses that read grey only: a third of the memory and no second pass)
 * @param inflated the image data already inflated (inflatePng), used when it has the length the header implies
 * @throws InputError for a damaged or cut-short file (bad CRC or Adler-32, broken chunks, wrong
 *   amount of image data, a palette index outside PLTE) and for sizes over the limit
 */
export function decodePng(bytes: Uint8Array, name: string, maxBytes?: number, grey = false, inflated?: Uint8Array | null): Image {
  const header = readPngHeader(bytes, name);
  const { width, height, bitDepth, colourType } = header;
  const kind = COLOUR_TYPES[colourType];
  const { colour, channels, planeBytes, plan, expectedBytes } = pngLayout(header, grey);
  checkDecodeBytes(name, FORMAT, sizeWords(width, height), planeBytes, maxBytes);
  const chunks = readChunks(bytes, name);

  let palette: Uint8Array | undefined;
  if (colourType === 3) {
    const plte = chunks.plte;
    if (!plte || plte.length % 3 !== 0 || plte.length === 0 || plte.length / 3 > 2 ** bitDepth) {
      throw corrupt(name, FORMAT, 'its palette (PLTE chunk) is missing or has the wrong size');
    }
    palette = bytes.subarray(plte.at, plte.at + plte.length);
  }
  const idat = idatSource(bytes, chunks, name);

  // Every sample is written before the image is returned (all rows, or all seven Adam7 passes; a file that
  // stops short is refused), so a reused array need not be cleared first.
  const planes = Array.from({ length: channels }, () => takeFloat32(width * height, false));
  const bpp = Math.max(1, (kind.samples * bitDepth) >> 3);
  const writeRow = rowWriter(planes, width, bitDepth, kind.samples, palette, name, colour && grey);

  const maxRow = Math.max(...plan.map((p) => p.bytes));
  let cur = new Uint8Array(maxRow);
  let prev = new Uint8Array(maxRow);
  let passIndex = 0;
  let rowInPass = 0;
  let filled = -1; // -1: waiting for the filter-type byte
  let filter = 0;
  const take = (chunk: Uint8Array) => {
    let i = 0;
    while (i < chunk.length) {
      const pass = plan[passIndex];
      if (!pass) return; // more data than rows: the byte count check below refuses it
      if (filled < 0) {
        filter = chunk[i++];
        filled = 0;
        continue;
      }
      const n = Math.min(pass.bytes - filled, chunk.length - i);
      cur.set(chunk.subarray(i, i + n), filled);
      filled += n;
      i += n;
      if (filled === pass.bytes) {
        if (rowInPass === 0) prev.fill(0);
        const line = cur.subarray(0, pass.bytes);
        const y = pass.y0 + rowInPass * pass.dy;
        if (!unfilter(filter, line, prev.subarray(0, pass.bytes), bpp)) {
          throw badFilter(name, y, filter);
        }
        writeRow(line, y, pass.x0, pass.dx, pass.w);
        [cur, prev] = [prev, cur];
        filled = -1;
        if (++rowInPass === pass.h) {
          passIndex++;
          rowInPass = 0;
        }
      }
    }
  };
  // With the platform's inflater, when the whole filtered image fits beside the planes: inflated at
  // once and unfiltered where it lies, each row's previous row being the one before it.
  const takeAll = (raw: Uint8Array) => {
    if (raw.length !== expectedBytes) return; // refused below
    const zeros = new Uint8Array(maxRow);
    let at = 0;
    for (const pass of plan) {
      let above: Uint8Array = zeros.subarray(0, pass.bytes);
      for (let r = 0; r < pass.h; r++, at += pass.bytes + 1) {
        const line = raw.subarray(at + 1, at + 1 + pass.bytes);
        const y = pass.y0 + r * pass.dy;
        if (!unfilter(raw[at], line, above, bpp)) {
          throw badFilter(name, y, raw[at]);
        }
        writeRow(line, y, pass.x0, pass.dx, pass.w);
        above = line;
      }
    }
  };
  const whole = planeBytes + expectedBytes <= (maxBytes ?? MAX_DECODE_BYTES);
  // Rows of 8 or 16 bits without a palette, not interlaced: unfiltered and converted by the kernel when loaded here.
  const k = loadedTensorKernel();
  const byKernel = k && !header.interlaced && bitDepth >= 8 && !palette
    ? new KernelRows(k, planes, width, height, plan[0].bytes, bitDepth, kind.samples, !colour ? 0 : grey ? 1 : 2, name) : null;
  let produced: number;
  try {
    // Data inflated already, or inflated at once by the platform, come in one piece: unfiltered where they lie.
    const given = inflated && whole && inflated.length === expectedBytes ? inflated : null;
    const onData = byKernel ? (piece: Uint8Array) => byKernel.push(piece) : given || (whole && platformCodecs()) ? takeAll : take;
    if (given) {
      onData(given);
      produced = given.length;
    } else produced = inflateZlib(idat, expectedBytes, onData, whole);
  } catch (e) {
    if (e instanceof ZlibProblem) throw corrupt(name, FORMAT, `in its image data ${e.why}`);
    throw e;
  }
  if (produced !== expectedBytes) {
    throw corrupt(name, FORMAT, `its image data holds ${produced} bytes where the header implies ${expectedBytes}`);
  }

  const sixteen = bitDepth === 16;
  const phys = chunks.phys?.length === 9 ? chunks.phys : undefined;
  const pixelSizeUmPerPx = phys
    ? pngPixelSizeUm(u32(bytes, phys.at), u32(bytes, phys.at + 4), bytes[phys.at + 8]) : undefined;
  return makeImage({
    width,
    height,
    channels,
    planes,
    bitDepth: sixteen ? 16 : 8,
    encoding: sixteen ? 'linear' : 'srgb',
    ...(pixelSizeUmPerPx !== undefined ? { pixelSizeUmPerPx } : {}),
    source: { name },
  });
}

/** Bytes of filtered rows KernelRows passes through the kernel's memory at a time. */
const KERNEL_BAND_BYTES = 1 << 18;

/**
 * The rows of a non-interlaced PNG of 8 or 16 bits per sample without a palette, unfiltered and written into the
 * planes by the tensor kernel's pngRows (the same bits as unfilter and rowWriter, tests/image/png-kernel.test.ts):
 * the filtered stream (each row's filter-type byte, then `rowBytes` bytes) is pushed in pieces of any size as it is
 * inflated, gathered in the kernel's memory and turned into samples a band of rows at a time. `kind` 0 grey,
 * 1 luma, 2 colour (three planes). Bytes past the last row are ignored (the caller checks the byte count).
 */
class KernelRows {
  private readonly band: number;
  private readonly at: { table: number; above: number; raw: number };
  private readonly outs: number[];
  /** Rows done, and bytes of the band being gathered. */
  private y = 0;
  private filled = 0;

  constructor(private readonly k: KernelExports, private readonly planes: Float32Array[], private readonly width: number, private readonly height: number,
    private readonly rowBytes: number, private readonly bitDepth: number, private readonly samples: number, private readonly kind: 0 | 1 | 2,
    private readonly what: string) {
    const table = unitTable(2 ** bitDepth - 1);
    this.band = Math.max(1, Math.min(height, Math.floor(KERNEL_BAND_BYTES / (rowBytes + 1))));
    const mem = new KernelArena(k);
    this.at = { table: mem.reserve(table.length), above: mem.reserve(rowBytes / 4), raw: mem.reserve((this.band * (rowBytes + 1)) / 4) };
    this.outs = planes.map(() => mem.reserve(this.band * width));
    mem.commit();
    mem.view(this.at.table, table.length).set(table);
    new Uint8Array(k.memory.buffer).fill(0, this.at.above, this.at.above + rowBytes);
  }

  /** Takes the next piece of the filtered stream. */
  push(piece: Uint8Array): void {
    const line = this.rowBytes + 1;
    for (let i = 0; i < piece.length && this.y < this.height;) {
      const room = Math.min(this.band, this.height - this.y) * line - this.filled;
      const n = Math.min(room, piece.length - i);
      new Uint8Array(this.k.memory.buffer, this.at.raw + this.filled, n).set(piece.subarray(i, i + n));
      this.filled += n;
      i += n;
      if (n === room) this.flush();
    }
  }

  /** Unfilters and writes the gathered rows (whole rows only: a cut-short stream is refused by its byte count). */
  private flush(): void {
    const { k, at, rowBytes, width } = this, line = rowBytes + 1, rows = Math.floor(this.filled / line);
    if (rows === 0) return;
    const [o0, o1 = 0, o2 = 0] = this.outs;
    const bad = k.pngRows(at.raw, at.above, rows, rowBytes, this.bitDepth === 16 ? 1 : 0, this.samples, this.kind, at.table, width, o0, o1, o2);
    const bytes = new Uint8Array(k.memory.buffer);
    if (bad >= 0) throw badFilter(this.what, this.y + bad, bytes[at.raw + bad * line]);
    this.planes.forEach((p, c) => p.set(new Float32Array(k.memory.buffer, this.outs[c], rows * width), this.y * width));
    const last = at.raw + (rows - 1) * line + 1;
    bytes.copyWithin(at.above, last, last + rowBytes);
    this.y += rows;
    this.filled = 0;
  }
}

/**
 * A function writing one unfiltered row of a pass (w pixels, the first at image column x0, every dx-th
 * column after) into the planes.
 */
function rowWriter(planes: Float32Array[], width: number, bitDepth: number, samples: number,
  palette: Uint8Array | undefined, what: string, luma: boolean) {
  const maxCode = 2 ** bitDepth - 1;
  const scale = unitTable(maxCode);
  const byte = unitTable(255);
  const colours = palette ? palette.length / 3 : 0;
  const keep = Math.min(samples, 3) === 2 ? 1 : Math.min(samples, 3); // grey + alpha keeps grey
  return (row: Uint8Array, y: number, x0: number, dx: number, w: number) => {
    let p = y * width + x0;
    if (bitDepth < 8) {
      const perByte = 8 / bitDepth;
      const mask = maxCode;
      for (let i = 0; i < w; i++, p += dx) {
        const shift = 8 - bitDepth * ((i % perByte) + 1);
        const v = (row[(i / perByte) | 0] >> shift) & mask;
        if (palette) writePalette(v, p);
        else planes[0][p] = scale[v];
      }
      return;
    }
    if (bitDepth === 8) {
      if (palette) {
        for (let i = 0; i < w; i++, p += dx) writePalette(row[i], p);
        return;
      }
      // One loop per channel count, so each is a plain copy through the table.
      if (keep === 1) {
        const g = planes[0];
        for (let i = 0, j = 0; i < w; i++, p += dx, j += samples) g[p] = byte[row[j]];
        return;
      }
      if (luma) {
        const l = planes[0];
        for (let i = 0, j = 0; i < w; i++, p += dx, j += samples) l[p] = lumaOf(byte[row[j]], byte[row[j + 1]], byte[row[j + 2]]);
        return;
      }
      const [r, g, b] = planes;
      for (let i = 0, j = 0; i < w; i++, p += dx, j += samples) {
        r[p] = byte[row[j]];
        g[p] = byte[row[j + 1]];
        b[p] = byte[row[j + 2]];
      }
      return;
    }
    if (luma) {
      const l = planes[0];
      const at = (j: number) => scale[(row[j] << 8) | row[j + 1]];
      for (let i = 0, j = 0; i < w; i++, p += dx, j += 2 * samples) l[p] = lumaOf(at(j), at(j + 2), at(j + 4));
      return;
    }
    for (let i = 0, j = 0; i < w; i++, p += dx, j += 2 * samples) {
      for (let c = 0; c < keep; c++) planes[c][p] = scale[(row[j + 2 * c] << 8) | row[j + 2 * c + 1]];
    }
  };

  function writePalette(index: number, p: number): void {
    if (index >= colours) {
      throw corrupt(what, FORMAT, `a pixel uses colour ${index} of a ${colours}-colour palette`);
    }
    const pal = palette as Uint8Array;
    if (luma) {
      planes[0][p] = lumaOf(byte[pal[3 * index]], byte[pal[3 * index + 1]], byte[pal[3 * index + 2]]);
      return;
    }
    planes[0][p] = byte[pal[3 * index]];
    planes[1][p] = byte[pal[3 * index + 1]];
    planes[2][p] = byte[pal[3 * index + 2]];
  }
}

/** Rec. 709 luma of stored values, exactly as toGrey (src/image/types.ts) computes it from the planes. */
const lumaOf = (r: number, g: number, b: number) => 0.2126 * r + 0.7152 * g + 0.0722 * b;
