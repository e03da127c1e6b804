import { checkHeaderSize, decodeFailure, unsupported } from './checks.ts';

/**
 * A small reader of TIFF 6.0 image file directories (IFDs), run before the decoder library: it
 * walks the page chain with bounds and loop checks, reads the tags that decide whether and how a
 * page can be decoded, and refuses sizes over MAX_PIXELS before any pixel buffer exists. The
 * library itself would loop forever on a cyclic page chain and allocate whatever a tag count says.
 */

const FORMAT = 'TIFF';

/** Byte size of one value of each TIFF field type (TIFF 6.0 section 2; 13 = IFD offset, TIFF tech note 1). */
const TYPE_SIZE: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4 };

const TAG = {
  newSubfileType: 254, imageWidth: 256, imageLength: 257, bitsPerSample: 258, compression: 259,
  photometric: 262, imageDescription: 270, stripOffsets: 273, orientation: 274, samplesPerPixel: 277,
  rowsPerStrip: 278, stripByteCounts: 279, xResolution: 282, yResolution: 283, planarConfiguration: 284,
  pageName: 285, resolutionUnit: 296, predictor: 317, colorMap: 320, tileWidth: 322, tileLength: 323,
  tileOffsets: 324, tileByteCounts: 325, extraSamples: 338, sampleFormat: 339, exifIfd: 34665, gpsIfd: 34853,
} as const;

/** Compression codes (TIFF 6.0 and the TIFF tag registry) the decoder library implements. */
const DECODABLE_COMPRESSION = new Set([1, 5, 8, 32946]);
const COMPRESSION_NAMES: Record<number, string> = {
  1: 'none', 2: 'CCITT RLE', 3: 'CCITT Group 3', 4: 'CCITT Group 4', 5: 'LZW', 6: 'old-style JPEG', 7: 'JPEG',
  8: 'Deflate', 32773: 'PackBits', 32946: 'Deflate', 34712: 'JPEG 2000', 34887: 'LERC', 34925: 'LZMA',
  50000: 'Zstandard', 50001: 'WebP', 50002: 'JPEG XL',
};
const PHOTOMETRIC_NAMES: Record<number, string> = {
  0: 'WhiteIsZero grey', 1: 'BlackIsZero grey', 2: 'RGB', 3: 'palette colour', 4: 'transparency mask',
  5: 'CMYK (separated)', 6: 'YCbCr', 8: 'CIE L*a*b*', 9: 'ICC L*a*b*', 10: 'ITU L*a*b*', 32844: 'LogL', 32845: 'LogLuv',
};

interface Entry {
  type: number;
  count: number;
  /** Byte position of the values (inline in the entry when they fit in 4 bytes). */
  at: number;
}

/** What the decoder needs to know about one page, read without touching pixel data. */
export interface TiffPageHeader {
  index: number;
  width: number;
  height: number;
  bitsPerSample: number;
  samplesPerPixel: number;
  /** 1 unsigned integer, 2 signed integer, 3 IEEE float (TIFF 6.0 tag 339). */
  sampleFormat: number;
  photometric: number;
  /** Colour channels kept: 1 grey or palette index, 3 RGB; the other samples are dropped (alpha). */
  colourChannels: 1 | 3;
  /** Whether the page colours come from a ColorMap (palette). */
  palette: boolean;
  associatedAlpha: boolean;
  xResolution?: number;
  yResolution?: number;
  resolutionUnit?: number;
  imageDescription?: string;
  pageName?: string;
}

class IfdReader {
  private readonly view: DataView;
  private little = true;

  constructor(private readonly bytes: Uint8Array, private readonly what: string) {
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  }

  get length(): number {
    return this.bytes.length;
  }

