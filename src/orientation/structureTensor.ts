import { InputError, checkNumber } from '../common/errors.ts';
import { withDefaults } from '../common/options.ts';
import { checkTileInside, planTiles, type Tile } from '../image/tiles.ts';
import type { Plane } from '../common/plane.ts';
import { loadCv, cvError, type CV } from '../cv/opencv.ts';
import { gaussianKernel, gaussianDerivativeKernel, gaussianRadius } from './kernels.ts';

/** The three smoothed components of the gradient structure tensor, per pixel. */
export interface TensorField {
  width: number;
  height: number;
  jxx: Float32Array;
  jxy: Float32Array;
  jyy: Float32Array;
}

export interface StructureTensorOptions {
  /** Integration (outer) scale in px: the Gaussian window the gradient products are averaged over. Default 2. */
  sigmaPx?: number;
  /** Derivative (inner) scale in px for Gaussian derivatives. Default 1. */
  sigmaDerivPx?: number;
  /**
   * 'gaussian' (default): derivatives of a Gaussian of sigmaDerivPx, which are isotropic enough for
   * sub-degree work. 'sobel': the unnormalised 3x3 Sobel pair, as scikit-image's structure_tensor uses.
   */
  derivative?: 'gaussian' | 'sobel';
  /** Images with more pixels than this are processed in overlapping tiles (bounded WASM memory). */
  tilePixels?: number;
}

export const STRUCTURE_TENSOR_DEFAULTS = { sigmaPx: 2, sigmaDerivPx: 1, derivative: 'gaussian', tilePixels: 4_194_304 } as const;

export function resolveTensorOptions(o: StructureTensorOptions = {}): Required<StructureTensorOptions> {
  const r = withDefaults<Required<StructureTensorOptions>>({ ...STRUCTURE_TENSOR_DEFAULTS }, o);
  checkNumber('sigma (integration scale)', r.sigmaPx, 0.3, 200, 'px');
  checkNumber('derivative sigma', r.sigmaDerivPx, 0.3, 50, 'px');
  checkNumber('tile size', r.tilePixels, 1024, 1e9, 'pixels');
  if (r.derivative !== 'gaussian' && r.derivative !== 'sobel') {
    throw new InputError(`derivative must be "gaussian" or "sobel", got "${String(r.derivative)}"`);
  }
  return r;
}

/** Halo a tile needs so its inner part equals the whole-image result (both kernels' radii). */
export function tensorHaloPx(o: Required<StructureTensorOptions>): number {
  const deriv = o.derivative === 'sobel' ? 1 : gaussianRadius(o.sigmaDerivPx);
  return deriv + gaussianRadius(o.sigmaPx) + 1;
}

/** The part of the image a tile's result is kept for (pixel coordinates, end exclusive). */
export interface TileRect { x0: number; y0: number; x1: number; y1: number }

/**
 * Runs the tensor over the image in square tiles with a halo wide enough that each tile's inner part
 * equals the whole-image result, handing every tile's tensor and inner rectangle to `use`. Peak WASM
 * memory is then one tile's pipeline, whatever the image size. `origin` is the tile's top-left pixel.
 */
export async function forEachTensorTile(
  plane: Plane, options: StructureTensorOptions,
  use: (t: TensorField, inner: TileRect, origin: { x: number; y: number }) => void,
): Promise<void> {
  const o = resolveTensorOptions(options);
  const cv = await loadCv();
  for (const t of tensorTiles(plane.width, plane.height, o)) tensorOnce(cv, plane, t, o, (tensor) => use(tensor, innerRect(t), { x: t.x, y: t.y }));
}

/**
 * The tiles forEachTensorTile visits: one for an image of at most tilePixels, else square tiles with the
 * tensor's halo. Whoever computes a tile from its crop gets the same numbers, which is what lets the
 * tiles of one image be shared between workers (orientationField's helpers).
 */
export function tensorTiles(width: number, height: number, o: Required<StructureTensorOptions>): Tile[] {
  if (width * height <= o.tilePixels) return [{ x: 0, y: 0, w: width, h: height, innerX: 0, innerY: 0, innerW: width, innerH: height }];
  const halo = tensorHaloPx(o);
  const inner = Math.max(64, Math.floor(Math.sqrt(o.tilePixels)) - 2 * halo);
  return planTiles(width, height, inner, halo);
}

/** A tile's inner part in image pixels. */
export const innerRect = (t: Tile): TileRect => ({ x0: t.innerX, y0: t.innerY, x1: t.innerX + t.innerW, y1: t.innerY + t.innerH });

