/**
 * A hostile corpus for the image readers, made at test time into a folder: truncations at many
 * offsets, bad checksums, lying headers, huge and zero sizes, odd bit depths, extra pages and
 * decompression bombs, built from the committed fixtures (written by Pillow, tifffile and OpenCV:
 * tests/fixtures/images, tests/fixtures/variants) and from bytes crafted here after the format
 * specifications (ISO 15948 for PNG, TIFF 6.0 and BigTIFF, ITU-T T.81 for JPEG).
 *
 * Every case says what must happen: 'refuse' (the file is damaged, impossible or over the limit: exit 2
 * for every subcommand, never a number), 'read' (a valid if unusual file: it must decode) or 'either'
 * (damage no format check can see, e.g. a changed byte inside PackBits literals or JPEG entropy data:
 * any plain outcome, exit 0 or 2, but never a crash). `bomb` marks cases whose memory is measured.
 *
 * Run it alone to keep the files: node bin/run-ts.mjs tests/corpus/makeCorpus.ts OUTDIR
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { constants, crc32, deflateRawSync, deflateSync } from 'node:zlib';

export type Expect = 'refuse' | 'read' | 'either';

export interface CorpusCase {
  file: string;
  expect: Expect;
  why: string;
  bomb?: boolean;
}

const FIXTURES = fileURLToPath(new URL('../fixtures/', import.meta.url));
const fixture = (rel: string) => new Uint8Array(readFileSync(join(FIXTURES, rel)));

// ------------------------------------------------------------------ byte helpers

const u32be = (v: number) => Uint8Array.of(v >>> 24, (v >>> 16) & 255, (v >>> 8) & 255, v & 255);
const concat = (...parts: Uint8Array[]) => {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
};
const ascii = (s: string) => Uint8Array.from(s, (c) => c.charCodeAt(0));

/** One PNG chunk: length, type, data, CRC-32 of type and data (ISO 15948 section 5.3). */
function pngChunk(type: string, data: Uint8Array): Uint8Array {
  const body = concat(ascii(type), data);
  return concat(u32be(data.length), body, u32be(crc32(body) >>> 0));
}

interface PngChunkAt { type: string; start: number; length: number }

/** The chunks of a PNG: where each starts (its length field) and its data length. */
function pngChunks(bytes: Uint8Array): PngChunkAt[] {
  const out: PngChunkAt[] = [];
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  for (let at = 8; at + 12 <= bytes.length;) {
    const length = view.getUint32(at);
    out.push({ type: String.fromCharCode(...bytes.subarray(at + 4, at + 8)), start: at, length });
    at += 12 + length;
  }
  return out;
}

/** Recomputes every chunk's CRC, so that only the damage meant is left. */
function fixPngCrcs(bytes: Uint8Array): Uint8Array {
  const out = bytes.slice();
  const view = new DataView(out.buffer);
  for (const c of pngChunks(out)) {
    if (c.start + 12 + c.length > out.length) break;
    view.setUint32(c.start + 8 + c.length, crc32(out.subarray(c.start + 4, c.start + 8 + c.length)) >>> 0);
  }
  return out;
}

/** A PNG made of the given chunks after the signature. */
const png = (...chunks: Uint8Array[]) => concat(Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a), ...chunks);
const ihdr = (w: number, h: number, depth = 8, colour = 0, interlace = 0) => {
  const d = new Uint8Array(13);
  const v = new DataView(d.buffer);
  v.setUint32(0, w);
  v.setUint32(4, h);
  d.set([depth, colour, 0, 0, interlace], 8);
  return pngChunk('IHDR', d);
};
/** Filtered rows of zeros (filter byte 0, then zero samples), as one zlib stream. */
const zeroRows = (rowBytes: number, rows: number) => new Uint8Array(deflateSync(new Uint8Array((rowBytes + 1) * rows), { level: 9 }));

/**
 * A zlib stream of `copies` x 16 MiB of zeros without ever holding them: one non-final, byte-aligned
 * DEFLATE run of 16 MiB (zlib full flush) repeated, an empty final stored block, and the Adler-32 of
 * n zeros, which is b = n mod 65521, a = 1 (RFC 1950 section 8.2).
 */
