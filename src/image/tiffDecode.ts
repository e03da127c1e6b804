import { takeFloat32 } from '../common/index.ts';
import { InputError } from '../common/index.ts';
import { checkDecodeBytes, corrupt, pagesWords, sizeWords } from './checks.ts';
import { tiffPixelSizeUm } from './pixelSize.ts';
import { BlockProblem, decodeBlock, undoFloatPredictor, undoHorizontal } from './tiffCodecs.ts';
import { readTiffHeaders, type TiffPageHeader } from './tiffHeader.ts';
import { makeImage, type Image } from './types.ts';

/**
 * TIFF pixel decoding, written here because no maintained JavaScript library reads what microscopes
 * write and also refuses damaged data: the library used before had no PackBits, no separate planes,
 * no BigTIFF, one sample per pixel in tiles, and analysed damaged LZW strips silently; the complete
 * one is asynchronous only. Each strip or tile is decoded on its own (tiffCodecs.ts) and written
 * straight into the float planes, so memory is the planes plus one block.
 */

const FORMAT = 'TIFF';

const pageLabel = (name: string, index: number) => (index === 0 ? name : `${name} page ${index + 1}`);

/**
 * Decodes TIFF pages after the header checks of tiffHeader.ts. `pages` undefined decodes every page;
 * otherwise the listed page indices (0-based).
 *
 * Values: unsigned integers of b bits become code / (2^b - 1) in [0, 1] (WhiteIsZero inverted);
 * floats (16/32/64-bit) are kept as stored (to float32); palette pages become RGB; CMYK becomes RGB as
 * R = (1 - C)(1 - K) with C, K in [0, 1] (no colour profile; Pillow's convert('RGB') does the same);
 * alpha and other extra samples are dropped. Encoding 'srgb' up to 8 bits, 'linear' above.
 *
 * @param maxBytes memory the decode may take (default MAX_DECODE_BYTES): the planes of all pages
 *   asked for, 4 bytes per pixel and sample read, and the largest decompressed block must fit
 */
export function decodeTiffPages(bytes: Uint8Array, name: string, pages?: number[], maxBytes?: number): Image[] {
  const file = readTiffHeaders(bytes, name);
  const headers = file.pages;
  const wanted = pages ?? headers.map((h) => h.index);
  for (const p of wanted) {
    if (!Number.isInteger(p) || p < 0 || p >= headers.length) {
      throw new InputError(`${name}: page index ${p} (0-based) was asked for but the TIFF has ${headers.length} page(s)`,
        `Give a page index from 0 to ${headers.length - 1}`);
    }
  }
  const planeBytes = wanted.reduce((sum, p) => sum + 4 * headers[p].width * headers[p].height * planesRead(headers[p]), 0);
  const blockBytes = Math.max(...wanted.map((p) => decompressedBlockBytes(headers[p])));
  const first = headers[wanted[0]];
  const size = wanted.length === 1 ? sizeWords(first.width, first.height)
    : pagesWords(wanted.length, wanted.reduce((sum, p) => sum + headers[p].width * headers[p].height, 0));
  checkDecodeBytes(wanted.length === 1 ? pageLabel(name, wanted[0]) : name, FORMAT, size, planeBytes + blockBytes, maxBytes);
  // ImageJ writes its description (with the length unit) on the first page only.
  const stackDescription = headers[0].imageDescription?.startsWith('ImageJ=') ? headers[0].imageDescription : undefined;
  return wanted.map((p) => decodePage(bytes, file.littleEndian, headers[p], pageLabel(name, p), name, stackDescription));
}

/** Planes a page's samples are read into: grey 1, RGB 3, palette 1 index plane and 3 colour planes, CMYK 4. */
const planesRead = (h: TiffPageHeader) => (h.photometric === 3 ? 4 : h.colourSamples);

/** Bytes of one decompressed strip or tile (none for uncompressed data, read where it lies). */
function decompressedBlockBytes(h: TiffPageHeader): number {
  if (h.compression === 1) return 0;
  const samples = h.planar === 2 ? 1 : h.samplesPerPixel;
  return Math.ceil((h.layout.blockWidth * samples * h.bitsPerSample) / 8) * h.layout.blockHeight;
}

/** Turns one sample value into what is stored in a plane. */
type SampleMap = (v: number) => number;

/** Plane values of every code of an unsigned integer sample of at most 16 bits (see decodeTiffPages), or null. */
export function codeTable(h: TiffPageHeader): Float32Array | null {
  if (h.sampleFormat === 3 || h.bitsPerSample > 16) return null;
  const max = 2 ** h.bitsPerSample - 1;
  const table = new Float32Array(max + 1);
  for (let v = 0; v <= max; v++) table[v] = (h.photometric === 0 ? max - v : v) / max;
  return table;
}

/** The map from stored sample values to plane values (see decodeTiffPages). */
function sampleMap(h: TiffPageHeader): SampleMap {
  if (h.sampleFormat === 3) return (v) => v;
  const max = 2 ** h.bitsPerSample - 1;
  const table = codeTable(h);
  if (table) return (v) => table[v];
  return h.photometric === 0 ? (v) => (max - v) / max : (v) => v / max;
}