  /** Reads the 8-byte header and returns the offset of the first IFD. */
  header(): number {
    if (this.bytes.length < 8) throw this.broken(`only ${this.bytes.length} bytes`, 'the file ends inside the TIFF header');
    const order = this.view.getUint16(0, false);
    this.little = order === 0x4949;
    const magic = this.u16(2);
    if (magic === 43) {
      throw unsupported(this.what, FORMAT, 'the BigTIFF layout', 'Save it as a classic TIFF (under 4 GB), one page per file if needed');
    }
    if ((order !== 0x4949 && order !== 0x4d4d) || magic !== 42) throw this.broken('bad header', 'this is not a TIFF file');
    return this.u32(4);
  }

  u16(at: number): number {
    return this.view.getUint16(at, this.little);
  }

  u32(at: number): number {
    return this.view.getUint32(at, this.little);
  }

  /** Reads one IFD at `offset`: its entries (bounds checked) and the offset of the next IFD. */
  ifd(offset: number): { entries: Map<number, Entry>; next: number } {
    if (offset + 2 > this.bytes.length) throw this.broken(`IFD at byte ${offset}`, 'the file ends before a page directory');
    const count = this.u16(offset);
    const end = offset + 2 + 12 * count;
    if (end + 4 > this.bytes.length) throw this.broken(`IFD at byte ${offset} with ${count} entries`, 'the file ends inside a page directory');
    const entries = new Map<number, Entry>();
    for (let i = 0; i < count; i++) {
      const e = offset + 2 + 12 * i;
      const tag = this.u16(e);
      const type = this.u16(e + 2);
      const n = this.u32(e + 4);
      const size = TYPE_SIZE[type];
      if (size === undefined) continue; // unknown field types are skipped, as the TIFF 6.0 spec asks
      const byteLength = size * n;
      const at = byteLength <= 4 ? e + 8 : this.u32(e + 8);
      if (at + byteLength > this.bytes.length) {
        throw this.broken(`tag ${tag} claims ${n} values at byte ${at}`, `the file has only ${this.bytes.length} bytes, so it is truncated or damaged`);
      }
      entries.set(tag, { type, count: n, at });
    }
    return { entries, next: this.u32(end) };
  }

  /** Numeric values of an entry (integers, rationals as quotients, floats). */
  numbers(entry: Entry | undefined): number[] | undefined {
    if (!entry) return undefined;
    const out: number[] = [];
    const size = TYPE_SIZE[entry.type];
    for (let i = 0; i < entry.count; i++) {
      const at = entry.at + i * size;
      switch (entry.type) {
        case 1: case 7: out.push(this.bytes[at]); break;
        case 6: out.push(this.view.getInt8(at)); break;
        case 3: out.push(this.u16(at)); break;
        case 8: out.push(this.view.getInt16(at, this.little)); break;
        case 4: case 13: out.push(this.u32(at)); break;
        case 9: out.push(this.view.getInt32(at, this.little)); break;
        case 5: out.push(this.u32(at) / this.u32(at + 4)); break;
        case 10: out.push(this.view.getInt32(at, this.little) / this.view.getInt32(at + 4, this.little)); break;
        case 11: out.push(this.view.getFloat32(at, this.little)); break;
        case 12: out.push(this.view.getFloat64(at, this.little)); break;
        default: return undefined;
      }
    }
    return out;
  }

  text(entry: Entry | undefined): string | undefined {
    if (!entry || entry.type !== 2) return undefined;
    const raw = this.bytes.subarray(entry.at, entry.at + entry.count);
    const nul = raw.indexOf(0);
    return new TextDecoder('latin1').decode(nul >= 0 ? raw.subarray(0, nul) : raw);
  }

  broken(detail: string, extra: string) {
    return decodeFailure(this.what, FORMAT, new Error(detail), extra);
  }
}

/**
 * Reads every page's header (the IFD chain), checks each page can be decoded faithfully and returns
 * what the decoder needs. Throws InputError for sizes over MAX_PIXELS, truncated data, loops and
 * sample kinds the analysis does not take.
 */
