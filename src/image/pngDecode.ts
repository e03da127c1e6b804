import { convertIndexedToRgb, decode as decodePngLib } from 'fast-png';
import type { DecodedPng } from 'fast-png';
import { checkHeaderSize, decodeFailure, unsupported } from './checks.ts';
import { pngPixelSizeUm } from './pixelSize.ts';
import { toPlanes } from './samples.ts';
import { makeImage, type Image } from './types.ts';

const FORMAT = 'PNG';

/** PNG 1.2 / ISO 15948 IHDR colour types and the bit depths each allows. */
const COLOUR_TYPES: Record<number, { name: string; depths: number[] }> = {
  0: { name: 'grey', depths: [1, 2, 4, 8, 16] },
  2: { name: 'RGB', depths: [8, 16] },
  3: { name: 'palette', depths: [1, 2, 4, 8] },
  4: { name: 'grey + alpha', depths: [8, 16] },
  6: { name: 'RGBA', depths: [8, 16] },
};

export interface PngHeader {
  width: number;
  height: number;
  bitDepth: number;
  colourType: number;
}

/**
 * Reads IHDR (bytes 8..32: signature, chunk length, "IHDR", width, height, bit depth, colour type)
 * and refuses sizes over MAX_PIXELS and sample kinds the analysis does not take.
 */
export function readPngHeader(bytes: Uint8Array, what: string): PngHeader {
  if (bytes.length < 33) {
    throw decodeFailure(what, FORMAT, new Error(`only ${bytes.length} bytes`), 'the file ends inside the PNG header');
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const chunkType = String.fromCharCode(...bytes.subarray(12, 16));
  if (view.getUint32(8) !== 13 || chunkType !== 'IHDR') {
    throw decodeFailure(what, FORMAT, new Error(`first chunk is "${chunkType}"`), 'a PNG file must start with IHDR');
  }
  const header = { width: view.getUint32(16), height: view.getUint32(20), bitDepth: bytes[24], colourType: bytes[25] };
  checkHeaderSize(what, FORMAT, header.width, header.height);
  const kind = COLOUR_TYPES[header.colourType];
  if (!kind || !kind.depths.includes(header.bitDepth)) {
    throw decodeFailure(what, FORMAT, new Error(`colour type ${header.colourType}, bit depth ${header.bitDepth}`),
      'the header names a combination the PNG standard does not define');
  }
  if (header.colourType === 0 && header.bitDepth < 8) {
    const detail = header.bitDepth === 1 ? '1-bit (bilevel) samples' : `${header.bitDepth}-bit grey samples`;
    throw unsupported(what, FORMAT, detail, 'Save the image as 8- or 16-bit grey');
  }
  return header;
}

/** The 12 bytes every complete PNG file ends with: an empty IEND chunk and its CRC. */
const IEND = [0, 0, 0, 0, 0x49, 0x45, 0x4e, 0x44, 0xae, 0x42, 0x60, 0x82];

const endsWithIend = (bytes: Uint8Array) => IEND.every((b, i) => bytes[bytes.length - IEND.length + i] === b);

/**
 * Decodes a PNG with fast-png: grey, grey + alpha, RGB, RGBA (8/16-bit) and palette (1-8 bit
 * indices). Alpha is dropped; integer codes become [0, 1]; encoding 'srgb' for 8-bit, 'linear' for 16-bit
 * (scientific cameras store 16-bit data linearly: common practice, no source); pixel size from pHYs.
 */
export function decodePng(bytes: Uint8Array, name: string): Image {
  const header = readPngHeader(bytes, name);
  let png: DecodedPng;
  let samples: ArrayLike<number>;
  let samplesPerPixel: number;
  try {
    png = decodePngLib(bytes, { checkCrc: true });
    if (png.width !== header.width || png.height !== header.height) throw new Error('size differs from IHDR');
    if (header.colourType === 3) {
      samples = convertIndexedToRgb(png);
      samplesPerPixel = png.palette?.[0]?.length ?? 3;
    } else {
      samples = png.data;
      samplesPerPixel = png.channels;
    }
    const expected = png.width * png.height * samplesPerPixel;
    if (samples.length !== expected) throw new Error(`${samples.length} samples, expected ${expected}`);
  } catch (e) {
    const extra = endsWithIend(bytes) ? '' : 'the file does not end with an IEND chunk, so it was probably cut short';
    throw decodeFailure(name, FORMAT, e, extra);
  }
  const colourChannels = samplesPerPixel >= 3 ? 3 : 1;
  const sixteen = header.bitDepth === 16;
  const pixelSizeUmPerPx = png.resolution
    ? pngPixelSizeUm(png.resolution.x, png.resolution.y, png.resolution.unit) : undefined;
  return makeImage({
    width: png.width,
    height: png.height,
    channels: colourChannels,
    planes: toPlanes(samples, png.width * png.height, samplesPerPixel, colourChannels, sixteen ? 65535 : 255),
    bitDepth: sixteen ? 16 : 8,
    encoding: sixteen ? 'linear' : 'srgb',
    ...(pixelSizeUmPerPx !== undefined ? { pixelSizeUmPerPx } : {}),
    source: { name },
  });
}
