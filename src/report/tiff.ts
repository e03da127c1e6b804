import { checkNumber, InputError } from '../common/index.ts';

/**
 * Writer for multi-page 32-bit float TIFF, one quantity per page (README.md, "Files").
 *
 * Hand-written because no maintained JavaScript library we know of writes multi-page IEEE-float
 * TIFF (from memory: `tiff` of image-js only decodes, UTIF.js encodes 8-bit RGBA, geotiff.js writes
 * one image per file). Baseline TIFF 6.0 with uncompressed strips is small enough to write directly.
 *
 * Layout (little-endian, classic 32-bit offsets): 8-byte header, then per page the pixel strips
 * followed by its IFD and the IFD's out-of-line values; each IFD points to the next page's IFD.
 */
export interface FloatTiffPage {
  width: number;
  height: number;
  /**
   * Row-major, x right, y down; width * height values. Or a function giving `count` values from index `start`
   * on, called strip by strip as the page is written, so a page derived from others is never held whole.
   */
  data: Float32Array | ((start: number, count: number) => Float32Array);
  /** Stored in PageName (tag 285), e.g. "orientationDeg". 7-bit ASCII. */
  name?: string;
}

export interface FloatTiffOptions {
  /** Written as XResolution/YResolution in pixels per centimetre with ResolutionUnit 3. */
  pixelSizeUmPerPx?: number;
  /** ImageDescription (tag 270) of the first page. 7-bit ASCII. */
  description?: string;
}

/** TIFF 6.0 field types used here. */
const SHORT = 3;
const LONG = 4;
const ASCII = 2;
const RATIONAL = 5;

/** Strips of about this many bytes (TIFF 6.0 section 3 suggests small strips for readers' buffers). */
const STRIP_BYTES_TARGET = 64 * 1024;
const MAX_FILE_BYTES = 2 ** 32 - 1;

interface Field {
  tag: number;
  type: number;
  /** SHORT/LONG values, [numerator, denominator] pairs for RATIONAL, bytes for ASCII. */
  values: number[];
}

/**
 * Encodes pages as one little-endian baseline TIFF: 32-bit IEEE float samples (BitsPerSample 32,
 * SampleFormat 3), one sample per pixel, BlackIsZero, uncompressed strips. With a pixel size,
 * XResolution = YResolution = 1e4 / pixelSizeUmPerPx pixels per cm and ResolutionUnit = 3; without,
 * 1/1 with ResolutionUnit = 1 (no unit), as baseline readers expect the three tags.
 *
 * @throws InputError for no pages, sizes that do not match the data, non-ASCII text, or more than
 *   4 GiB (classic TIFF offsets are 32-bit)
 */
export function encodeFloatTiff(pages: FloatTiffPage[], opts: FloatTiffOptions = {}): Uint8Array {
  const chunks = [...floatTiffChunks(pages, opts)];
  const out = new Uint8Array(chunks.reduce((n, c) => n + c.length, 0));
  let at = 0;
  for (const c of chunks) { out.set(c, at); at += c.length; }
  return out;
}

/**
 * The bytes of encodeFloatTiff in file order, a strip or an IFD at a time, each page's data made (when it is
 * a function) only as its turn comes: what a file writer needs to hold at once is one page and one strip.
 */
