import { decode as decodeTiffLib } from 'tiff';
import type { TiffIfd } from 'tiff';
import { InputError } from '../common/errors.ts';
import { decodeFailure } from './checks.ts';
import { tiffPixelSizeUm } from './pixelSize.ts';
import { paletteToPlanes, toPlanes } from './samples.ts';
import { readTiffHeaders, type TiffPageHeader } from './tiffHeader.ts';
import { makeImage, MAX_PIXELS, type Image } from './types.ts';

const FORMAT = 'TIFF';

const pageLabel = (name: string, index: number) => (index === 0 ? name : `${name} page ${index + 1}`);

/**
 * Decodes TIFF pages with the `tiff` library after our own header checks (tiffHeader.ts).
 * `pages` undefined decodes every page; otherwise the listed page indices (0-based).
 * 8/16-bit unsigned samples become [0, 1] (encoding 'srgb' for 8-bit, 'linear' for 16-bit); 32-bit float samples are kept as
 * stored with encoding 'linear'; palette pages become RGB; alpha and other extra samples are dropped.
 */
export function decodeTiffPages(bytes: Uint8Array, name: string, pages?: number[]): Image[] {
  const headers = readTiffHeaders(bytes, name);
  const wanted = pages ?? headers.map((h) => h.index);
  for (const p of wanted) {
    if (!Number.isInteger(p) || p < 0 || p >= headers.length) {
      throw new InputError(`${name}: page index ${p} (0-based) was asked for but the TIFF has ${headers.length} page(s)`,
        `Give a page index from 0 to ${headers.length - 1}`);
    }
  }
  const totalPixels = wanted.reduce((sum, p) => sum + headers[p].width * headers[p].height, 0);
  if (totalPixels > MAX_PIXELS) {
    throw new InputError(`${name}: the ${wanted.length} TIFF pages hold ${(totalPixels / 1e6).toFixed(0)} MP together, ` +
      `more than the ${MAX_PIXELS / 1e6} MP limit`, 'Load the pages one at a time, or split the stack into smaller files');
  }
  // The library returns the asked pages once each, in file order.
  const unique = [...new Set(wanted)].sort((a, b) => a - b);
  let ifds: TiffIfd[];
  try {
    ifds = decodeTiffLib(bytes, { pages: unique });
  } catch (e) {
    throw decodeFailure(name, FORMAT, e);
  }
  if (ifds.length !== unique.length) {
    throw decodeFailure(name, FORMAT, new Error(`${ifds.length} pages decoded, ${unique.length} expected`));
  }
  const byIndex = new Map(unique.map((p, i) => [p, ifds[i]]));
  // ImageJ writes its description (with the length unit) on the first page only.
  const stackDescription = headers[0].imageDescription?.startsWith('ImageJ=') ? headers[0].imageDescription : undefined;
  return wanted.map((p) => pageToImage(byIndex.get(p) as TiffIfd, headers[p], name, stackDescription));
}

function pageToImage(ifd: TiffIfd, header: TiffPageHeader, name: string, stackDescription?: string): Image {
  const what = pageLabel(name, header.index);
  const pixels = header.width * header.height;
  const { data } = ifd;
  if (ifd.width !== header.width || ifd.height !== header.height || data.length !== pixels * header.samplesPerPixel) {
    throw decodeFailure(what, FORMAT, new Error(`${data.length} samples decoded, ${pixels * header.samplesPerPixel} expected`));
  }
  const float = header.sampleFormat === 3;
  let planes: Float32Array[];
  let bitDepth: 8 | 16 | 32 = float ? 32 : (header.bitsPerSample as 8 | 16);
  if (header.palette) {
    const colours = ifd.palette ?? [];
    // libtiff's rule (tif_getimage.c checkcmap, from memory): a ColorMap whose entries all fit in
    // 8 bits is an old 8-bit map, otherwise the top byte of each 16-bit entry is the colour.
    const eightBit = colours.every((c) => c.every((v) => v < 256));
    const palette = colours.map((c) => (eightBit ? c : c.map((v) => v >> 8)));
    const result = paletteToPlanes(data, pixels, palette, 255);
    if (!Array.isArray(result)) {
      throw decodeFailure(what, FORMAT, new Error(`colour index ${result.badIndex} is outside the ${palette.length}-colour map`));
    }
    planes = result;
    bitDepth = 8;
  } else {
    const maxCode = float ? 0 : 2 ** header.bitsPerSample - 1;
    planes = toPlanes(data, pixels, header.samplesPerPixel, header.colourChannels, maxCode);
  }
  const pixelSizeUmPerPx = tiffPixelSizeUm(header.xResolution, header.yResolution, header.resolutionUnit,
    header.imageDescription ?? stackDescription);
  return makeImage({
    width: header.width,
    height: header.height,
    channels: header.palette ? 3 : header.colourChannels,
    planes,
    bitDepth,
    // 8-bit files are display images (sRGB); 16-bit and float are linear camera data (common practice, no source).
    encoding: bitDepth === 8 ? 'srgb' : 'linear',
    ...(pixelSizeUmPerPx !== undefined ? { pixelSizeUmPerPx } : {}),
    source: { name, page: header.index },
  });
}