export function readTiffHeaders(bytes: Uint8Array, name: string): TiffPageHeader[] {
  const reader = new IfdReader(bytes, name);
  const seen = new Set<number>();
  const pages: TiffPageHeader[] = [];
  let offset = reader.header();
  if (offset === 0) throw reader.broken('no page directory', 'the file holds no image');
  while (offset !== 0) {
    if (seen.has(offset)) throw reader.broken(`page ${pages.length + 1} points back to byte ${offset}`, 'the page chain loops');
    seen.add(offset);
    const { entries, next } = reader.ifd(offset);
    checkSubIfds(reader, entries, seen);
    pages.push(readPage(reader, entries, pages.length, name));
    offset = next;
  }
  return pages;
}

/** EXIF and GPS directories are parsed by the library too, so they get the same bounds and loop checks. */
function checkSubIfds(reader: IfdReader, entries: Map<number, Entry>, seen: Set<number>): void {
  for (const tag of [TAG.exifIfd, TAG.gpsIfd]) {
    const offset = reader.numbers(entries.get(tag))?.[0];
    if (offset === undefined || offset === 0) continue;
    if (seen.has(offset)) throw reader.broken(`sub-directory at byte ${offset} is reached twice`, 'the directories loop');
    seen.add(offset);
    checkSubIfds(reader, reader.ifd(offset).entries, seen);
  }
}

