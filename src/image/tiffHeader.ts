import { checkDecodeBytes, checkDecodedSize, corrupt, sizeWords, unsupported } from './checks.ts';

/**
 * A reader of TIFF image file directories (IFDs; TIFF 6.0 sections 2 and 7, and BigTIFF's 64-bit
 * layout): it walks the page chain with bounds and loop checks, reads the tags that decide whether and
 * how a page can be decoded, checks every strip or tile lies inside the file, and refuses sizes over
 * sizes over the memory limit before any pixel buffer exists (tiffDecode.ts checks it again for all the
 * pages asked for together).
 */

const FORMAT = 'TIFF';

/** Byte size of one value of each field type (TIFF 6.0 section 2; 13 IFD, 16-18 BigTIFF 64-bit). */
const TYPE_SIZE: Record<number, number> = {
  1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8,
};

const TAG = {
  imageWidth: 256, imageLength: 257, bitsPerSample: 258, compression: 259, photometric: 262, fillOrder: 266,
  imageDescription: 270, stripOffsets: 273, orientation: 274, samplesPerPixel: 277, rowsPerStrip: 278,
  stripByteCounts: 279, xResolution: 282, yResolution: 283, planarConfiguration: 284, pageName: 285,
  resolutionUnit: 296, predictor: 317, colorMap: 320, tileWidth: 322, tileLength: 323, tileOffsets: 324,
  tileByteCounts: 325, inkSet: 332, extraSamples: 338, sampleFormat: 339, exifIfd: 34665, gpsIfd: 34853,
} as const;

/** Compression codes (TIFF 6.0 and the TIFF tag registry) this reader decodes. */
export const COMPRESSION = { none: 1, lzw: 5, deflate: 8, deflateOld: 32946, packBits: 32773 } as const;
const DECODABLE_COMPRESSION = new Set<number>(Object.values(COMPRESSION));
/**
 * The most bytes one compressed byte can give: Deflate 1032 (a 258-byte copy per 2 bits, RFC 1951;
 * the usual bound, from memory), PackBits 64 (a 2-byte run gives 128), LZW 4096 (a 9-bit code gives
 * at most a 4094-byte string). A block claiming more is damaged, and is refused before any pixel buffer.
 */
const MAX_EXPANSION: Record<number, number> = {
  [COMPRESSION.deflate]: 1032, [COMPRESSION.deflateOld]: 1032, [COMPRESSION.packBits]: 64, [COMPRESSION.lzw]: 4096,
};
const COMPRESSION_NAMES: Record<number, string> = {
  2: 'CCITT RLE', 3: 'CCITT Group 3', 4: 'CCITT Group 4', 6: 'old-style JPEG', 7: 'JPEG', 34712: 'JPEG 2000',
  34887: 'LERC', 34925: 'LZMA', 50000: 'Zstandard', 50001: 'WebP', 50002: 'JPEG XL',
};
const PHOTOMETRIC_NAMES: Record<number, string> = {
  0: 'WhiteIsZero grey', 1: 'BlackIsZero grey', 2: 'RGB', 3: 'palette colour', 4: 'transparency mask',
  5: 'separated (CMYK)', 6: 'YCbCr', 8: 'CIE L*a*b*', 9: 'ICC L*a*b*', 10: 'ITU L*a*b*', 32844: 'LogL', 32845: 'LogLuv',
};

interface Entry {
  type: number;
  count: number;
  /** Byte position of the values (inline in the entry when they fit). */
  at: number;
}

/** Where a page's pixel data lie: strips (full-width blocks of rowsPerStrip rows) or tiles. */
export interface TiffLayout {
  tiled: boolean;
  /** Block size in pixels: tile width x length, or image width x rowsPerStrip. */
  blockWidth: number;
  blockHeight: number;
  /** Blocks across and down one plane. */
  across: number;
  down: number;
  /** Per block (plane after plane for planar configuration 2), position and byte count in the file. */
  offsets: number[];
  counts: number[];
}

/** What the decoder needs to know about one page, read without touching pixel data. */
export interface TiffPageHeader {
  index: number;
  width: number;
  height: number;
  bitsPerSample: number;
  samplesPerPixel: number;
  /** 1 unsigned integer, 3 IEEE float (TIFF 6.0 tag 339; signed and complex are refused). */
  sampleFormat: number;
  photometric: number;
  /** Colour channels the image gets: 1 grey, 3 RGB (from RGB, palette or CMYK). */
  colourChannels: 1 | 3;
  /** Samples read per pixel for colour (1 grey or palette index, 3 RGB, 4 CMYK); later ones (alpha) are dropped. */
  colourSamples: number;
  compression: number;
  /** 1 none, 2 horizontal differencing, 3 floating point (TIFF Technical Note 3). */
  predictor: number;
  /** 1 samples of a pixel together, 2 each sample in its own plane. */
  planar: 1 | 2;
  layout: TiffLayout;
  /** ColorMap values (3 x 2^bits, red then green then blue) for palette pages. */
  colorMap?: number[];
  xResolution?: number;
  yResolution?: number;
  resolutionUnit?: number;
  imageDescription?: string;
  pageName?: string;
}