export function* floatTiffChunks(pages: FloatTiffPage[], opts: FloatTiffOptions = {}): Generator<Uint8Array> {
  if (!Array.isArray(pages) || pages.length === 0) {
    throw new InputError('a float TIFF needs at least one page', 'Give one page per quantity');
  }
  pages.forEach(checkPage);
  const resolution = opts.pixelSizeUmPerPx === undefined
    ? [1, 1]
    : toRational(1e4 / checkNumber('pixelSizeUmPerPx', opts.pixelSizeUmPerPx, 1e-5, 1e6, 'um/px'));
  const resolutionUnit = opts.pixelSizeUmPerPx === undefined ? 1 : 3;
  const description = opts.description === undefined ? undefined : asciiBytes('description', opts.description);

  const layouts = pages.map((page, i) => {
    const rowsPerStrip = Math.max(1, Math.min(page.height, Math.floor(STRIP_BYTES_TARGET / (4 * page.width))));
    const stripCount = Math.ceil(page.height / rowsPerStrip);
    const byteCounts = Array.from({ length: stripCount }, (_, s) =>
      4 * page.width * Math.min(rowsPerStrip, page.height - s * rowsPerStrip));
    const fields: Field[] = [
      { tag: 254, type: LONG, values: [0] }, // NewSubfileType: full-resolution image
      { tag: 256, type: LONG, values: [page.width] },
      { tag: 257, type: LONG, values: [page.height] },
      { tag: 258, type: SHORT, values: [32] }, // BitsPerSample
      { tag: 259, type: SHORT, values: [1] }, // Compression: none
      { tag: 262, type: SHORT, values: [1] }, // PhotometricInterpretation: BlackIsZero
      ...(i === 0 && description ? [{ tag: 270, type: ASCII, values: description }] : []),
      { tag: 273, type: LONG, values: byteCounts.map(() => 0) }, // StripOffsets, filled in below
      { tag: 277, type: SHORT, values: [1] }, // SamplesPerPixel
      { tag: 278, type: LONG, values: [rowsPerStrip] },
      { tag: 279, type: LONG, values: byteCounts }, // StripByteCounts
      { tag: 282, type: RATIONAL, values: resolution }, // XResolution
      { tag: 283, type: RATIONAL, values: resolution }, // YResolution
      { tag: 284, type: SHORT, values: [1] }, // PlanarConfiguration: contiguous
      ...(page.name !== undefined ? [{ tag: 285, type: ASCII, values: asciiBytes('page name', page.name) }] : []),
      { tag: 296, type: SHORT, values: [resolutionUnit] },
      { tag: 305, type: ASCII, values: asciiBytes('software', 'Retarda') },
      { tag: 339, type: SHORT, values: [3] }, // SampleFormat: IEEE float
    ];
    const pixelBytes = 4 * page.width * page.height;
    const extraBytes = fields.reduce((sum, f) => sum + pad4(outOfLineBytes(f)), 0);
    const ifdBytes = 2 + 12 * fields.length + 4;
    return { page, fields, pixelBytes, ifdBytes, extraBytes, rowsPerStrip, byteCounts };
  });

  const total = 8 + layouts.reduce((sum, l) => sum + l.pixelBytes + l.ifdBytes + l.extraBytes, 0);
  if (total > MAX_FILE_BYTES) {
    throw new InputError(`the float TIFF would be ${(total / 2 ** 30).toFixed(1)} GiB, over the 4 GiB a classic TIFF can address`,
      'Export fewer quantities per file, or a cropped region');
  }
  // Every page's data start and IFD start, known before any byte is written.
  let pos = 8;
  const starts = layouts.map((l) => {
    const dataStart = pos, ifdStart = pos + l.pixelBytes;
    pos = ifdStart + l.ifdBytes + l.extraBytes;
    return { dataStart, ifdStart };
  });
  const header = new Uint8Array(8);
  const hv = new DataView(header.buffer);
  header.set([0x49, 0x49], 0); // "II": little-endian
  hv.setUint16(2, 42, true);
  hv.setUint32(4, starts[0].ifdStart, true);
  yield header;

  for (const [i, { page, fields, ifdBytes, extraBytes, rowsPerStrip, byteCounts }] of layouts.entries()) {
    const { dataStart, ifdStart } = starts[i];
    const { data } = page;
    for (let s = 0; s < byteCounts.length; s++) {
      const start = s * rowsPerStrip * page.width, count = byteCounts[s] / 4;
      const values = typeof data === 'function' ? data(start, count) : data.subarray(start, start + count);
      if (!(values instanceof Float32Array) || values.length !== count) {
        throw new InputError(`float TIFF page ${i + 1}: its data gave ${values?.length} values for a strip of ${count}`, 'Pass the plane the page was computed for');
      }
      const strip = new Uint8Array(byteCounts[s]);
      writeFloats(new DataView(strip.buffer), 0, values);
      yield strip;
    }
    const stripOffsets = fields.find((f) => f.tag === 273) as Field;
    stripOffsets.values = stripOffsets.values.map((_, s) => dataStart + 4 * page.width * rowsPerStrip * s);

    const block = new Uint8Array(ifdBytes + extraBytes);
    const view = new DataView(block.buffer);
    view.setUint16(0, fields.length, true);
    let extra = ifdBytes;
    fields.forEach((field, k) => {
      const entry = 2 + 12 * k;
      view.setUint16(entry, field.tag, true);
      view.setUint16(entry + 2, field.type, true);
      view.setUint32(entry + 4, valueCount(field), true);
      const bytes = outOfLineBytes(field);
      const at = bytes > 0 ? extra : entry + 8;
      if (bytes > 0) {
        view.setUint32(entry + 8, ifdStart + extra, true);
        extra += pad4(bytes);
      }
      writeValues(view, block, at, field);
    });
    // Offset of the next page's IFD, 0 after the last.
    view.setUint32(2 + 12 * fields.length, i + 1 < layouts.length ? starts[i + 1].ifdStart : 0, true);
    yield block;
  }
}

