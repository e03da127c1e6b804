import jpeg from 'jpeg-js';
import { checkDecodeBytes, checkDecodedSize, corrupt, sizeWords, unsupported } from './checks.ts';
import { toPlanes } from './samples.ts';
import { makeImage, type Image } from './types.ts';

const FORMAT = 'JPEG';

/**
 * Bytes per pixel and colour component that jpeg-js holds while decoding (its coefficient blocks,
 * 2 bytes, its component rows, 1 byte, and its colour-converted copy, 1 byte; read from its source,
 * measured at 28.5 bytes per RGB pixel with the planes), besides its 3-byte RGB output.
 */
const JPEG_JS_BYTES_PER_COMPONENT = 4;

/** ITU-T T.81 frame markers: 0xC0 baseline, 0xC1 extended, 0xC2 progressive (all Huffman coded). */
const DECODABLE_SOF = new Set([0xc0, 0xc1, 0xc2]);
/** Other frame markers: lossless, hierarchical, arithmetic coded (T.81 Table B.1). 0xC4/C8/CC are not frames. */
const OTHER_SOF = new Set([0xc3, 0xc5, 0xc6, 0xc7, 0xc9, 0xca, 0xcb, 0xcd, 0xce, 0xcf]);
/** Markers without a length field (T.81 B.1.1.3): TEM, RST0-7, SOI, EOI. */
const STANDALONE = (m: number) => m === 0x01 || (m >= 0xd0 && m <= 0xd9);

export interface JpegHeader {
  width: number;
  height: number;
  /** 1 grey, 3 YCbCr or RGB, 4 CMYK or YCCK. */
  components: number;
  /** Whether the three components are stored as RGB rather than YCbCr (decides jpeg-js colorTransform). */
  storedAsRgb: boolean;
}

/**
 * Walks the marker segments up to the frame header (SOF) and reads precision, size and component
 * count; refuses impossible sizes and kinds jpeg-js cannot decode. Four components are read
 * only with an Adobe APP14 marker, whose transform flag says CMYK (0) or YCCK (2), as libjpeg does
 * (jdapimin.c, from memory); CMYK without one has no agreed meaning.
 */
export function readJpegHeader(bytes: Uint8Array, what: string): JpegHeader {
  let jfif = false;
  let adobeTransform: number | undefined;
  let pos = 2;
  while (pos + 4 <= bytes.length) {
    if (bytes[pos] !== 0xff) throw corrupt(what, FORMAT, `its segment structure is broken at byte ${pos}`);
    const marker = bytes[pos + 1];
    if (marker === 0xff) { pos += 1; continue; } // fill byte
    if (STANDALONE(marker)) { pos += 2; continue; }
    const length = (bytes[pos + 2] << 8) | bytes[pos + 3];
    const body = pos + 4;
    if (length < 2 || pos + 2 + length > bytes.length) break;
    if (marker === 0xe0 && ascii(bytes, body, 5) === 'JFIF\0') jfif = true;
    if (marker === 0xee && ascii(bytes, body, 5) === 'Adobe' && length >= 14) adobeTransform = bytes[body + 11];
    if (DECODABLE_SOF.has(marker) || OTHER_SOF.has(marker)) {
      if (length < 8) break;
      const precision = bytes[body];
      const height = (bytes[body + 1] << 8) | bytes[body + 2];
      const width = (bytes[body + 3] << 8) | bytes[body + 4];
      const components = bytes[body + 5];
      if (height === 0) {
        throw unsupported(what, FORMAT, 'the height given later in the file (DNL marker)', 'Re-save it as a plain baseline JPEG');
      }
      checkDecodedSize(what, FORMAT, width, height);
      if (OTHER_SOF.has(marker)) {
        throw unsupported(what, FORMAT, 'lossless, hierarchical or arithmetic coding',
          'Save it as a baseline or progressive JPEG, or better as PNG or TIFF');
      }
      if (precision !== 8) {
        throw unsupported(what, FORMAT, `${precision}-bit samples`, 'Save it as 16-bit TIFF or PNG instead');
      }
      if (components === 4 && adobeTransform === undefined) {
        throw unsupported(what, FORMAT, '4 colour components and no Adobe marker to say what they mean',
          'Convert it to RGB or grey');
      }
      if (components !== 1 && components !== 3 && components !== 4) {
        throw unsupported(what, FORMAT, `${components} colour components`, 'Convert it to RGB or grey');
      }
      const ids = components === 3 ? ascii(bytes, body + 6, 1) + ascii(bytes, body + 9, 1) + ascii(bytes, body + 12, 1) : '';
      // libjpeg's rule (jdapimin.c default_decompress_parms, from memory): JFIF means YCbCr, an Adobe
      // marker's transform flag decides, otherwise component ids "RGB" mean RGB.
      const storedAsRgb = components === 3 && !jfif && (adobeTransform !== undefined ? adobeTransform === 0 : ids === 'RGB');
      return { width, height, components, storedAsRgb };
    }
    if (marker === 0xda) break; // scan data before any frame header
    pos += 2 + length;
  }
  throw corrupt(what, FORMAT, 'the file ends, or its image data starts, before the image size is given');
}

