import { encode } from 'fast-png';
import { InputError } from '../common/index.ts';

export interface PngPixels {
  width: number;
  height: number;
  /** 1 grey, 3 RGB, 4 RGBA. */
  channels: 1 | 3 | 4;
  /** Interleaved samples, row-major, x right, y down: width * height * channels values. */
  data: Uint8Array | Uint16Array;
  /** 8 (Uint8Array data) or 16 (Uint16Array data); default from the data's type. */
  bitDepth?: 8 | 16;
}

/**
 * Encodes interleaved samples as a PNG (fast-png; zlib-compressed, non-interlaced). The samples are
 * written as given: sRGB display codes for pictures (PNG has no float samples).
 *
 * @throws InputError when the size, channel count, bit depth or data length do not agree
 */
export function encodePng(pixels: PngPixels): Uint8Array {
  const { width, height, channels, data } = pixels;
  const bitDepth = pixels.bitDepth ?? (data instanceof Uint16Array ? 16 : 8);
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(`PNG size ${width}x${height} is not a positive whole number of pixels`);
  }
  if (channels !== 1 && channels !== 3 && channels !== 4) {
    throw new InputError(`PNG needs 1, 3 or 4 channels, got ${String(channels)}`, 'Use grey, RGB or RGBA samples');
  }
  if (bitDepth !== 8 && bitDepth !== 16) {
    throw new InputError(`PNG bit depth must be 8 or 16, got ${String(bitDepth)}`);
  }
  const typeOk = bitDepth === 8 ? data instanceof Uint8Array : data instanceof Uint16Array;
  if (!typeOk) {
    throw new InputError(`${bitDepth}-bit PNG samples must be a ${bitDepth === 8 ? 'Uint8Array' : 'Uint16Array'}`,
      'Convert the samples to the matching array type');
  }
  if (data.length !== width * height * channels) {
    throw new InputError(`PNG data has ${data.length} samples but ${width}x${height}x${channels} needs ${width * height * channels}`);
  }
  return encode({ width, height, channels, depth: bitDepth, data });
}