/**
 * One row of 8- or 16-bit unsigned samples with no predictor, read straight through the code table into the
 * planes (pixel p onwards; `read` colour samples of every `spp`): the same values as readSamples and the
 * sample map, several times quicker (a 100-megapixel 16-bit file took a second).
 */
function readCodesRow(data: Uint8Array, start: number, columns: number, spp: number, read: number, bits: number, little: boolean,
  table: Float32Array, planes: Float32Array[], p: number): void {
  const n = columns * spp;
  let codes: Uint8Array | Uint16Array;
  if (bits === 8) codes = data.subarray(start, start + n);
  else if (little === NATIVE_LITTLE && (data.byteOffset + start) % 2 === 0) codes = new Uint16Array(data.buffer, data.byteOffset + start, n);
  else {
    const view = new DataView(data.buffer, data.byteOffset + start, 2 * n);
    codes = new Uint16Array(n);
    for (let i = 0; i < n; i++) codes[i] = view.getUint16(2 * i, little);
  }
  if (read === 1) {
    const out = planes[0];
    for (let x = 0, j = 0; x < columns; x++, j += spp) out[p + x] = table[codes[j]];
    return;
  }
  for (let c = 0; c < read; c++) {
    const out = planes[c];
    for (let x = 0, j = c; x < columns; x++, j += spp) out[p + x] = table[codes[j]];
  }
}

/** Whether this machine stores numbers little-endian (typed arrays use its order). */
export const NATIVE_LITTLE = new Uint8Array(Uint16Array.of(1).buffer)[0] === 1;

function decodePage(bytes: Uint8Array, littleEndian: boolean, h: TiffPageHeader, what: string, name: string,
  stackDescription?: string): Image {
  const { width, height, layout, planar, bitsPerSample: bits, samplesPerPixel: spp } = h;
  const pixels = width * height;
  // Planes read from the samples: grey 1, RGB 3, palette 1 (index, mapped after), CMYK 4 (mapped after).
  const read = h.photometric === 3 ? 1 : h.colourSamples;
  const planes = Array.from({ length: read }, () => takeFloat32(pixels));
  const map = h.photometric === 3 ? (v: number) => v : sampleMap(h);
  // Palette indices are mapped after, and predictors undone on the decoded numbers: those take the general path.
  const codes = h.photometric !== 3 && h.predictor === 1 && (bits === 8 || bits === 16) ? codeTable(h) : null;
  const samplesInRow = planar === 2 ? 1 : spp;
  const rowBytes = Math.ceil((layout.blockWidth * samplesInRow * bits) / 8);
  const rowValues = layout.blockWidth * samplesInRow;
  const values = new Float64Array(rowValues);
  const bytesPerSample = bits / 8;
  const scratch = h.predictor === 3 ? new Uint8Array(rowBytes) : undefined;
  const planesInFile = planar === 2 ? spp : 1;

  for (let plane = 0; plane < planesInFile; plane++) {
    if (planar === 2 && plane >= read) break; // alpha planes are not read
    for (let by = 0; by < layout.down; by++) {
      const top = by * layout.blockHeight;
      const rows = layout.tiled ? layout.blockHeight : Math.min(layout.blockHeight, height - top);
      for (let bx = 0; bx < layout.across; bx++) {
        const block = (plane * layout.down + by) * layout.across + bx;
        const offset = layout.offsets[block];
        const src = bytes.subarray(offset, offset + layout.counts[block]);
        let data: Uint8Array;
        try {
          data = decodeBlock(src, h.compression, rowBytes * rows, rowBytes * layout.blockHeight);
        } catch (e) {
          if (e instanceof BlockProblem) {
            throw corrupt(what, FORMAT, `in ${layout.tiled ? 'tile' : 'strip'} ${block + 1}, ${e.why}`);
          }
          throw e;
        }
        const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
        const left = bx * layout.blockWidth;
        const columns = Math.min(layout.blockWidth, width - left);
        const rowsInImage = Math.min(rows, height - top);
        for (let r = 0; r < rowsInImage; r++) {
          const start = r * rowBytes;
          if (codes) {
            const p = (top + r) * width + left;
            if (planar === 2) readCodesRow(data, start, columns, 1, 1, bits, littleEndian, codes, [planes[plane]], p);
            else readCodesRow(data, start, columns, spp, read, bits, littleEndian, codes, planes, p);
            continue;
          }
          let rowLittle = littleEndian;
          if (scratch) {
            undoFloatPredictor(data.subarray(start, start + rowBytes), rowValues, bytesPerSample, samplesInRow, scratch);
            rowLittle = false;
          }
          readSamples(data, view, start, rowValues, bits, h.sampleFormat, rowLittle, values);
          if (h.predictor === 2) undoHorizontal(values, rowValues, samplesInRow, bits);
          let p = (top + r) * width + left;
          if (planar === 2) {
            const out = planes[plane];
            for (let x = 0; x < columns; x++, p++) out[p] = map(values[x]);
          } else {
            for (let x = 0, j = 0; x < columns; x++, p++, j += spp) {
              for (let c = 0; c < read; c++) planes[c][p] = map(values[j + c]);
            }
          }
        }
      }
    }
  }

  let colourPlanes: Float32Array[] = planes;
  let bitDepth: 8 | 16 | 32 = h.sampleFormat === 3 ? (bits === 16 ? 16 : 32) : bits <= 8 ? 8 : bits === 16 ? 16 : 32;
  if (h.photometric === 3) {
    colourPlanes = paletteToRgb(planes[0], h.colorMap as number[], bits, what);
    bitDepth = 8;
  } else if (h.photometric === 5) {
    colourPlanes = cmykToRgb(planes);
  }
  const pixelSizeUmPerPx = tiffPixelSizeUm(h.xResolution, h.yResolution, h.resolutionUnit,
    h.imageDescription ?? stackDescription);
  return makeImage({
    width,
    height,
    channels: h.colourChannels,
    planes: colourPlanes,
    bitDepth,
    // 8-bit files are display images (sRGB); 16-bit and float are linear camera data (common practice, no source).
    encoding: bitDepth === 8 ? 'srgb' : 'linear',
    ...(pixelSizeUmPerPx !== undefined ? { pixelSizeUmPerPx } : {}),
    source: { name, page: h.index },
  });
}