function readPage(reader: IfdReader, entries: Map<number, Entry>, index: number, name: string): TiffPageHeader {
  const what = index === 0 ? name : `${name} page ${index + 1}`;
  const num = (tag: number) => reader.numbers(entries.get(tag));
  const first = (tag: number, fallback?: number) => num(tag)?.[0] ?? fallback;
  const refuse = (detail: string, hint: string) => unsupported(what, FORMAT, detail, hint);

  const width = first(TAG.imageWidth, 0) as number;
  const height = first(TAG.imageLength, 0) as number;
  checkHeaderSize(what, FORMAT, width, height);

  const samplesPerPixel = first(TAG.samplesPerPixel, 1) as number;
  const bitsList = num(TAG.bitsPerSample) ?? [1];
  const formatList = num(TAG.sampleFormat) ?? [1];
  const bitsPerSample = bitsList[0];
  const sampleFormat = formatList[0];
  if (bitsList.some((b) => b !== bitsPerSample) || formatList.some((f) => f !== sampleFormat)) {
    throw refuse(`different sample sizes per channel (${bitsList.join('/')} bits)`, 'Save all channels with the same bit depth');
  }
  checkSampleKind(bitsPerSample, sampleFormat, refuse);

  const photometric = first(TAG.photometric);
  if (photometric === undefined) {
    throw reader.broken('no PhotometricInterpretation tag', 'the page does not say whether it is grey or colour');
  }
  if (![0, 1, 2, 3].includes(photometric)) {
    throw refuse(`${PHOTOMETRIC_NAMES[photometric] ?? `photometric interpretation ${photometric}`} colour`,
      'Convert it to grey or RGB');
  }
  if (photometric === 0 && sampleFormat === 3) throw refuse('WhiteIsZero float samples', 'Save it as BlackIsZero grey');
  const colourChannels: 1 | 3 = photometric === 2 ? 3 : 1;
  // Only samples that ExtraSamples marks as alpha (1 associated, 2 unassociated) may be dropped; an
  // unspecified extra sample (0) or an unmarked one is another data channel.
  const extraSamples = num(TAG.extraSamples) ?? [];
  const alphaCount = extraSamples.filter((e) => e === 1 || e === 2).length;
  if (samplesPerPixel < colourChannels || samplesPerPixel - colourChannels !== alphaCount ||
    extraSamples.length !== alphaCount) {
    throw refuse(`${samplesPerPixel} samples per pixel (${PHOTOMETRIC_NAMES[photometric]}, ` +
      `${alphaCount} marked as alpha)`, 'Use grey or RGB images, with at most an alpha channel; ' +
      'save other channels as separate pages or files');
  }
  const associatedAlpha = extraSamples[0] === 1;
  if (associatedAlpha && sampleFormat === 3) throw refuse('premultiplied alpha on float samples', 'Save it without alpha');

  const palette = photometric === 3;
  if (palette) {
    const map = entries.get(TAG.colorMap);
    if (samplesPerPixel !== 1 || sampleFormat !== 1 || !map || map.count !== 3 * 2 ** bitsPerSample) {
      throw reader.broken('palette page without a matching ColorMap', 'the colour table is missing or has the wrong size');
    }
  }

  const compression = first(TAG.compression, 1) as number;
  if (!DECODABLE_COMPRESSION.has(compression)) {
    throw refuse(`${COMPRESSION_NAMES[compression] ?? `code ${compression}`} compression`,
      'Save it uncompressed or with LZW or Deflate (ZIP) compression');
  }
  const predictor = first(TAG.predictor, 1) as number;
  if (predictor !== 1 && !(predictor === 2 && bitsPerSample !== 32)) {
    throw refuse(predictor === 3 ? 'the floating-point predictor' : `predictor ${predictor}`,
      'Save it without a predictor, or uncompressed');
  }
  const orientation = first(TAG.orientation, 1);
  if (orientation !== 1) {
    throw refuse(`Orientation ${orientation} (stored rotated or mirrored)`, 'Save it with the rows stored top to bottom (Orientation 1)');
  }
  if ((first(TAG.planarConfiguration, 1) as number) === 2 && samplesPerPixel > 1) {
    throw refuse('separate colour planes (planar configuration 2)', 'Save it with interleaved (contiguous) channels');
  }

  const bytesPerPixel = (samplesPerPixel * bitsPerSample) / 8;
  const tiled = entries.has(TAG.tileWidth) || entries.has(TAG.tileOffsets);
  if (tiled) checkTiles(reader, entries, what, width, height, samplesPerPixel, predictor, compression, bytesPerPixel);
  else checkStrips(reader, entries, what, width, height, compression, bytesPerPixel);

  const page: TiffPageHeader = {
    index, width, height, bitsPerSample, samplesPerPixel, sampleFormat, photometric, colourChannels, palette,
    associatedAlpha,
  };
  const xRes = first(TAG.xResolution);
  const yRes = first(TAG.yResolution);
  const unit = first(TAG.resolutionUnit);
  const description = reader.text(entries.get(TAG.imageDescription));
  const pageName = reader.text(entries.get(TAG.pageName));
  if (xRes !== undefined) page.xResolution = xRes;
  if (yRes !== undefined) page.yResolution = yRes;
  if (unit !== undefined) page.resolutionUnit = unit;
  if (description !== undefined) page.imageDescription = description;
  if (pageName !== undefined) page.pageName = pageName;
  return page;
}

function checkSampleKind(bits: number, format: number, refuse: (d: string, h: string) => Error): void {
  const toSixteen = 'Convert it to 8- or 16-bit unsigned integer, or 32-bit float';
  if (format === 1) {
    if (bits === 8 || bits === 16) return;
    if (bits === 1) throw refuse('1-bit (bilevel) samples', 'Save it as 8-bit grey');
    throw refuse(`${bits}-bit integer samples`, toSixteen);
  }
  if (format === 3) {
    if (bits === 32) return;
    throw refuse(`${bits}-bit float samples`, 'Convert it to 32-bit float');
  }
  if (format === 2) throw refuse(`${bits}-bit signed integer samples`, toSixteen);
  if (format === 5 || format === 6) throw refuse('complex samples', 'Save the magnitude or phase as a 32-bit float image');
  throw refuse(`sample format ${format}`, toSixteen);
}

