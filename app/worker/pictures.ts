/**
 * Pictures the page draws, made in the worker so the page's thread stays free: the image itself,
 * the orientation colour picture and the coherency picture. Large images are reduced by an integer
 * step so a canvas can hold them; the numbers are always computed on the full image.
 */
import type { Image } from '../../src/image/index.ts';
import { orientationColours, type OrientationField } from '../../src/orientation/index.ts';
import { orientationColourTable, orientationRgba, retardanceColourTable, retardanceIndex } from '../../src/report/index.ts';
import { cellOrders } from '../../src/order/index.ts';
import type { Glyph, Picture } from './protocol.ts';

/** Longest side of a picture; a browser canvas holds this comfortably on a tablet. */
const MAX_SIDE = 4096;

export const pictureStep = (width: number, height: number): number => Math.max(1, Math.ceil(Math.max(width, height) / MAX_SIDE));

/** Side below which no further half-size level is made. */
const SMALLEST_LEVEL_SIDE = 1024;

/**
 * Bitmaps of an RGBA buffer: full size, then halves while the picture is large (drawing zoomed out stays
 * cheap). Each half is made from the level before it, so every level reads only twice its own pixels.
 * Halving with 'low' (bilinear) quality samples between each 2 x 2 group, i.e. averages it, like the
 * 'medium' filter but three to eight times quicker in Chromium on a 12 MP picture.
 */
async function bitmapLevels(rgba: Uint8ClampedArray<ArrayBuffer>, w: number, h: number): Promise<ImageBitmap[]> {
  const base = await createImageBitmap(new ImageData(rgba, w, h));
  const levels = [base];
  for (let f = 2; Math.max(w, h) / f >= SMALLEST_LEVEL_SIDE / 2 && Math.max(w, h) > SMALLEST_LEVEL_SIDE; f *= 2) {
    levels.push(await createImageBitmap(levels[levels.length - 1], { resizeWidth: Math.ceil(w / f), resizeHeight: Math.ceil(h / f), resizeQuality: 'low' }));
  }
  return levels;
}

/**
 * One picture row: `count` pixels, the first at field index `i0` and every `step`-th after it, written as
 * RGBA from byte `o0` of `out`. Each picture has its own row loop: one callback for every pixel, shared by
 * several pictures, is a call the engine cannot inline (about 1.6x slower on 12 MP in Chromium).
 */
type RowWriter = (i0: number, step: number, count: number, o0: number, out: Uint8ClampedArray) => void;

async function sampled(width: number, height: number, step: number, row: RowWriter): Promise<Picture> {
  const w = Math.ceil(width / step), h = Math.ceil(height / step);
  const out = new Uint8ClampedArray(w * h * 4);
  for (let y = 0; y < h; y++) row(y * step * width, step, w, 4 * y * w, out);
  return { width: w, height: h, scale: step, levels: await bitmapLevels(out, w, h) };
}

/** Every step-th pixel of each row and column of a plane (the plane itself when step is 1). */
function subsample<T extends Float32Array | Uint8Array>(v: T, width: number, height: number, step: number, make: (n: number) => T): T {
  if (step === 1) return v;
  const w = Math.ceil(width / step), h = Math.ceil(height / step), out = make(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) out[y * w + x] = v[y * step * width + x * step];
  return out;
}

/** Robust display range: 0.1 and 99.9 percentiles of a strided sample of the values. */
function displayRange(planes: Float32Array[]): [number, number] {
  const sample: number[] = [];
  const n = planes[0].length, stride = Math.max(1, Math.floor(n / 200_000));
  for (const p of planes) for (let i = 0; i < n; i += stride) if (Number.isFinite(p[i])) sample.push(p[i]);
  sample.sort((a, b) => a - b);
  if (sample.length === 0) return [0, 1];
  const lo = sample[Math.floor(0.001 * (sample.length - 1))], hi = sample[Math.ceil(0.999 * (sample.length - 1))];
  return hi > lo ? [lo, hi] : [lo, lo + 1];
}

/**
 * The image as the user sees it: 8-bit camera images as stored; 16-bit and float images stretched
 * between their 0.1 and 99.9 percentiles (said in `note`, since it changes how the image looks only).
 */