/**
 * Hands the tensor of one tile of `plane` (the whole plane when `tile` is null) to `use` and returns what
 * it returns. The tensor's arrays are views of OpenCV's memory, valid only during `use`: reading them
 * there saves copying three arrays out per tile (and the garbage they make on a 12 MP image).
 */
export async function withTensorOf<R>(plane: Plane, tile: Tile | null, o: Required<StructureTensorOptions>, use: (t: TensorField) => R): Promise<R> {
  return tensorOnce(await loadCv(), plane, tile, o, use);
}

/**
 * Gradient structure tensor J = G_sigma * (grad I grad I^T) (Bigun & Granlund 1987; OpenCV tutorial
 * "Anisotropic image segmentation by a gradient structure tensor"). Borders are mirrored with the edge
 * pixel repeated (scipy 'reflect' = OpenCV BORDER_REFLECT). y is the row index, downwards.
 */
export async function structureTensor(plane: Plane, options: StructureTensorOptions = {}): Promise<TensorField> {
  const { width, height } = plane;
  const n = width * height;
  const out: TensorField = { width, height, jxx: new Float32Array(n), jxy: new Float32Array(n), jyy: new Float32Array(n) };
  await forEachTensorTile(plane, options, (t, r, origin) => {
    for (let y = r.y0; y < r.y1; y++) {
      const src = (y - origin.y) * t.width + (r.x0 - origin.x), dst = y * width + r.x0, len = r.x1 - r.x0;
      out.jxx.set(t.jxx.subarray(src, src + len), dst);
      out.jxy.set(t.jxy.subarray(src, src + len), dst);
      out.jyy.set(t.jyy.subarray(src, src + len), dst);
    }
  });
  return out;
}

function tensorOnce<R>(cv: CV, plane: Plane, tile: Tile | null, o: Required<StructureTensorOptions>, use: (t: TensorField) => R): R {
  const whole = !tile || (tile.w === plane.width && tile.h === plane.height);
  const width = whole ? plane.width : tile.w, height = whole ? plane.height : tile.h;
  const mats: { delete(): void }[] = [];
  const keep = <T extends { delete(): void }>(m: T): T => (mats.push(m), m);
  try {
    const src = keep(new cv.Mat(height, width, cv.CV_32F));
    // The tile's rows go straight into OpenCV's memory (no crop copied out first).
    if (whole) src.data32F.set(plane.data);
    else {
      checkTileInside(plane, tile);
      const dst = src.data32F;
      for (let r = 0; r < height; r++) { const from = (tile.y + r) * plane.width + tile.x; dst.set(plane.data.subarray(from, from + width), r * width); }
    }
    const ix = keep(new cv.Mat()), iy = keep(new cv.Mat());
    const border = cv.BORDER_REFLECT;
    const anchor = new cv.Point(-1, -1);
    if (o.derivative === 'sobel') {
      cv.Sobel(src, ix, cv.CV_32F, 1, 0, 3, 1, 0, border);
      cv.Sobel(src, iy, cv.CV_32F, 0, 1, 3, 1, 0, border);
    } else {
      const g = gaussianKernel(o.sigmaDerivPx), dg = gaussianDerivativeKernel(o.sigmaDerivPx);
      const gM = keep(cv.matFromArray(g.length, 1, cv.CV_32F, Array.from(g)));
      const dgM = keep(cv.matFromArray(dg.length, 1, cv.CV_32F, Array.from(dg)));
      cv.sepFilter2D(src, ix, cv.CV_32F, dgM, gM, anchor, 0, border);
      cv.sepFilter2D(src, iy, cv.CV_32F, gM, dgM, anchor, 0, border);
    }
    const xx = keep(new cv.Mat()), xy = keep(new cv.Mat()), yy = keep(new cv.Mat());
    cv.multiply(ix, ix, xx);
    cv.multiply(ix, iy, xy);
    cv.multiply(iy, iy, yy);
    const k = gaussianKernel(o.sigmaPx);
    const kM = keep(cv.matFromArray(k.length, 1, cv.CV_32F, Array.from(k)));
    // In-place separable smoothing of each product.
    cv.sepFilter2D(xx, xx, cv.CV_32F, kM, kM, anchor, 0, border);
    cv.sepFilter2D(xy, xy, cv.CV_32F, kM, kM, anchor, 0, border);
    cv.sepFilter2D(yy, yy, cv.CV_32F, kM, kM, anchor, 0, border);
    return use({ width, height, jxx: xx.data32F, jxy: xy.data32F, jyy: yy.data32F });
  } catch (e) {
    throw cvError(cv, e);
  } finally {
    for (const m of mats) m.delete();
  }
}
