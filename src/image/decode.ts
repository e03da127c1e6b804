import { giveBack, InputError } from '../common/index.ts';
import { detectFormat } from './format.ts';
import { decodeJpeg } from './jpegDecode.ts';
import { decodePng, inflatePng } from './pngDecode.ts';
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
 * Values: unsigned integer samples of b bits divided by 2^b - 1 into [0, 1] (encoding 'srgb' up to
 * 8 bits, 'linear' above: scientific cameras store 16-bit data linearly); float TIFF samples kept as
 * stored (encoding 'linear'). Alpha is dropped; palette and CMYK images become RGB.
 * `pixelSizeUmPerPx` is set from TIFF XResolution/YResolution + ResolutionUnit (inch or cm; ImageJ
 * `unit=` descriptions) or PNG pHYs (metre), except the 72/96 dpi placeholders and non-square pixels.
 *
 * Sizes are checked from the headers before any pixel buffer is made: an image of zero pixels, or one
 * whose decoding (planes and decoder buffers, all pages together) would take more than `maxBytes`, is
 * refused with the limit named. Checksums (PNG CRC, zlib Adler-32) are checked, and compressed data
 * must give exactly the bytes the header implies: damaged data is refused, never decoded into numbers.
 *
 * @param bytes the whole file
 * @param name file name or label used in messages and `source.name`
 * @param maxBytes memory the decode may take, default MAX_DECODE_BYTES (less when other images are held)
 * @throws InputError for empty, truncated, corrupt, unknown or unsupported files (message names the
 *   file and the format and says what to do, in plain words)
 */
export function decodeImagePages(bytes: Uint8Array, name: string, maxBytes?: number): Image[] {
  checkBytes(bytes, name);
  switch (detectFormat(bytes, name)) {
    case 'png': return [decodePng(bytes, name, maxBytes)];
    case 'jpeg': return [decodeJpeg(bytes, name, maxBytes)];
    case 'tiff': return decodeTiffPages(bytes, name, undefined, maxBytes);
  }
}

/**
 * One page of an image file (see decodeImagePages for values, pixel size and checks). Only that
 * page's pixels are decoded.
 *
 * @param page 0-based page index; PNG and JPEG have only page 0
 * @param options `grey`: a colour image comes as one plane of Rec. 709 luma, bit for bit toGrey's (PNG writes
 *   it as it decodes; the others are decoded in colour first), for analyses that read grey only
 * @throws InputError as decodeImagePages, or when the page does not exist
 */
export function decodeImage(bytes: Uint8Array, name: string, page = 0, maxBytes?: number, options: { grey?: boolean } = {}): Image {
  checkBytes(bytes, name);
  if (!Number.isInteger(page) || page < 0) {
    throw new InputError(`${name}: page ${page} is not a page number`, 'Give a page index of 0 or more');
  }
  const format = detectFormat(bytes, name);
  const grey = options.grey ?? false;
  if (format === 'png' && page === 0) return decodePng(bytes, name, maxBytes, grey);
  let img: Image;
  if (format === 'tiff') img = decodeTiffPages(bytes, name, [page], maxBytes)[0];
  else if (page !== 0) {
    throw new InputError(`${name}: page index ${page} (0-based) was asked for but a ${format.toUpperCase()} file has one image`,
      'Ask for page 0 or leave out the page');
  } else img = decodeJpeg(bytes, name, maxBytes);
  return grey ? greyImage(img) : img;
}

/**
 * An image as one plane of luma, the bits toGrey gives, written over the red plane (no fourth plane: reading a
 * colour image near MAX_DECODE_BYTES stays within it); the other two planes are handed back for reuse.
 */
function greyImage(img: Image): Image {
  if (img.channels === 1) return img;
  const [r, g, b] = img.planes;
  for (let i = 0; i < r.length; i++) r[i] = 0.2126 * r[i] + 0.7152 * g[i] + 0.0722 * b[i];
  giveBack(g, b);
  return { ...img, channels: 1, planes: [r] };
}

/**
 * decodeImage, with a PNG's image data inflated first by the platform's Compression Streams where it has them
 * (inflatePng: about four times quicker than the JavaScript inflater in a browser), for callers that can wait
 * (the app's worker). The same image, the same bits and the same refusals as decodeImage.
 */
export async function decodeImageAsync(bytes: Uint8Array, name: string, page = 0, maxBytes?: number, options: { grey?: boolean } = {}): Promise<Image> {
  checkBytes(bytes, name);
  if (page === 0 && detectFormat(bytes, name) === 'png') {
    const inflated = await inflatePng(bytes, name, maxBytes, options.grey ?? false);
    if (inflated) return decodePng(bytes, name, maxBytes, options.grey ?? false, inflated);
  }
  return decodeImage(bytes, name, page, maxBytes, options);
}
