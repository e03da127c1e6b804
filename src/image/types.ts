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
 * keeps the whole decode of any file under 1 GB (README, "Speed"): 750 MB, plus the file itself (up
 * to 100 MB) and the program's own 80 MB or so. At 4 bytes per sample that is 187 MP of grey or
 * 62 MP of RGB (PNG, TIFF); JPEG needs about 27 bytes per RGB pixel while decoding, so 27 MP.
 */
export const MAX_DECODE_BYTES = 750_000_000;

/**
 * The most pixels each command line analysis takes, so that the whole command stays within 1 GB as reading
 * does (1 GB for any file of 100 MB or less): what an analysis holds beyond the decoded image grows with its pixels. From the peaks of whole
 * processes on 16-bit grey TIFFs of 12, 24 and 50 MP (bytes per pixel, the file's own included): a held texture
 * field written as a float TIFF (--field-out) 48, fibre diameters 33, a micrometer reading 10; a channel profile
 * from the texture (the field lent to the wall-free recomputation, not copied) 41 on grey TIFFs and 50 on RGB
 * PNGs of 18 and 20 MP (859 MiB at 18 MP), 51 with --field-out (RGB, 772 MiB at 16 MP). `retarda orient` without --field-out holds no field and takes
 * anything that can be read.
 */
export const ANALYSIS_MAX_PIXELS = {
  fieldOut: { pixels: 16_000_000, what: 'an orientation field written out (--field-out)' },
  profile: { pixels: 18_000_000, what: 'a channel profile' },
  profileFieldOut: { pixels: 16_000_000, what: 'a channel profile with its field written out (--field-out)' },
  diameter: { pixels: 24_000_000, what: 'fibre diameters' },
  micrometer: { pixels: 64_000_000, what: 'a micrometer reading' },
  series: { pixels: 16_000_000, what: 'a frame of a series (its field is held, as when written out)' },
} as const satisfies Record<string, { pixels: number; what: string }>;

/**
 * Refuses an image larger than an analysis takes (ANALYSIS_MAX_PIXELS), before the analysis allocates.
 * @throws InputError naming the image, its size and the limit, and what to do
 */
export function checkAnalysisPixels(img: Pick<Image, 'width' | 'height' | 'source'>, limit: { pixels: number; what: string }): void {
  const n = img.width * img.height;
  if (n <= limit.pixels) return;
  const mp = (v: number) => (v / 1e6).toFixed(1);
  throw new InputError(`${img.source.name}: ${img.width}x${img.height} (${mp(n)} megapixels) is too large for ${limit.what}: at most ${mp(limit.pixels)} megapixels, to stay within 1 GB of memory`,
    'Crop the image to the part to measure, or bin it 2 x 2');
}

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