function zeroBombZlib(copies: number): Uint8Array {
  const piece = new Uint8Array(deflateRawSync(new Uint8Array(16 * 2 ** 20), { level: 9, finishFlush: constants.Z_FULL_FLUSH }));
  const n = copies * 16 * 2 ** 20;
  const adler = ((n % 65521) * 65536 + 1) >>> 0;
  const pieces = Array.from({ length: copies }, () => piece);
  return concat(Uint8Array.of(0x78, 0xda), ...pieces, Uint8Array.of(0x01, 0x00, 0x00, 0xff, 0xff), u32be(adler));
}

// ------------------------------------------------------------------ classic TIFF helpers

interface TiffEntryAt { tag: number; type: number; count: number; at: number; valueAt: number }

/** The entries of the first IFD of a classic TIFF (either byte order). */
function tiffEntries(bytes: Uint8Array): { little: boolean; ifd: number; entries: TiffEntryAt[] } {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const little = bytes[0] === 0x49;
  const ifd = view.getUint32(4, little);
  const n = view.getUint16(ifd, little);
  const entries: TiffEntryAt[] = [];
  for (let k = 0; k < n; k++) {
    const at = ifd + 2 + 12 * k;
    const type = view.getUint16(at + 2, little);
    const count = view.getUint32(at + 4, little);
    const size = ({ 1: 1, 2: 1, 3: 2, 4: 4, 5: 8 } as Record<number, number>)[type] ?? 4;
    entries.push({ tag: view.getUint16(at, little), type, count, at, valueAt: size * count <= 4 ? at + 8 : view.getUint32(at + 8, little) });
  }
  return { little, ifd, entries };
}

