import { InputError } from '../common/errors.ts';
import { detectFormat } from './format.ts';
import { decodeJpeg } from './jpegDecode.ts';
import { decodePng } from './pngDecode.ts';
import { decodeTiffPages } from './tiffDecode.ts';
import type { Image } from './types.ts';

function checkBytes(bytes: Uint8Array, name: string): void {
  if (!(bytes instanceof Uint8Array)) {
    throw new InputError(`${name}: image data must be a Uint8Array of the file's bytes`, 'Read the file as binary');
  }
}

/**
 * Every page of an image file: all pages of a TIFF (in file order), the single image of a PNG or
 * JPEG. The format comes from the first bytes, not the file name.
 *
 * Values: 8/16-bit integer samples divided by 255 / 65535 into [0, 1] (encoding 'srgb' for 8-bit, 'linear'
 * for 16-bit: scientific cameras store 16-bit data linearly); 32-bit float
 * TIFF samples kept as stored (encoding 'linear'). Alpha is dropped; palette images become RGB.
 * `pixelSizeUmPerPx` is set from TIFF XResolution/YResolution + ResolutionUnit (inch or cm; ImageJ
 * `unit=` descriptions) or PNG pHYs (metre), except the 72/96 dpi placeholders and non-square pixels.
 *
 * Sizes are checked from the headers before any pixel buffer is made: a page of zero or more than
 * MAX_PIXELS pixels, or TIFF pages summing to more, is refused.
 *
 * @param bytes the whole file
 * @param name file name or label used in messages and `source.name`
 * @throws InputError for empty, truncated, corrupt, unknown or unsupported files (message names the
 *   file and the format and says what to do)
 */
export function decodeImagePages(bytes: Uint8Array, name: string): Image[] {
  checkBytes(bytes, name);
  switch (detectFormat(bytes, name)) {
    case 'png': return [decodePng(bytes, name)];
    case 'jpeg': return [decodeJpeg(bytes, name)];
    case 'tiff': return decodeTiffPages(bytes, name);
  }
}

/**
 * One page of an image file (see decodeImagePages for values, pixel size and checks). Only that
 * page's pixels are decoded.
 *
 * @param page 0-based page index; PNG and JPEG have only page 0
 * @throws InputError as decodeImagePages, or when the page does not exist
 */
export function decodeImage(bytes: Uint8Array, name: string, page = 0): Image {
  checkBytes(bytes, name);
  if (!Number.isInteger(page) || page < 0) {
    throw new InputError(`${name}: page ${page} is not a page number`, 'Give a page index of 0 or more');
  }
  const format = detectFormat(bytes, name);
  if (format === 'tiff') return decodeTiffPages(bytes, name, [page])[0];
  if (page !== 0) {
    throw new InputError(`${name}: page index ${page} (0-based) was asked for but a ${format.toUpperCase()} file has one image`,
      'Ask for page 0 or leave out the page');
  }
  return format === 'png' ? decodePng(bytes, name) : decodeJpeg(bytes, name);
}
