import { InputError } from '../common/errors.ts';
import { MAX_PIXELS } from './types.ts';

/** Accepted input formats, named in every "unknown format" message. */
export const ACCEPTED_FORMATS = 'PNG, JPEG (baseline or progressive; grey, RGB or CMYK) and TIFF ' +
  '(uncompressed, LZW, Deflate or PackBits; 1-32-bit unsigned integer or 32/64-bit float; grey, RGB, CMYK or palette)';

/** What to do about a file whose size is over MAX_PIXELS. */
const TOO_LARGE_HINT = 'Crop the region of interest or bin the image (e.g. 2x2) before loading it';

/**
 * Refuses a header size of zero, or of more than MAX_PIXELS pixels, before any pixel buffer exists.
 * `what` names the file (and page) in the message; the limit is named in it.
 */
export function checkDecodedSize(what: string, format: string, width: number, height: number): void {
  if (!Number.isSafeInteger(width) || !Number.isSafeInteger(height) || width < 1 || height < 1) {
    throw new InputError(`${what}: the ${format} header gives an image size of ${width} x ${height} pixels`,
      'The file is damaged or empty; export the image again');
  }
  const pixels = width * height;
  if (pixels > MAX_PIXELS) {
    throw new InputError(
      `${what}: the ${format} image is ${width} x ${height} pixels (${megapixels(pixels)} MP), ` +
        `more than the ${MAX_PIXELS / 1e6} MP limit of this program`, TOO_LARGE_HINT);
  }
}

/** Refuses pages whose pixels together pass MAX_PIXELS (all pages of a stack are held at once). */
export function checkTotalPixels(what: string, format: string, pages: number, pixels: number): void {
  if (pixels > MAX_PIXELS) {
    throw new InputError(`${what}: the ${pages} ${format} pages hold ${megapixels(pixels)} MP together, ` +
      `more than the ${MAX_PIXELS / 1e6} MP limit of this program`,
      'Load the pages one at a time, or split the stack into smaller files');
  }
}

const megapixels = (pixels: number) => (pixels >= 1e7 ? (pixels / 1e6).toFixed(0) : (pixels / 1e6).toFixed(1));

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
