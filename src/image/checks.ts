import { InputError } from '../common/index.ts';
import { MAX_DECODE_BYTES } from './types.ts';

/** Accepted input formats, named in every "unknown format" message. */
export const ACCEPTED_FORMATS = 'PNG, JPEG (baseline or progressive; grey, RGB or CMYK) and TIFF ' +
  '(uncompressed, LZW, Deflate or PackBits; 1-32-bit unsigned integer or 32/64-bit float; grey, RGB, CMYK or palette)';

/**
 * Refuses a header size of zero, or one that cannot be a real image, before anything else is read.
 * `what` names the file (and page) in the message.
 */
export function checkDecodedSize(what: string, format: string, width: number, height: number): void {
  if (!Number.isSafeInteger(width) || !Number.isSafeInteger(height) || width < 1 || height < 1) {
    throw new InputError(`${what}: the ${format} header gives an image size of ${width} x ${height} pixels`,
      'The file is damaged or empty; export the image again');
  }
}

/** Bytes in megabytes for messages (1 MB = 10^6 bytes), at most 3 significant digits. */
export const megabytes = (bytes: number) =>
  bytes >= 1e12 ? `${Math.round(bytes / 1e9)} GB` : bytes >= 1e9 ? `${(bytes / 1e9).toPrecision(3)} GB`
    : `${Math.max(1, Math.round(bytes / 1e6))} MB`;

const megapixels = (pixels: number) => (pixels >= 1e7 ? (pixels / 1e6).toFixed(0) : (pixels / 1e6).toFixed(1));

/** "is W x H pixels (N MP)", for checkDecodeBytes. */
export const sizeWords = (width: number, height: number) => `is ${width} x ${height} pixels (${megapixels(width * height)} MP)`;

/** "has N pages, M MP in all", for checkDecodeBytes on several pages. */
export const pagesWords = (pages: number, pixels: number) => `has ${pages} pages, ${megapixels(pixels)} MP in all,`;

/**
 * Refuses an image whose decoding would take more than `maxBytes` of memory (the float planes and
 * the decoder's own buffers, `bytesNeeded`, estimated from the header), before any pixel buffer exists.
 * The message names the size and the limit; `maxBytes` below MAX_DECODE_BYTES is what is left of it
 * after the images loaded before.
 */
export function checkDecodeBytes(what: string, format: string, size: string, bytesNeeded: number,
  maxBytes = MAX_DECODE_BYTES): void {
  if (bytesNeeded <= maxBytes) return;
  const limit = maxBytes < MAX_DECODE_BYTES
    ? `the ${megabytes(Math.max(0, maxBytes))} left of this program's ${megabytes(MAX_DECODE_BYTES)} limit after the images before it`
    : `this program's ${megabytes(MAX_DECODE_BYTES)} limit`;
  throw new InputError(`${what}: the ${format} image ${size} ` +
    `and would take ${megabytes(bytesNeeded)} of memory to decode, more than ${limit}`,
  'Crop the region of interest or bin the image (e.g. 2x2) before loading it, or load fewer images at once');
}

/**
 * A damaged or cut-short file: `why` says in plain words what is wrong (no library text).
 */
export function corrupt(what: string, format: string, why: string): InputError {
  return new InputError(`${what}: the ${format} file is damaged: ${why}`,
    'Copy the file again from the microscope computer or export it again');
}

/** An InputError for a valid file whose kind of samples or layout the program does not read. */
export function unsupported(what: string, format: string, detail: string, hint: string): InputError {
  return new InputError(`${what}: ${format} with ${detail} is not supported`, hint);
}