class IfdReader {
  private readonly view: DataView;
  private little = true;
  /** BigTIFF: 8-byte offsets and counts, 20-byte entries. */
  big = false;

  constructor(private readonly bytes: Uint8Array, readonly what: string) {
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  }

  get length(): number {
    return this.bytes.length;
  }

  get littleEndian(): boolean {
    return this.little;
  }

  /** Reads the header (8 bytes, or 16 for BigTIFF) and returns the offset of the first IFD. */
  header(): number {
    if (this.bytes.length < 8) throw this.broken(`the file ends inside the TIFF header (${this.bytes.length} bytes)`);
    const order = this.view.getUint16(0, false);
    if (order !== 0x4949 && order !== 0x4d4d) throw this.broken('its byte-order mark is neither II nor MM');
    this.little = order === 0x4949;
    const magic = this.u16(2);
    if (magic === 43) {
      if (this.bytes.length < 16) throw this.broken('the file ends inside the BigTIFF header');
      if (this.u16(4) !== 8 || this.u16(6) !== 0) throw this.broken('its BigTIFF header names an offset size other than 8');
      this.big = true;
      return this.u64(8);
    }
    if (magic !== 42) throw this.broken(`its header has version ${magic}, not 42 (TIFF) or 43 (BigTIFF)`);
    return this.u32(4);
  }

  u16(at: number): number {
    return this.view.getUint16(at, this.little);
  }

  u32(at: number): number {
    return this.view.getUint32(at, this.little);
  }

  /** An unsigned 64-bit value; anything past 2^53 cannot be a position in a file we can hold. */
  u64(at: number): number {
    const lo = this.view.getUint32(at + (this.little ? 0 : 4), this.little);
    const hi = this.view.getUint32(at + (this.little ? 4 : 0), this.little);
    if (hi >= 2 ** 21) return Number.MAX_SAFE_INTEGER;
    return hi * 2 ** 32 + lo;
  }

  /** Reads one IFD at `offset`: its entries (bounds checked) and the offset of the next IFD. */
  ifd(offset: number): { entries: Map<number, Entry>; next: number } {
    const countSize = this.big ? 8 : 2;
    const entrySize = this.big ? 20 : 12;
    const nextSize = this.big ? 8 : 4;
    if (offset + countSize > this.bytes.length) {
      throw this.broken(`a page directory would start at byte ${offset}, past the end of the file, so it was cut short`);
    }
    const count = this.big ? this.u64(offset) : this.u16(offset);
    const end = offset + countSize + entrySize * count;
    if (end + nextSize > this.bytes.length) {
      throw this.broken(`the page directory at byte ${offset} (${count} entries) runs past the end of the file`);
    }
    const entries = new Map<number, Entry>();
    for (let i = 0; i < count; i++) {
      const e = offset + countSize + entrySize * i;
      const tag = this.u16(e);
      const type = this.u16(e + 2);
      const n = this.big ? this.u64(e + 4) : this.u32(e + 4);
      const size = TYPE_SIZE[type];
      if (size === undefined) continue; // unknown field types are skipped, as TIFF 6.0 section 2 asks
      const byteLength = size * n;
      const inline = this.big ? 8 : 4;
      const valueAt = e + (this.big ? 12 : 8);
      const at = byteLength <= inline ? valueAt : this.big ? this.u64(valueAt) : this.u32(valueAt);
      if (at + byteLength > this.bytes.length) {
        throw this.broken(`tag ${tag} claims ${n} values at byte ${at}, past the end of the file (${this.bytes.length} bytes)`);
      }
      entries.set(tag, { type, count: n, at });
    }
    return { entries, next: this.big ? this.u64(end) : this.u32(end) };
  }

