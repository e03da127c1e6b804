import { takeFloat32 } from '../common/index.ts';
import { InputError } from '../common/index.ts';
import type { Plane } from '../common/index.ts';

/**
 * A decoded image: float planes in [0, 1] (integer data divided by its maximum; float TIFF data kept
 * as stored), row-major, x right, y down. Alpha is dropped at decode.
 */
export interface Image {
  width: number;
  height: number;
  channels: 1 | 3;
  planes: Float32Array[];
  bitDepth: 8 | 16 | 32;
  /** 'srgb' for camera/display images as stored; 'linear' for float or raw scientific data. */
  encoding: 'srgb' | 'linear';
  /** From TIFF resolution tags, or from calibration. */
  pixelSizeUmPerPx?: number;
  source: { name: string; page?: number };
}

/**
 * Most memory, in bytes, that decoding may take: the float planes (4 bytes per pixel and channel)
 * plus the decoder's own buffers, estimated from the header before any pixel buffer is allocated. It
 * keeps the whole decode of any file under 1 GB (goal of issue 12): 750 MB, plus the file itself (up
 * to 100 MB) and the program's own 80 MB or so. At 4 bytes per sample that is 187 MP of grey or
 * 62 MP of RGB (PNG, TIFF); JPEG needs about 27 bytes per RGB pixel while decoding, so 27 MP.
 */
export const MAX_DECODE_BYTES = 750_000_000;

export function makeImage(init: Image): Image {
  const { width, height, channels, planes } = init;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(`${init.source.name}: image size ${width}x${height} is not valid`);
  }
  if (channels !== 1 && channels !== 3) {
    throw new InputError(`${init.source.name}: ${channels} colour channels are not supported`, 'Use grey or RGB images');
  }
  if (planes.length !== channels || planes.some((p) => p.length !== width * height)) {
    throw new InputError(`${init.source.name}: pixel planes do not match the ${width}x${height}x${channels} header`);
  }
  return init;
}

/**
 * Grey plane for texture analysis: a single channel as is, RGB as Rec. 709 luma weights on the stored
 * values (no linearisation: the structure tensor only needs a monotone brightness).
 */
export function toGrey(img: Image): Plane {
  if (img.channels === 1) return { width: img.width, height: img.height, data: img.planes[0] };
  const [r, g, b] = img.planes;
  const out = takeFloat32(img.width * img.height);
  for (let i = 0; i < out.length; i++) out[i] = 0.2126 * r[i] + 0.7152 * g[i] + 0.0722 * b[i];
  return { width: img.width, height: img.height, data: out };
}
