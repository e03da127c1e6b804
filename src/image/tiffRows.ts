import { tiffPixelSizeUm } from './pixelSize.ts';
import { codeTable, NATIVE_LITTLE } from './tiffDecode.ts';
import { readTiffHeaders } from './tiffHeader.ts';
import type { Image } from './types.ts';

/** An image's facts without its pixels. */
export type ImageHead = Pick<Image, 'width' | 'height' | 'source' | 'pixelSizeUmPerPx' | 'bitDepth' | 'encoding'>;

/** Grey rows read on demand: `readRow` writes `w` values of row y from column x into `out`. */
export interface GreyRows { width: number; height: number; readRow(y: number, x: number, w: number, out: Float32Array): void }

/**
 * The first page of a plain grey TIFF (uncompressed strips of 8- or 16-bit unsigned samples, one sample a pixel,
 * no predictor: what cameras and tifffile write by default) as rows read from the file's bytes on demand, each
 * value what decodeImage puts in its plane (the same code table): an analysis that streams the image row by row
 * then needs no plane of 4 bytes a pixel. Null for any other TIFF, or one whose strips do not hold every row
 * (decodeImage then reads it, or says what is wrong).
 * @throws InputError as decodeImage for a TIFF whose header is damaged
 */
export function greyTiffRows(bytes: Uint8Array, name: string): { head: ImageHead; rows: GreyRows } | null {
  const file = readTiffHeaders(bytes, name);
  const h = file.pages[0];
  const { width, height, layout, bitsPerSample: bits } = h;
  const table = codeTable(h);
  if (!table || h.compression !== 1 || h.predictor !== 1 || h.samplesPerPixel !== 1 || h.colourSamples !== 1
    || (h.photometric !== 0 && h.photometric !== 1) || (bits !== 8 && bits !== 16) || layout.tiled || layout.across !== 1) return null;
  const rowBytes = (width * bits) / 8;
  for (let s = 0; s < layout.down; s++) {
    const need = Math.min(layout.blockHeight, height - s * layout.blockHeight) * rowBytes;
    if (!(layout.counts[s] >= need) || !(layout.offsets[s] + need <= bytes.length)) return null;
  }
  const little = file.littleEndian;
  const rowAt = (y: number) => {
    const s = Math.floor(y / layout.blockHeight);
    return bytes.byteOffset + layout.offsets[s] + (y - s * layout.blockHeight) * rowBytes;
  };
  const readRow = (y: number, x: number, w: number, out: Float32Array) => {
    const at = rowAt(y);
    if (bits === 8) {
      const codes = new Uint8Array(bytes.buffer, at + x, w);
      for (let i = 0; i < w; i++) out[i] = table[codes[i]];
    } else if (little === NATIVE_LITTLE && at % 2 === 0) {
      const codes = new Uint16Array(bytes.buffer, at + 2 * x, w);
      for (let i = 0; i < w; i++) out[i] = table[codes[i]];
    } else {
      const view = new DataView(bytes.buffer, at + 2 * x, 2 * w);
      for (let i = 0; i < w; i++) out[i] = table[view.getUint16(2 * i, little)];
    }
  };
  const pixelSizeUmPerPx = tiffPixelSizeUm(h.xResolution, h.yResolution, h.resolutionUnit, h.imageDescription);
  return {
    head: {
      width, height, bitDepth: bits === 8 ? 8 : 16, encoding: bits === 8 ? 'srgb' : 'linear',
      ...(pixelSizeUmPerPx !== undefined ? { pixelSizeUmPerPx } : {}), source: { name, page: 0 },
    },
    rows: { width, height, readRow },
  };
}