/**
 * Reads `n` samples of one row starting at byte `start` into `out` as numbers: unsigned integers of
 * 1/2/4 bits (highest bits first, TIFF 6.0 section 2) or 8/16/32 bits, IEEE floats of 16/32/64 bits.
 */
function readSamples(data: Uint8Array, view: DataView, start: number, n: number, bits: number, format: number,
  little: boolean, out: Float64Array): void {
  if (bits < 8) {
    const perByte = 8 / bits;
    const mask = (1 << bits) - 1;
    for (let i = 0; i < n; i++) out[i] = (data[start + ((i / perByte) | 0)] >> (8 - bits * ((i % perByte) + 1))) & mask;
    return;
  }
  if (format === 3) {
    if (bits === 32) for (let i = 0; i < n; i++) out[i] = view.getFloat32(start + 4 * i, little);
    else if (bits === 64) for (let i = 0; i < n; i++) out[i] = view.getFloat64(start + 8 * i, little);
    else for (let i = 0; i < n; i++) out[i] = halfToFloat(view.getUint16(start + 2 * i, little));
    return;
  }
  if (bits === 8) for (let i = 0; i < n; i++) out[i] = data[start + i];
  else if (bits === 16) for (let i = 0; i < n; i++) out[i] = view.getUint16(start + 2 * i, little);
  else for (let i = 0; i < n; i++) out[i] = view.getUint32(start + 4 * i, little);
}

/** IEEE 754 binary16 to a number: sign, 5-bit exponent (bias 15), 10-bit fraction; subnormals, infinities, NaN. */
function halfToFloat(h: number): number {
  const sign = h & 0x8000 ? -1 : 1;
  const exponent = (h >> 10) & 0x1f;
  const fraction = h & 0x3ff;
  if (exponent === 0) return sign * fraction * 2 ** -24;
  if (exponent === 31) return fraction ? NaN : sign * Infinity;
  return sign * (1 + fraction / 1024) * 2 ** (exponent - 15);
}

/**
 * Palette indices to RGB planes in [0, 1]. libtiff's rule (tif_getimage.c checkcmap, from memory): a
 * ColorMap whose entries all fit in 8 bits is an old 8-bit map, otherwise the top byte of each 16-bit
 * entry is the colour. An index outside the map is damage.
 */
function paletteToRgb(indices: Float32Array, colorMap: number[], bits: number, what: string): Float32Array[] {
  const colours = 2 ** bits;
  const eightBit = colorMap.every((v) => v < 256);
  const level = (v: number) => (eightBit ? v : v >> 8) / 255;
  const lut = [0, 1, 2].map((c) => Float32Array.from({ length: colours }, (_, i) => level(colorMap[c * colours + i])));
  const planes = [0, 1, 2].map(() => new Float32Array(indices.length));
  for (let i = 0; i < indices.length; i++) {
    const k = indices[i];
    if (!(k < colours)) throw corrupt(what, FORMAT, `a pixel uses colour ${k} of a ${colours}-colour map`);
    planes[0][i] = lut[0][k];
    planes[1][i] = lut[1][k];
    planes[2][i] = lut[2][k];
  }
  return planes;
}

/** CMYK planes in [0, 1] to RGB: R = (1 - C)(1 - K), G = (1 - M)(1 - K), B = (1 - Y)(1 - K), in place in the first three. */
function cmykToRgb(planes: Float32Array[]): Float32Array[] {
  const [c, m, y, k] = planes;
  for (let i = 0; i < c.length; i++) {
    const white = 1 - k[i];
    c[i] = (1 - c[i]) * white;
    m[i] = (1 - m[i]) * white;
    y[i] = (1 - y[i]) * white;
  }
  return [c, m, y];
}