function checkPage(page: FloatTiffPage, i: number): void {
  const { width, height } = page;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(`float TIFF page ${i + 1}: size ${width}x${height} is not a positive whole number of pixels`);
  }
  if (typeof page.data !== 'function') checkData(page, page.data, i);
}

function checkData(page: FloatTiffPage, data: unknown, i: number): void {
  if (!(data instanceof Float32Array) || data.length !== page.width * page.height) {
    throw new InputError(`float TIFF page ${i + 1}: data must be a Float32Array of ${page.width * page.height} values`,
      'Pass the plane the page was computed for');
  }
}

/** Number of TIFF values in a field (RATIONAL pairs count once). */
const valueCount = (f: Field) => (f.type === RATIONAL ? f.values.length / 2 : f.values.length);

/** Bytes stored outside the 12-byte entry, or 0 when the values fit in its 4-byte value field. */
function outOfLineBytes(f: Field): number {
  const size = f.type === SHORT ? 2 : f.type === ASCII ? 1 : 4; // RATIONAL values are 4-byte halves
  const bytes = size * f.values.length;
  return bytes > 4 ? bytes : 0;
}

const pad4 = (n: number) => (n + 3) & ~3;

function writeValues(view: DataView, out: Uint8Array, at: number, f: Field): void {
  if (f.type === ASCII) out.set(f.values, at);
  else if (f.type === SHORT) f.values.forEach((v, k) => view.setUint16(at + 2 * k, v, true));
  else f.values.forEach((v, k) => view.setUint32(at + 4 * k, v, true)); // LONG, RATIONAL halves
}

function writeFloats(view: DataView, at: number, data: Float32Array): void {
  for (let i = 0; i < data.length; i++) view.setFloat32(at + 4 * i, data[i], true);
}

/** TIFF ASCII: 7-bit codes ending in NUL (TIFF 6.0 section 2). */
function asciiBytes(label: string, text: string): number[] {
  const codes = [...text].map((c) => c.charCodeAt(0));
  if (codes.some((c) => c > 126 || (c < 32 && c !== 9 && c !== 10 && c !== 13))) {
    throw new InputError(`the TIFF ${label} "${text}" has characters outside 7-bit ASCII`,
      'TIFF text tags are ASCII only; write units as "um", "deg"');
  }
  return [...codes, 0];
}

/** A positive number as an unsigned 32-bit rational with the largest power-of-ten denominator that fits. */
function toRational(value: number): number[] {
  let den = 1_000_000;
  while (den > 1 && value * den > 0xffffffff) den /= 10;
  const num = Math.round(value * den);
  if (num < 1 || num > 0xffffffff) {
    throw new InputError(`resolution ${value} px/cm cannot be stored as a TIFF rational`, 'Check the pixel size');
  }
  return [num, den];
}