/** First value of a tag (SHORT or LONG). */
function tiffValue(bytes: Uint8Array, tag: number, index = 0): number {
  const { little, entries } = tiffEntries(bytes);
  const e = entries.find((x) => x.tag === tag);
  if (!e) throw new Error(`no tag ${tag}`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  return e.type === 3 ? view.getUint16(e.valueAt + 2 * index, little) : view.getUint32(e.valueAt + 4 * index, little);
}

/** A copy with the first value of `tag` set (the entry's type kept). */
function setTiffValue(bytes: Uint8Array, tag: number, value: number): Uint8Array {
  const out = bytes.slice();
  const { little, entries } = tiffEntries(out);
  const e = entries.find((x) => x.tag === tag);
  if (!e) throw new Error(`no tag ${tag}`);
  const view = new DataView(out.buffer);
  if (e.type === 3) view.setUint16(e.valueAt, value, little);
  else view.setUint32(e.valueAt, value, little);
  return out;
}

/** A small classic little-endian TIFF written here: one strip of `data`, entries given as [tag, type, value]. */
function craftTiff(entries: [number, number, number][], data: Uint8Array): Uint8Array {
  const dataAt = 8;
  const ifdAt = dataAt + data.length + (data.length % 2);
  const all = [...entries.filter(([t]) => t !== 273), [273, 4, dataAt] as [number, number, number]].sort((a, b) => a[0] - b[0]);
  const out = new Uint8Array(ifdAt + 2 + 12 * all.length + 4);
  const view = new DataView(out.buffer);
  out.set(ascii('II*\0'));
  view.setUint32(4, ifdAt, true);
  out.set(data, dataAt);
  view.setUint16(ifdAt, all.length, true);
  all.forEach(([tag, type, value], k) => {
    const at = ifdAt + 2 + 12 * k;
    view.setUint16(at, tag, true);
    view.setUint16(at + 2, type, true);
    view.setUint32(at + 4, 1, true);
    if (type === 3) view.setUint16(at + 8, value, true);
    else view.setUint32(at + 8, value, true);
  });
  return out;
}

/** Tags of a w x h 8-bit grey strip image (TIFF 6.0 baseline) with the given compression. */
const greyTags = (w: number, h: number, count: number, compression = 1): [number, number, number][] => [
  [256, 4, w], [257, 4, h], [258, 3, 8], [259, 3, compression], [262, 3, 1], [277, 3, 1], [278, 4, h], [279, 4, count],
];

// ------------------------------------------------------------------ the corpus

/**
 * Writes the corpus into `dir` and returns its cases. Deterministic: the same bytes every run.
 */
export function makeCorpus(dir: string): CorpusCase[] {
  mkdirSync(dir, { recursive: true });
  const cases: CorpusCase[] = [];
  const add = (file: string, bytes: Uint8Array, expect: Expect, why: string, bomb = false) => {
    writeFileSync(join(dir, file), bytes);
    cases.push({ file, expect, why, ...(bomb ? { bomb } : {}) });
  };

  // --- Truncations: each base cut at several offsets must be refused.
  const bases: [string, string][] = [
    ['png-rgb8', 'images/rgb8.png'], ['png-adam7', 'variants/adam7_grey8.png'], ['png-grey16', 'images/grey16.png'],
    ['png-palette2', 'variants/palette2.png'], ['jpg-baseline', 'images/rgb444.jpg'], ['jpg-progressive', 'images/progressive.jpg'],
    ['jpg-restart', 'variants/restart.jpg'], ['jpg-cmyk', 'variants/cmyk_black.jpg'], ['tif-lzw', 'images/rgb8_lzw.tif'],
    ['tif-deflate-tiles', 'variants/deflate_rgb16_pred2_tiles.tif'], ['tif-packbits', 'variants/packbits_rgb8.tif'],
    ['tif-bigtiff', 'variants/bigtiff_grey16.tif'], ['tif-grey8', 'images/grey8.tif'], ['tif-lzw-long', 'variants/lzw_grey16_long.tif'],
  ];
  for (const [label, rel] of bases) {
    const bytes = fixture(rel);
    const cuts = [...new Set([1, 7, 16, 40, Math.floor(bytes.length * 0.3), Math.floor(bytes.length * 0.7), bytes.length - 1])];
    for (const cut of cuts.filter((c) => c < bytes.length)) {
      add(`cut-${label}-${cut}.${rel.split('.').pop()}`, bytes.slice(0, cut), 'refuse', `${rel} cut to ${cut} of ${bytes.length} bytes`);
    }
  }

  // --- Bad checksums and damaged compressed data.
  for (const [label, rel] of [['rgb8', 'images/rgb8.png'], ['adam7', 'variants/adam7_grey8.png']] as const) {
    const bytes = fixture(rel);
    const idat = pngChunks(bytes).find((c) => c.type === 'IDAT') as PngChunkAt;
    const flipped = bytes.slice();
    flipped[idat.start + 8 + Math.floor(idat.length / 2)] ^= 0x5a;
    add(`crc-idat-${label}.png`, flipped, 'refuse', 'a byte of IDAT changed, its CRC left as it was');
    add(`adler-inflate-${label}.png`, fixPngCrcs(flipped), 'refuse', 'a byte of IDAT changed, CRC recomputed: only inflate or Adler-32 can tell');
    const adler = bytes.slice();
    adler[idat.start + 8 + idat.length - 1] ^= 0x01;
    add(`adler-${label}.png`, fixPngCrcs(adler), 'refuse', 'the zlib Adler-32 changed by one bit, CRC recomputed');
  }
  {
    const bytes = fixture('images/grey8.png');
    const bad = bytes.slice();
    bad[29] ^= 0xff; // a byte of IHDR's CRC
    add('crc-ihdr.png', bad, 'refuse', 'the IHDR CRC is wrong');
    const pal = fixture('variants/palette2.png');
    const plte = pngChunks(pal).find((c) => c.type === 'PLTE') as PngChunkAt;
    const badPal = pal.slice();
    badPal[plte.start + 8] ^= 0x10;
    add('crc-plte.png', badPal, 'refuse', 'a palette byte changed, CRC left: the colours are damaged');
  }
  {
    // A TIFF Deflate tile with a changed byte, and one with its Adler-32 changed.
    const bytes = fixture('variants/deflate_rgb16_pred2_tiles.tif');
    const at = tiffValue(bytes, 324, 1);
    const count = tiffValue(bytes, 325, 1);
    const mid = bytes.slice();
    mid[at + Math.floor(count / 2)] ^= 0x5a;
    add('deflate-tile-damaged.tif', mid, 'refuse', 'a byte inside a Deflate tile changed');
    const tail = bytes.slice();
    tail[at + count - 2] ^= 0x01;
    add('deflate-tile-adler.tif', tail, 'refuse', 'the Adler-32 of a Deflate tile changed by one bit');
  }
  for (const [label, rel] of [['rgb8', 'images/rgb8_lzw.tif'], ['long', 'variants/lzw_grey16_long.tif']] as const) {
    const bytes = fixture(rel);
    const at = tiffValue(bytes, 273);
    const count = tiffValue(bytes, 279);
    for (const [k, fraction] of [0.1, 0.5, 0.9].entries()) {
      const bad = bytes.slice();
      bad[at + Math.floor(count * fraction)] ^= 0xa5;
      add(`lzw-damaged-${label}-${k}.tif`, bad, 'refuse', `a byte of the LZW strip changed at ${Math.round(fraction * 100)} %`);
    }
    const zeros = bytes.slice();
    zeros.fill(0, at + Math.floor(count * 0.4), at + Math.floor(count * 0.6));
    add(`lzw-zeroed-${label}.tif`, zeros, 'refuse', 'a fifth of the LZW strip overwritten with zeros');
  }
  {
    const bytes = fixture('variants/packbits_rgb8.tif');
    const at = tiffValue(bytes, 273);
    const bad = bytes.slice();
    bad[at] = 0x80 + 3; // the first run header now repeats 126 times: more bytes than the strip holds
    add('packbits-header-damaged.tif', bad, 'refuse', 'the first PackBits run header changed');
    const lit = bytes.slice();
    lit[at + 1] ^= 0x40; // a literal byte: no check in the format can see it
    add('packbits-literal-changed.tif', lit, 'either', 'a literal PackBits byte changed (undetectable)');
  }
  {
    const bytes = fixture('images/rgb444.jpg');
    const sos = bytes.findIndex((b, i) => b === 0xff && bytes[i + 1] === 0xda);
    const bad = bytes.slice();
    bad[sos + 40] ^= 0x33;
    add('jpeg-entropy-changed.jpg', bad, 'either', 'a byte of JPEG entropy-coded data changed (JPEG has no checksum)');
    const noDht = bytes.slice();
    for (let i = 0; i < sos; i++) if (noDht[i] === 0xff && noDht[i + 1] === 0xc4) noDht[i + 1] = 0xef; // DHT -> APP15
    add('jpeg-no-huffman.jpg', noDht, 'refuse', 'the Huffman tables removed (turned into APP15 segments)');
  }

  // --- Lying headers.
  {
    const base = fixture('images/grey8.png');
    const view = (b: Uint8Array) => new DataView(b.buffer);
    const wide = base.slice();
    view(wide).setUint32(16, 24);
    add('lie-png-width-plus1.png', fixPngCrcs(wide), 'refuse', 'IHDR one pixel wider than the data');
    const narrow = base.slice();
    view(narrow).setUint32(16, 22);
    add('lie-png-width-minus1.png', fixPngCrcs(narrow), 'refuse', 'IHDR one pixel narrower than the data');
    const tall = base.slice();
    view(tall).setUint32(20, 34);
    add('lie-png-height-double.png', fixPngCrcs(tall), 'refuse', 'IHDR twice as tall as the data');
    const sixteen = base.slice();
    sixteen[24] = 16;
    add('lie-png-depth16.png', fixPngCrcs(sixteen), 'refuse', 'IHDR says 16 bits, the data are 8');
    for (const [depth, colour] of [[3, 0], [8, 5], [4, 2], [16, 3], [1, 6]]) {
      const odd = base.slice();
      odd[24] = depth;
      odd[25] = colour;
      add(`odd-png-depth${depth}-colour${colour}.png`, fixPngCrcs(odd), 'refuse', `bit depth ${depth} with colour type ${colour}: not defined`);
    }
    const rows = zeroRows(4, 4);
    add('lie-png-no-idat.png', png(ihdr(4, 4), pngChunk('IEND', new Uint8Array(0))), 'refuse', 'no IDAT chunk');
    add('lie-png-no-plte.png', png(ihdr(4, 4, 8, 3), pngChunk('IDAT', rows), pngChunk('IEND', new Uint8Array(0))), 'refuse', 'palette image without PLTE');
    add('lie-png-unknown-critical.png', png(ihdr(4, 4), pngChunk('ABCD', Uint8Array.of(1)), pngChunk('IDAT', rows),
      pngChunk('IEND', new Uint8Array(0))), 'refuse', 'an unknown critical chunk');
    add('lie-png-idat-first.png', png(pngChunk('IDAT', rows), ihdr(4, 4), pngChunk('IEND', new Uint8Array(0))), 'refuse', 'IDAT before IHDR');
    add('lie-png-filter9.png', png(ihdr(2, 1), pngChunk('IDAT', new Uint8Array(deflateSync(Uint8Array.of(9, 1, 2)))),
      pngChunk('IEND', new Uint8Array(0))), 'refuse', 'a row with filter type 9');
    add('lie-png-palette-index.png', png(ihdr(2, 1, 8, 3), pngChunk('PLTE', Uint8Array.of(1, 2, 3)),
      pngChunk('IDAT', new Uint8Array(deflateSync(Uint8Array.of(0, 0, 7)))), pngChunk('IEND', new Uint8Array(0))),
    'refuse', 'a pixel using colour 7 of a 1-colour palette');
  }
  {
    const base = fixture('images/grey8.tif');
    const size = base.length;
    add('lie-tif-bytecount.tif', setTiffValue(base, 279, 10 * size), 'refuse', 'StripByteCounts far beyond the file');
    add('lie-tif-offset.tif', setTiffValue(base, 273, 10 * size), 'refuse', 'StripOffsets beyond the file');
    add('lie-tif-width.tif', setTiffValue(base, 256, 230), 'refuse', 'ImageWidth ten times the uncompressed data');
    add('lie-tif-compression99.tif', setTiffValue(base, 259, 99), 'refuse', 'an unknown compression code');
    add('lie-tif-photometric7.tif', setTiffValue(base, 262, 7), 'refuse', 'an undefined photometric interpretation');
    add('odd-tif-bits12.tif', setTiffValue(base, 258, 12), 'refuse', '12-bit packed samples (not read)');
    add('odd-tif-bits24.tif', setTiffValue(base, 258, 24), 'refuse', '24-bit integer samples');
    add('lie-tif-spp0.tif', setTiffValue(base, 277, 0), 'refuse', 'zero samples per pixel');
    add('lie-tif-rows0.tif', setTiffValue(base, 278, 0), 'read', 'RowsPerStrip 0, read as the whole image (libtiff does the same)');
    const ifdBeyond = base.slice();
    new DataView(ifdBeyond.buffer).setUint32(4, 10 * size, true);
    add('lie-tif-ifd-beyond.tif', ifdBeyond, 'refuse', 'the first IFD offset beyond the file');
    const loop = base.slice();
    const { ifd, entries } = tiffEntries(loop);
    new DataView(loop.buffer).setUint32(ifd + 2 + 12 * entries.length, ifd, true);
    add('lie-tif-ifd-loop.tif', loop, 'refuse', 'the page chain points back to itself');
    const noPages = base.slice();
    new DataView(noPages.buffer).setUint32(4, 0, true);
    add('zero-tif-no-pages.tif', noPages, 'refuse', 'the first IFD offset is 0: no page');
    add('lie-tif-palette-no-map.tif', setTiffValue(base, 262, 3), 'refuse', 'a palette page without ColorMap');
    const tiles = fixture('variants/be_float32_tiles.tif');
    add('lie-tif-tile-huge.tif', setTiffValue(tiles, 322, 65535 * 16), 'refuse', 'TileWidth of a million pixels on a 40 x 33 image');
    add('lie-tif-tile-zero.tif', setTiffValue(tiles, 323, 0), 'refuse', 'TileLength 0');
  }
  {
    const base = fixture('images/rgb444.jpg');
    const sof = base.findIndex((b, i) => b === 0xff && base[i + 1] === 0xc0);
    const tall = base.slice();
    new DataView(tall.buffer).setUint16(sof + 5, 2 * new DataView(base.buffer).getUint16(sof + 5));
    add('lie-jpeg-height-double.jpg', tall, 'refuse', 'SOF twice as tall as the scan data');
    const comps = base.slice();
    comps[sof + 9] = 2;
    add('lie-jpeg-2-components.jpg', comps, 'refuse', 'SOF says 2 components, the scan has 3');
    const precision = base.slice();
    precision[sof + 4] = 12;
    add('odd-jpeg-12bit.jpg', precision, 'refuse', 'SOF says 12-bit samples');
    const sos = base.findIndex((b, i) => b === 0xff && base[i + 1] === 0xda);
    add('lie-jpeg-scan-before-frame.jpg', concat(base.subarray(0, 2), base.subarray(sos)), 'refuse', 'scan data with no frame header');
    add('lie-jpeg-soi-only.jpg', Uint8Array.of(0xff, 0xd8, 0xff, 0xd9), 'refuse', 'start and end markers only');
  }

  // --- Huge and zero sizes (headers only; no pixel data to speak of).
  const iend = pngChunk('IEND', new Uint8Array(0));
  add('huge-png-100000.png', png(ihdr(100_000, 100_000), pngChunk('IDAT', zeroRows(1, 1)), iend), 'refuse', '10^10 pixels claimed', true);
  add('huge-png-2pow31.png', png(ihdr(2 ** 31, 1), pngChunk('IDAT', zeroRows(1, 1)), iend), 'refuse', 'width 2^31', true);
  add('huge-png-20000-valid.png', png(ihdr(20_000, 20_000), pngChunk('IDAT', zeroRows(20_000, 64)), iend), 'refuse',
    '400 MP of zeros: over the memory limit (its first 64 rows only are present)', true);
  add('huge-tif-65535.tif', craftTiff(greyTags(65_535, 65_535, 1), Uint8Array.of(0)), 'refuse', '65535 x 65535 claimed', true);
  add('huge-tif-4g.tif', craftTiff(greyTags(0xffffffff, 0xffffffff, 1), Uint8Array.of(0)), 'refuse', '(2^32 - 1)^2 pixels claimed', true);
  {
    const sof = Uint8Array.of(0xff, 0xc0, 0, 17, 8, 0xff, 0xff, 0xff, 0xff, 3, 1, 0x11, 0, 2, 0x11, 0, 3, 0x11, 0);
    add('huge-jpeg-65535.jpg', concat(Uint8Array.of(0xff, 0xd8), sof, Uint8Array.of(0xff, 0xd9)), 'refuse', '65535 x 65535 claimed', true);
    const zeroW = sof.slice();
    zeroW.set([0, 0], 7);
    add('zero-jpeg-width.jpg', concat(Uint8Array.of(0xff, 0xd8), zeroW, Uint8Array.of(0xff, 0xd9)), 'refuse', 'width 0');
    const zeroH = sof.slice();
    zeroH.set([0, 0], 5);
    add('zero-jpeg-height-dnl.jpg', concat(Uint8Array.of(0xff, 0xd8), zeroH, Uint8Array.of(0xff, 0xd9)), 'refuse', 'height 0 (given later by DNL)');
  }
  {
    // BigTIFF claiming 2^40 columns: header 16 bytes, IFD with 64-bit counts and values.
    const out = new Uint8Array(16 + 8 + 20 * 4 + 8);
    const v = new DataView(out.buffer);
    out.set(ascii('II+\0'));
    v.setUint16(4, 8, true);
    v.setBigUint64(8, 16n, true);
    v.setBigUint64(16, 4n, true);
    [[256, 16, 2n ** 40n], [257, 16, 1n], [258, 3, 8n], [262, 3, 1n]].forEach(([tag, type, value], k) => {
      const at = 24 + 20 * k;
      v.setUint16(at, Number(tag), true);
      v.setUint16(at + 2, Number(type), true);
      v.setBigUint64(at + 4, 1n, true);
      if (type === 3) v.setUint16(at + 12, Number(value), true);
      else v.setBigUint64(at + 12, value as bigint, true);
    });
    add('huge-bigtiff-2pow40.tif', out, 'refuse', 'BigTIFF with 2^40 columns', true);
  }
  add('zero-empty.png', new Uint8Array(0), 'refuse', 'an empty file');
  add('zero-one-byte.tif', Uint8Array.of(0x49), 'refuse', 'one byte');
  add('zero-png-signature-only.png', png(), 'refuse', 'the PNG signature and nothing else');
  add('zero-png-width0.png', png(ihdr(0, 10), pngChunk('IDAT', zeroRows(1, 1)), iend), 'refuse', 'width 0');
  add('zero-tif-height0.tif', craftTiff(greyTags(4, 0, 4), new Uint8Array(4)), 'refuse', 'height 0');
  {
    // Ten pages of 10000 x 10000 claimed over the same 4 bytes: each alone passes the first look, together they cannot.
    const one = craftTiff(greyTags(10_000, 10_000, 1, 8), Uint8Array.of(0x78, 0x9c, 3, 0));
    add('huge-tif-pages-share.tif', one, 'refuse', 'a 10000 x 10000 Deflate page whose strip is 4 bytes', true);
  }

  // --- Bombs.
  const small = fixture('images/grey8.png');
  const head = small.subarray(0, 33); // signature + IHDR
  const rest = small.subarray(33);
  const bomb = zeroBombZlib(128); // 2 GiB of zeros in about 2 MB
  add('bomb-iccp.png', concat(head, pngChunk('iCCP', concat(ascii('icc\0\0'), bomb)), rest), 'read',
    'an iCCP profile that inflates to 2 GiB: skipped unread', true);
  add('bomb-ztxt.png', concat(head, pngChunk('zTXt', concat(ascii('Comment\0\0'), bomb)), rest), 'read',
    'a zTXt text that inflates to 2 GiB: skipped unread', true);
  add('bomb-itxt.png', concat(head, pngChunk('iTXt', concat(ascii('Comment\0\x01\0\0\0'), bomb)), rest), 'read',
    'a compressed iTXt text that inflates to 2 GiB: skipped unread', true);
  add('bomb-idat.png', png(ihdr(23, 17), pngChunk('IDAT', bomb), iend), 'refuse', 'IDAT that inflates to 2 GiB for a 23 x 17 image', true);
  add('bomb-tif-deflate.tif', craftTiff(greyTags(23, 17, bomb.length, 8), bomb), 'refuse',
    'a Deflate strip that inflates to 2 GiB for a 23 x 17 image', true);
  {
    // An LZW strip of the codes 0, 258, 259, ... 4093: each the string before it plus one byte (TIFF 6.0
    // section 13's KwKwK case), so about 4000 codes expand to 1 + 2 + ... + 3837 bytes, about 7 MB.
    const out: number[] = [];
    let acc = 0;
    let bits = 0;
    let width = 9;
    const put = (code: number) => {
      acc = (acc << width) | code;
      bits += width;
      while (bits >= 8) {
        out.push((acc >>> (bits - 8)) & 255);
        bits -= 8;
      }
      acc &= (1 << bits) - 1;
    };
    put(256);
    put(0);
    for (let code = 258; code < 4094; code++) {
      put(code);
      if (code + 1 >= (1 << width) - 1 && width < 12) width++;
    }
    put(257);
    if (bits > 0) out.push((acc << (8 - bits)) & 255);
    add('bomb-tif-lzw.tif', craftTiff(greyTags(23, 17, out.length, 5), Uint8Array.from(out)), 'refuse',
      'an LZW strip that expands to about 7 MB for 391 pixels', true);
  }

  {
    // Chunk floods: 300,000 empty IDAT chunks before the real one, and the image data split into 1-byte IDATs.
    const idat = pngChunks(small).find((c) => c.type === 'IDAT') as PngChunkAt;
    const data = small.subarray(idat.start + 8, idat.start + 8 + idat.length);
    const empty = pngChunk('IDAT', new Uint8Array(0));
    const flood = new Uint8Array(300_000 * empty.length);
    for (let k = 0; k < 300_000; k++) flood.set(empty, k * empty.length);
    add('bomb-png-empty-idats.png', concat(head, flood, pngChunk('IDAT', data), iend), 'read',
      '300,000 empty IDAT chunks (3.6 MB) before the image data', true);
    const ones = Array.from(data, (b) => pngChunk('IDAT', Uint8Array.of(b)));
    add('read-png-1-byte-idats.png', concat(head, ...ones, iend), 'read', 'the image data in 1-byte IDAT chunks');
  }

  // --- Valid but unusual files: they must be read.
  const readable: [string, string][] = [
    ['read-adam7-tiny.png', 'variants/adam7_tiny_rgb8.png'], ['read-grey2.png', 'variants/grey2.png'],
    ['read-grey1.png', 'images/bilevel.png'], ['read-palette1.png', 'variants/palette1.png'],
    ['read-adam7-greyalpha16.png', 'variants/adam7_greyalpha16.png'], ['read-ycck.jpg', 'variants/ycck.jpg'],
    ['read-progressive-restart.jpg', 'variants/progressive_restart.jpg'], ['read-float16.tif', 'variants/float16.tif'],
    ['read-bigtiff-pages.tif', 'variants/bigtiff_multipage.tif'], ['read-bilevel-packbits.tif', 'variants/packbits_bilevel.tif'],
    ['read-uint32.tif', 'variants/uint32.tif'], ['read-float64.tif', 'variants/float64_deflate.tif'],
    ['read-planar-tiles.tif', 'variants/planar_rgb8_tiles_deflate.tif'], ['read-cmyk.tif', 'variants/cmyk8.tif'],
  ];
  for (const [file, rel] of readable) add(file, fixture(rel), 'read', `${rel}, a valid file`);
  add('read-png-after-iend.png', concat(small, ascii('trailing bytes after IEND')), 'read', 'bytes after IEND are ignored');
  add('read-png-bad-text-crc.png', concat(head, (() => {
    const t = pngChunk('tEXt', ascii('Comment\0hello'));
    t[t.length - 1] ^= 1;
    return t;
  })(), rest), 'read', 'an unused text chunk with a wrong CRC is skipped, as libpng does');
  add('read-jpeg-after-eoi.jpg', concat(fixture('images/rgb444.jpg'), ascii('camera trailer')), 'read', 'bytes after EOI');
  add('read-png-1x1.png', png(ihdr(1, 1), pngChunk('IDAT', zeroRows(1, 1)), iend), 'read', 'one pixel');
  add('read-tif-1x1.tif', craftTiff(greyTags(1, 1, 1), Uint8Array.of(200)), 'read', 'one pixel');
  {
    // Fifty tiny pages, one after the other (classic TIFF, each IFD pointing to the next).
    const pages = 50;
    const entries = greyTags(4, 4, 16);
    const pageBytes = 16 + 2 + 12 * (entries.length + 1) + 4;
    const out = new Uint8Array(8 + pages * pageBytes);
    const v = new DataView(out.buffer);
    out.set(ascii('II*\0'));
    v.setUint32(4, 8 + 16, true);
    for (let p = 0; p < pages; p++) {
      const data = 8 + p * pageBytes;
      out.fill(p * 5, data, data + 16);
      const ifdAt = data + 16;
      const all = [...entries, [273, 4, data] as [number, number, number]].sort((a, b) => a[0] - b[0]);
      v.setUint16(ifdAt, all.length, true);
      all.forEach(([tag, type, value], k) => {
        const at = ifdAt + 2 + 12 * k;
        v.setUint16(at, tag, true);
        v.setUint16(at + 2, type, true);
        v.setUint32(at + 4, 1, true);
        if (type === 3) v.setUint16(at + 8, value, true);
        else v.setUint32(at + 8, value, true);
      });
      v.setUint32(ifdAt + 2 + 12 * all.length, p + 1 < pages ? 8 + (p + 1) * pageBytes + 16 : 0, true);
    }
    add('read-tif-50-pages.tif', out, 'read', 'fifty 4 x 4 pages');
    const secondBroken = out.slice();
    const ifd2 = 8 + pageBytes + 16;
    new DataView(secondBroken.buffer).setUint16(ifd2, 60_000, true); // page 2 claims 60000 entries
    add('lie-tif-page2-directory.tif', secondBroken, 'refuse', 'the second page directory runs past the end of the file');
  }
  return cases;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const dir = process.argv[2] ?? 'corpus-out';
  const cases = makeCorpus(dir);
  console.log(`${cases.length} files in ${dir}`);
}
