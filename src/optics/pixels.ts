import { InputError } from '../common/index.ts';
import type { Image } from '../image/index.ts';
import { srgbDecode, srgbEncode, type Vec3 } from './colorimetry.ts';

import { checkRectInside, type Rect } from '../common/index.ts';

export type { Rect };

/** Requires an RGB image. */
export function checkColourImage(img: Image, what: string): void {
  if (img.channels !== 3) {
    throw new InputError(`${img.source.name}: ${what} needs a colour (RGB) image, this one is grey`, 'Use the colour camera image');
  }
}

/** Linear value of a stored channel value. */
export function toLinear(v: number, encoding: Image['encoding']): number {
  return encoding === 'srgb' ? srgbDecode(v) : v;
}

/** Median linear RGB of a rectangle (robust to dust and a few sample pixels). */
export function medianLinearRgb(img: Image, r: Rect): Vec3 {
  checkRectInside(r, img.width, img.height, 'sample-free area');
  const out: number[] = [];
  for (let c = 0; c < 3; c++) {
    const vals: number[] = [];
    const p = img.planes[c];
    for (let y = r.y; y < r.y + r.height; y++) for (let x = r.x; x < r.x + r.width; x++) vals.push(p[y * img.width + x]);
    vals.sort((a, b) => a - b);
    out.push(toLinear(vals[vals.length >> 1], img.encoding));
  }
  return out as Vec3;
}

/**
 * Level (0-1 of full scale, as decoded) at or above which a colour plane counts as clipped: the camera
 * recorded its ceiling, not the light.
 */
export const FULL_SCALE_LEVEL = 0.999;

/** Linear value -> encoded level table of linear images (4096 entries), per number of bits. */
const levelTables = new Map<number, Int32Array>();

/** The encoded level (of 2^bits - 1) of linear value i / 4096, for i = 0..4096: round((2^bits - 1) srgbEncode(i / 4096)). */
export function linearLevelTable(bits: number): Int32Array {
  const levels = (1 << bits) - 1;
  let table = levelTables.get(bits);
  if (!table) {
    table = Int32Array.from({ length: 4097 }, (_, i) => Math.round(levels * srgbEncode(i / 4096)));
    levelTables.set(bits, table);
  }
  return table;
}

/**
 * Maps stored channel values of the pixels [i0, i0 + out.length) to colour-cube cells of `bits` per channel, on the
 * sRGB-encoded scale (a roughly perceptual spacing), into `out`: the cell index per pixel, -1 for pixels that are not
 * finite or are saturated (counted). With `clipped`, also marks pixels with any plane at or above FULL_SCALE_LEVEL.
 */
export function quantiseInto(img: Image, bits: number, i0: number, out: Int32Array, clipped?: Uint8Array): { saturated: number; invalid: number } {
  const len = out.length, levels = (1 << bits) - 1;
  const [r, g, b] = img.planes;
  let saturated = 0, invalid = 0;
  // Linear data: a 4096-entry table from linear value to encoded level.
  const table = img.encoding === 'linear' ? linearLevelTable(bits) : null;
  const sat = FULL_SCALE_LEVEL, s2 = 2 * bits;
  for (let t = 0; t < len; t++) {
    const i = i0 + t, vr = r[i], vg = g[i], vb = b[i];
    if (vr >= 0 && vg >= 0 && vb >= 0 && vr < sat && vg < sat && vb < sat) {
      if (table) out[t] = (table[(vr * 4096 + 0.5) | 0] << s2) | (table[(vg * 4096 + 0.5) | 0] << bits) | table[(vb * 4096 + 0.5) | 0];
      else out[t] = (((vr * levels + 0.5) | 0) << s2) | (((vg * levels + 0.5) | 0) << bits) | ((vb * levels + 0.5) | 0);
      continue;
    }
    if (vr >= sat || vg >= sat || vb >= sat) {
      saturated++;
      if (clipped) clipped[i] = 1;
    } else invalid++;
    out[t] = -1;
  }
  return { saturated, invalid };
}

/** Decoded (linear) value of each level of a colour cube of `bits` per channel, made once per number of bits. */
const decodedLevels = new Map<number, Float64Array>();

/** Linear RGB at the centre of a colour-cube cell. */
export function cellLinearRgb(cell: number, bits: number): Vec3 {
  const levels = (1 << bits) - 1, mask = levels;
  let dec = decodedLevels.get(bits);
  if (!dec) {
    dec = Float64Array.from({ length: levels + 1 }, (_, l) => srgbDecode(l / levels));
    decodedLevels.set(bits, dec);
  }
  return [dec[(cell >> (2 * bits)) & mask], dec[(cell >> bits) & mask], dec[cell & mask]];
}