  /** Numeric values of an entry (integers, rationals as quotients, floats). */
  numbers(entry: Entry | undefined): number[] | undefined {
    if (!entry) return undefined;
    const out: number[] = new Array(entry.count);
    const size = TYPE_SIZE[entry.type];
    for (let i = 0; i < entry.count; i++) {
      const at = entry.at + i * size;
      switch (entry.type) {
        case 1: case 7: out[i] = this.bytes[at]; break;
        case 6: out[i] = this.view.getInt8(at); break;
        case 3: out[i] = this.u16(at); break;
        case 8: out[i] = this.view.getInt16(at, this.little); break;
        case 4: case 13: out[i] = this.u32(at); break;
        case 9: out[i] = this.view.getInt32(at, this.little); break;
        case 5: out[i] = this.u32(at) / this.u32(at + 4); break;
        case 10: out[i] = this.view.getInt32(at, this.little) / this.view.getInt32(at + 4, this.little); break;
        case 11: out[i] = this.view.getFloat32(at, this.little); break;
        case 12: out[i] = this.view.getFloat64(at, this.little); break;
        case 16: case 18: out[i] = this.u64(at); break;
        case 17: out[i] = Number(this.view.getBigInt64(at, this.little)); break;
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

  broken(why: string) {
    return corrupt(this.what, FORMAT, why);
  }
}

/** The file's byte order and every page's header; see readTiffHeaders. */
export interface TiffFile {
  littleEndian: boolean;
  pages: TiffPageHeader[];
}

/** Most pages read from one file: far more than any microscope stack that fits in memory (our requirement). */
const MAX_PAGES = 100_000;

/**
 * Reads every page's header (the IFD chain), checks each page can be decoded faithfully and returns
 * what the decoder needs. Throws InputError for impossible sizes, truncated data, loops and
 * sample kinds the program does not read.
 */
export function readTiffHeaders(bytes: Uint8Array, name: string): TiffFile {
  const reader = new IfdReader(bytes, name);
  const seen = new Set<number>();
  const pages: TiffPageHeader[] = [];
  let offset = reader.header();
  if (offset === 0) throw reader.broken('it holds no page directory, so no image');
  while (offset !== 0) {
    if (seen.has(offset)) throw reader.broken(`page ${pages.length + 1} points back to byte ${offset}, so the page chain loops`);
    if (pages.length >= MAX_PAGES) throw reader.broken(`it claims more than ${MAX_PAGES} pages`);
    seen.add(offset);
    const { entries, next } = reader.ifd(offset);
    checkSubIfds(reader, entries, seen);
    pages.push(readPage(reader, entries, pages.length, name));
    offset = next;
  }
  return { littleEndian: reader.littleEndian, pages };
}

/** EXIF and GPS directories get the same bounds and loop checks (a loop there marks a damaged file). */
function checkSubIfds(reader: IfdReader, entries: Map<number, Entry>, seen: Set<number>): void {
  for (const tag of [TAG.exifIfd, TAG.gpsIfd]) {
    const offset = reader.numbers(entries.get(tag))?.[0];
    if (offset === undefined || offset === 0) continue;
    if (seen.has(offset)) throw reader.broken(`a sub-directory at byte ${offset} is reached twice, so the directories loop`);
    seen.add(offset);
    checkSubIfds(reader, reader.ifd(offset).entries, seen);
  }
}

function readPage(reader: IfdReader, entries: Map<number, Entry>, index: number, name: string): TiffPageHeader {
  const what = index === 0 ? name : `${name} page ${index + 1}`;
  const num = (tag: number) => reader.numbers(entries.get(tag));
  const first = (tag: number, fallback?: number) => num(tag)?.[0] ?? fallback;
  const refuse = (detail: string, hint: string) => unsupported(what, FORMAT, detail, hint);
  const broken = (why: string) => corrupt(what, FORMAT, why);

  const width = first(TAG.imageWidth, 0) as number;
  const height = first(TAG.imageLength, 0) as number;
  checkDecodedSize(what, FORMAT, width, height);

  const samplesPerPixel = first(TAG.samplesPerPixel, 1) as number;
  if (!Number.isInteger(samplesPerPixel) || samplesPerPixel < 1 || samplesPerPixel > 64) {
    throw broken(`it gives ${samplesPerPixel} samples per pixel`);
  }
  const bitsList = num(TAG.bitsPerSample) ?? [1];
  const formatList = num(TAG.sampleFormat) ?? [1];
  const bitsPerSample = bitsList[0];
  const sampleFormat = formatList[0];
  if (bitsList.some((b) => b !== bitsPerSample) || formatList.some((f) => f !== sampleFormat)) {
    throw refuse(`different sample sizes per channel (${bitsList.join('/')} bits)`, 'Save all channels with the same bit depth');
  }
  checkSampleKind(bitsPerSample, sampleFormat, refuse);

  const photometric = first(TAG.photometric);
  if (photometric === undefined) throw broken('it has no PhotometricInterpretation tag, so it does not say whether it is grey or colour');
  if (![0, 1, 2, 3, 5].includes(photometric)) {
    throw refuse(`${PHOTOMETRIC_NAMES[photometric] ?? `photometric interpretation ${photometric}`} colour`,
      'Convert it to grey or RGB');
  }
  if (photometric === 0 && sampleFormat === 3) throw refuse('WhiteIsZero float samples', 'Save it as BlackIsZero grey');
  if (photometric === 5 && ((first(TAG.inkSet, 1) as number) !== 1 || sampleFormat !== 1)) {
    throw refuse('separated colour other than integer CMYK', 'Convert it to RGB');
  }
  const colourSamples = photometric === 2 ? 3 : photometric === 5 ? 4 : 1;
  const colourChannels: 1 | 3 = photometric === 0 || photometric === 1 ? 1 : 3;
  // Only samples that ExtraSamples marks as alpha (1 associated, 2 unassociated) may be dropped; an
  // unspecified extra sample (0) or an unmarked one is another data channel.
  const extraSamples = num(TAG.extraSamples) ?? [];
  const alphaCount = extraSamples.filter((e) => e === 1 || e === 2).length;
  if (samplesPerPixel < colourSamples || samplesPerPixel - colourSamples !== alphaCount ||
    extraSamples.length !== alphaCount) {
    throw refuse(`${samplesPerPixel} samples per pixel (${PHOTOMETRIC_NAMES[photometric]}, ` +
      `${alphaCount} marked as alpha)`, 'Use grey or RGB images, with at most an alpha channel; ' +
      'save other channels as separate pages or files');
  }
  if (extraSamples[0] === 1 && sampleFormat === 3) throw refuse('premultiplied alpha on float samples', 'Save it without alpha');

  let colorMap: number[] | undefined;
  if (photometric === 3) {
    colorMap = num(TAG.colorMap);
    if (samplesPerPixel !== 1 || sampleFormat !== 1 || bitsPerSample > 16 || !colorMap ||
      colorMap.length !== 3 * 2 ** bitsPerSample) {
      throw broken('it is a palette page without a matching colour table (ColorMap)');
    }
  }

  const compression = first(TAG.compression, 1) as number;
  if (!DECODABLE_COMPRESSION.has(compression)) {
    throw refuse(`${COMPRESSION_NAMES[compression] ?? `code ${compression}`} compression`,
      'Save it uncompressed or with LZW, Deflate (ZIP) or PackBits compression');
  }
  const predictor = first(TAG.predictor, 1) as number;
  if (predictor === 2 && (bitsPerSample < 8 || sampleFormat !== 1)) {
    throw refuse(`horizontal differencing on ${bitsPerSample}-bit ${sampleFormat === 3 ? 'float' : 'integer'} samples`,
      'Save it without a predictor');
  }
  if (predictor === 3 && sampleFormat !== 3) throw refuse('the floating-point predictor on integer samples', 'Save it without a predictor');
  if (predictor !== 1 && predictor !== 2 && predictor !== 3) throw refuse(`predictor ${predictor}`, 'Save it without a predictor');
  if (predictor !== 1 && compression === COMPRESSION.none) throw broken('it names a predictor on uncompressed data');
  const orientation = first(TAG.orientation, 1);
  if (orientation !== 1) {
    throw refuse(`Orientation ${orientation} (stored rotated or mirrored)`, 'Save it with the rows stored top to bottom (Orientation 1)');
  }
  if ((first(TAG.fillOrder, 1) as number) !== 1) throw refuse('bits filled lowest first (FillOrder 2)', 'Save it again with the default fill order');
  const planarTag = first(TAG.planarConfiguration, 1) as number;
  if (planarTag !== 1 && planarTag !== 2) throw broken(`it names planar configuration ${planarTag}`);
  const planar: 1 | 2 = samplesPerPixel > 1 && planarTag === 2 ? 2 : 1;

  // The page alone must fit in the limit; checked before the block table, so a size over it is named as such.
  checkDecodeBytes(what, FORMAT, sizeWords(width, height), 4 * width * height * (photometric === 3 ? 4 : colourSamples));
  const layout = readLayout(reader, entries, what, width, height, samplesPerPixel, bitsPerSample, planar, compression);
  const page: TiffPageHeader = {
    index, width, height, bitsPerSample, samplesPerPixel, sampleFormat, photometric, colourChannels, colourSamples,
    compression, predictor, planar, layout,
  };
  if (colorMap) page.colorMap = colorMap;
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

/** Unsigned integers of 1, 2, 4, 8, 16 or 32 bits, or IEEE floats of 16, 32 or 64 bits. */
function checkSampleKind(bits: number, format: number, refuse: (d: string, h: string) => Error): void {
  const hint = 'Convert it to 8- or 16-bit unsigned integer, or 32-bit float';
  if (format === 1) {
    if ([1, 2, 4, 8, 16, 32].includes(bits)) return;
    throw refuse(`${bits}-bit integer samples`, hint);
  }
  if (format === 3) {
    if (bits === 16 || bits === 32 || bits === 64) return;
    throw refuse(`${bits}-bit float samples`, 'Convert it to 32-bit float');
  }
  if (format === 2) throw refuse(`${bits}-bit signed integer samples`, hint);
  if (format === 5 || format === 6) throw refuse('complex samples', 'Save the magnitude or phase as a 32-bit float image');
  throw refuse(`sample format ${format}`, hint);
}

/**
 * The strip or tile table: sizes, counts for every block of every plane, each block inside the file
 * and, uncompressed, holding at least the bytes it must.
 */
function readLayout(reader: IfdReader, entries: Map<number, Entry>, what: string, width: number, height: number,
  samplesPerPixel: number, bits: number, planar: 1 | 2, compression: number): TiffLayout {
  const broken = (why: string) => corrupt(what, FORMAT, why);
  const tiled = entries.has(TAG.tileWidth) || entries.has(TAG.tileOffsets);
  let blockWidth: number;
  let blockHeight: number;
  let offsets: number[] | undefined;
  let counts: number[] | undefined;
  if (tiled) {
    blockWidth = reader.numbers(entries.get(TAG.tileWidth))?.[0] ?? 0;
    blockHeight = reader.numbers(entries.get(TAG.tileLength))?.[0] ?? 0;
    offsets = reader.numbers(entries.get(TAG.tileOffsets));
    counts = reader.numbers(entries.get(TAG.tileByteCounts));
    if (!(blockWidth >= 1) || !(blockHeight >= 1) || !offsets || !counts) throw broken('its tile tags are incomplete');
    // A tile larger than the image in both directions is allowed but must not be a memory bomb.
    if (blockWidth * blockHeight > 4 * width * height + 65_536) throw broken(`its tiles (${blockWidth} x ${blockHeight}) are far larger than the image`);
  } else {
    blockWidth = width;
    const rows = reader.numbers(entries.get(TAG.rowsPerStrip))?.[0] ?? height;
    blockHeight = Math.min(rows >= 1 ? rows : height, height);
    offsets = reader.numbers(entries.get(TAG.stripOffsets));
    counts = reader.numbers(entries.get(TAG.stripByteCounts));
    if (!offsets || offsets.length === 0) throw broken('it has no StripOffsets tag, so no pixel data');
    if (!counts && compression !== COMPRESSION.none) throw broken('it has no StripByteCounts tag, which compressed data needs');
  }
  const across = Math.ceil(width / blockWidth);
  const down = Math.ceil(height / blockHeight);
  const blocks = across * down * (planar === 2 ? samplesPerPixel : 1);
  const kind = tiled ? 'tile' : 'strip';
  if (offsets.length < blocks || (counts && counts.length < blocks)) {
    throw broken(`its ${kind} table lists ${Math.min(offsets.length, counts?.length ?? Infinity)} ${kind}s where ${blocks} are needed`);
  }
  const samplesInRow = planar === 2 ? 1 : samplesPerPixel;
  const rowBytes = Math.ceil((blockWidth * samplesInRow * bits) / 8);
  const needed = (i: number) => {
    if (tiled) return rowBytes * blockHeight;
    const strip = i % down;
    return rowBytes * Math.min(blockHeight, height - strip * blockHeight);
  };
  const finalCounts = new Array<number>(blocks);
  for (let i = 0; i < blocks; i++) {
    const need = needed(i);
    const count = counts ? counts[i] : need;
    if (!Number.isSafeInteger(offsets[i]) || offsets[i] + count > reader.length) {
      throw broken(`${kind} ${i + 1} of ${blocks} would end at byte ${offsets[i] + count}, but the file has only ` +
        `${reader.length} bytes, so it was cut short`);
    }
    if (compression === COMPRESSION.none && count < need) {
      throw broken(`${kind} ${i + 1} holds ${count} bytes where ${need} are needed`);
    }
    if (compression !== COMPRESSION.none && count * (MAX_EXPANSION[compression] ?? Infinity) + 64 < need) {
      throw broken(`${kind} ${i + 1} holds ${count} compressed bytes, too few to give the ${need} bytes it must`);
    }
    finalCounts[i] = count;
  }
  return { tiled, blockWidth, blockHeight, across, down, offsets: offsets.slice(0, blocks), counts: finalCounts };
}