function checkStrips(reader: IfdReader, entries: Map<number, Entry>, what: string, width: number, height: number,
  compression: number, bytesPerPixel: number): void {
  const offsets = reader.numbers(entries.get(TAG.stripOffsets));
  if (!offsets || offsets.length === 0) throw reader.broken('no StripOffsets tag', 'the page has no pixel data');
  const rowsPerStrip = Math.min(reader.numbers(entries.get(TAG.rowsPerStrip))?.[0] ?? height, height) || height;
  const stripCount = Math.ceil(height / rowsPerStrip);
  if (offsets.length < stripCount) {
    throw reader.broken(`${offsets.length} strips for ${stripCount} needed`, 'the strip table is incomplete');
  }
  const stripBytes = rowsPerStrip * width * bytesPerPixel;
  const counts = reader.numbers(entries.get(TAG.stripByteCounts));
  if (!counts && compression !== 1) throw reader.broken('no StripByteCounts tag', 'a compressed page must give its strip sizes');
  checkBlocks(reader, what, 'strip', offsets.slice(0, stripCount), counts?.slice(0, stripCount),
    compression === 1 ? (i) => (i < stripCount - 1 ? stripBytes : (height - i * rowsPerStrip) * width * bytesPerPixel) : undefined);
}

function checkTiles(reader: IfdReader, entries: Map<number, Entry>, what: string, width: number, height: number,
  samplesPerPixel: number, predictor: number, compression: number, bytesPerPixel: number): void {
  const refuse = (detail: string, hint: string) => unsupported(what, FORMAT, detail, hint);
  // The library reads only the first sample of each pixel in tiles and applies the predictor across
  // whole image rows, not tile rows; both would give wrong pixels, so they are refused here.
  if (samplesPerPixel > 1) throw refuse('tiled layout and more than one sample per pixel', 'Save it in strips (not tiled)');
  if (predictor !== 1) throw refuse('tiled layout and a predictor', 'Save it in strips, or without a predictor');
  const tileWidth = reader.numbers(entries.get(TAG.tileWidth))?.[0] ?? 0;
  const tileHeight = reader.numbers(entries.get(TAG.tileLength))?.[0] ?? 0;
  const offsets = reader.numbers(entries.get(TAG.tileOffsets));
  const counts = reader.numbers(entries.get(TAG.tileByteCounts));
  if (tileWidth < 1 || tileHeight < 1 || !offsets || !counts) {
    throw reader.broken('incomplete tile tags', 'the page has no usable tile table');
  }
  const tileCount = Math.ceil(width / tileWidth) * Math.ceil(height / tileHeight);
  if (offsets.length < tileCount || counts.length < tileCount) {
    throw reader.broken(`${Math.min(offsets.length, counts.length)} tiles for ${tileCount} needed`, 'the tile table is incomplete');
  }
  const tileBytes = tileWidth * tileHeight * bytesPerPixel;
  checkBlocks(reader, what, 'tile', offsets.slice(0, tileCount), counts.slice(0, tileCount),
    compression === 1 ? () => tileBytes : undefined);
}

/** Every strip or tile must lie inside the file, and hold enough bytes when uncompressed. */
function checkBlocks(reader: IfdReader, what: string, kind: string, offsets: number[], counts: number[] | undefined,
  neededBytes: ((i: number) => number) | undefined): void {
  for (let i = 0; i < offsets.length; i++) {
    const need = neededBytes?.(i);
    const count = counts?.[i] ?? need ?? 0;
    if (offsets[i] + count > reader.length) {
      throw decodeFailure(what, FORMAT, new Error(`${kind} ${i + 1} of ${offsets.length} ends at byte ${offsets[i] + count}`),
        `the file has only ${reader.length} bytes, so it was cut short`);
    }
    if (need !== undefined && count < need) {
      throw decodeFailure(what, FORMAT, new Error(`${kind} ${i + 1} holds ${count} bytes, ${need} needed`),
        'the uncompressed pixel data is incomplete');
    }
  }
}