function ascii(bytes: Uint8Array, start: number, length: number): string {
  return String.fromCharCode(...bytes.subarray(start, start + length));
}

/**
 * Whether an EOI marker (0xFFD9) follows the last start-of-scan marker (0xFFDA). Inside scan data a
 * 0xFF byte is always followed by 0x00 or a restart marker (T.81 B.1.1.5), so 0xFFD9 there is the end;
 * bytes some cameras append after EOI are allowed.
 */
function eoiAfterLastScan(bytes: Uint8Array): boolean {
  let lastScan = -1;
  for (let i = bytes.length - 2; i >= 0; i--) {
    if (bytes[i] === 0xff && bytes[i + 1] === 0xda) {
      lastScan = i;
      break;
    }
  }
  for (let i = Math.max(lastScan, 0); i < bytes.length - 1; i++) {
    if (bytes[i] === 0xff && bytes[i + 1] === 0xd9) return true;
  }
  return false;
}

/** Whether the last marker of the file is EOI (0xFFD9), allowing trailing zero padding. */
function endsWithEoi(bytes: Uint8Array): boolean {
  let end = bytes.length;
  while (end > 2 && bytes[end - 1] === 0) end--;
  return bytes[end - 2] === 0xff && bytes[end - 1] === 0xd9;
}

/**
 * Why jpeg-js refused the data, in plain words: its own messages are programmer's text and are never
 * shown. A file that does not end with EOI was most likely cut short.
 */
function jpegProblem(bytes: Uint8Array, e: unknown): string {
  const text = e instanceof Error ? e.message : '';
  const cut = endsWithEoi(bytes) ? '' : '; the file does not end with its end marker (EOI), so it was probably cut short';
  if (/huffman|ACn encoding|marker|EOF|DQT|sampling factor|offset/i.test(text)) {
    return `its compressed image data is broken and cannot be decoded${cut}`;
  }
  return `its image data cannot be decoded${cut}`;
}

/**
 * Decodes a baseline or progressive 8-bit JPEG (grey, YCbCr/RGB colour, or CMYK/YCCK with an Adobe
 * marker; restart markers allowed) with jpeg-js, strict mode (missing data is an error, not grey
 * blocks). Codes 0..255 become [0, 1]; encoding 'srgb'; no pixel size (JFIF density is almost always
 * a screen placeholder). EXIF orientation is not applied. CMYK becomes RGB without a colour profile,
 * R = (255 - C)(255 - K)/255 and likewise for G and B (jpeg-js's conversion; Pillow's convert('RGB')
 * uses the same formula).
 */
export function decodeJpeg(bytes: Uint8Array, name: string, maxBytes?: number): Image {
  const header = readJpegHeader(bytes, name);
  const pixels = header.width * header.height;
  const channels = header.components === 1 ? 1 : 3;
  checkDecodeBytes(name, FORMAT, sizeWords(header.width, header.height),
    pixels * (JPEG_JS_BYTES_PER_COMPONENT * header.components + 3 + 4 * channels), maxBytes);
  let rgb: Uint8Array;
  try {
    const decoded = jpeg.decode(bytes, {
      useTArray: true,
      formatAsRGBA: false,
      tolerantDecoding: false,
      colorTransform: header.components === 3 ? !header.storedAsRgb : undefined,
      // Our own memory check already ran; these only stop jpeg-js refusing images inside MAX_DECODE_BYTES.
      maxResolutionInMP: Math.ceil(pixels / 1e6) + 1,
      maxMemoryUsageInMB: Math.ceil((pixels * (8 * header.components + 6)) / 2 ** 20) + 64,
    });
    if (decoded.width !== header.width || decoded.height !== header.height) throw new Error('size differs from SOF');
    rgb = decoded.data;
  } catch (e) {
    throw corrupt(name, FORMAT, jpegProblem(bytes, e));
  }
  if (!eoiAfterLastScan(bytes)) {
    throw corrupt(name, FORMAT, 'the file ends without its end marker (EOI), so it was cut short and its last rows may be missing');
  }
  return makeImage({
    width: header.width,
    height: header.height,
    channels,
    // jpeg-js returns three samples per pixel even for grey (all equal); keep the first.
    planes: toPlanes(rgb, pixels, 3, channels, 255),
    bitDepth: 8,
    encoding: 'srgb',
    source: { name },
  });
}