export async function imagePicture(img: Image): Promise<{ picture: Picture; note: string }> {
  const step = pictureStep(img.width, img.height);
  const stretch = img.bitDepth !== 8;
  const [lo, hi] = stretch ? displayRange(img.planes) : [0, 1];
  const k = 255 / (hi - lo);
  const [r, g, b] = img.channels === 3 ? img.planes : [img.planes[0], img.planes[0], img.planes[0]];
  const picture = await sampled(img.width, img.height, step, (i0, st, count, o0, out) => {
    for (let n = 0, i = i0, o = o0; n < count; n++, i += st, o += 4) {
      out[o] = (r[i] - lo) * k; out[o + 1] = (g[i] - lo) * k; out[o + 2] = (b[i] - lo) * k; out[o + 3] = 255;
    }
  });
  const notes = [];
  if (stretch) notes.push(`shown stretched from ${lo.toPrecision(3)} to ${hi.toPrecision(3)} (display only)`);
  if (step > 1) notes.push(`shown at 1/${step} size (analysis uses every pixel)`);
  return { picture, note: notes.join('; ') };
}

/** The pixels of the last texture colour picture, for the next one of the same size (null while one is being made). */
let colourPixels: Uint8ClampedArray | null = null;

/**
 * Orientation colour picture of a field (the report's cyclic colour map, `orientationRgba`). The colour's
 * opacity follows the confidence (`opacity: 'confidence'`, texture fields) or is full on every usable pixel
 * (`'full'`: optical readings, whose match confidence is shown on its own picture). Only the pixels shown
 * are coloured: a field larger than a canvas is subsampled first.
 */
export async function orientationPicture(f: OrientationField, opacity: 'confidence' | 'full' = 'confidence'): Promise<Picture> {
  const step = pictureStep(f.width, f.height);
  const w = Math.ceil(f.width / step), h = Math.ceil(f.height / step);
  // A texture field shown whole: its colours straight from cos 2 theta and sin 2 theta (the same bytes, no angle
  // layer), into the last picture's pixels when of the same size: the bitmaps are copies, so they are free again.
  const direct = step === 1 && opacity === 'confidence' && f.cos2 && f.sin2
    ? orientationColours(f.cos2, f.sin2, f.confidence, f.mask, orientationColourTable(), 255, colourPixels ?? undefined) : null;
  if (direct) {
    colourPixels = null;
    const levels = await bitmapLevels(direct as Uint8ClampedArray<ArrayBuffer>, w, h);
    colourPixels = direct;
    return { width: w, height: h, scale: step, levels };
  }
  const angle = subsample(f.angleRad, f.width, f.height, step, (n) => new Float32Array(n));
  const mask = subsample(f.mask, f.width, f.height, step, (n) => new Uint8Array(n));
  const confidence = opacity === 'full' ? new Float32Array(w * h).fill(1) : subsample(f.confidence, f.width, f.height, step, (n) => new Float32Array(n));
  const rgba = orientationRgba(angle, confidence, mask) as Uint8ClampedArray<ArrayBuffer>;
  return { width: w, height: h, scale: step, levels: await bitmapLevels(rgba, w, h) };
}

/** Coherency (confidence) as grey, black 0 to white 1; masked pixels transparent. */
export function coherencyPicture(f: OrientationField): Promise<Picture> {
  const { mask, confidence } = f;
  return sampled(f.width, f.height, pictureStep(f.width, f.height), (i0, st, count, o0, out) => {
    for (let n = 0, i = i0, o = o0; n < count; n++, i += st, o += 4) {
      const v = mask[i] ? 255 * confidence[i] : 0;
      out[o] = v; out[o + 1] = v; out[o + 2] = v; out[o + 3] = mask[i] ? 255 : 0;
    }
  });
}

/**
 * Direction lines on a grid of about `across` cells over the longer side: each cell's free director and S_2D
 * (cellOrders in src/order, weighted by the field's coherency or confidence).
 */
export function directionLines(f: OrientationField, across = 40): Glyph[] {
  const cell = Math.max(4, Math.round(Math.max(f.width, f.height) / across));
  return cellOrders(f, cell).map((c) => ({ x: c.x, y: c.y, angleDeg: c.directorDeg, order2D: c.order2D }));
}

/** Retardance picture of an optical field over a colour-bar range (masked pixels transparent). */
export async function retardancePicture(f: OrientationField, rangeNm: [number, number]): Promise<Picture | null> {
  const r = f.retardanceNm;
  if (!r) return null;
  const table = retardanceColourTable();
  const mask = f.mask;
  return sampled(f.width, f.height, pictureStep(f.width, f.height), (i0, st, count, o0, out) => {
    for (let n = 0, i = i0, o = o0; n < count; n++, i += st, o += 4) {
      const k = 3 * retardanceIndex(r[i], rangeNm);
      out[o] = table[k]; out[o + 1] = table[k + 1]; out[o + 2] = table[k + 2]; out[o + 3] = mask[i] ? 255 : 0;
    }
  });
}
