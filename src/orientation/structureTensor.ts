import { InputError, checkNumber } from '../common/index.ts';
import { checkLimit, type Limit } from '../common/index.ts';
import { withDefaults } from '../common/index.ts';
import { checkTileInside, planTiles, type Tile } from '../image/index.ts';
import type { Plane } from '../common/index.ts';
import { loadTensorKernel } from '../wasm/index.ts';
import { gaussianRadius } from './kernels.ts';
import { streamTensorRows, type PlaneRows, type RowKind, type RowSink, type StreamExtras } from './tensorStream.ts';

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
  /**
   * structureTensor cuts images with more pixels than this into overlapping tiles (the same bits either way);
   * the orientation field streams the whole image through the kernel, whose memory is a few rows whatever the size.
   */
  tilePixels?: number;
}

/** Defaults and ranges of the tensor's scales (docs/methods.md §7.1), for the analyses, the command line and the app. */
export const TENSOR_LIMITS = {
  sigmaPx: { what: 'texture scale sigma (integration scale)', min: 0.3, max: 200, default: 2, unit: 'px' },
  sigmaDerivPx: { what: 'derivative sigma', min: 0.3, max: 50, default: 1, unit: 'px' },
} as const satisfies Record<string, Limit>;

export const STRUCTURE_TENSOR_DEFAULTS = {
  sigmaPx: TENSOR_LIMITS.sigmaPx.default, sigmaDerivPx: TENSOR_LIMITS.sigmaDerivPx.default, derivative: 'gaussian', tilePixels: 4_194_304,
} as const;

export function resolveTensorOptions(o: StructureTensorOptions = {}): Required<StructureTensorOptions> {
  const r = withDefaults<Required<StructureTensorOptions>>({ ...STRUCTURE_TENSOR_DEFAULTS }, o);
  checkLimit(TENSOR_LIMITS.sigmaPx, r.sigmaPx);
  checkLimit(TENSOR_LIMITS.sigmaDerivPx, r.sigmaDerivPx);
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
 * The tiles structureTensor visits: one for an image of at most tilePixels, else square tiles with the
 * tensor's halo. Whoever computes a tile from its crop gets the same numbers: the inner part of every tile
 * equals the whole image's, bit for bit (tests/orientation/tile-share.test.ts).
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
 * Streams the rows of one tile's inner part (the whole plane when `tile` is null) through the kernel, handing
 * each to `sink` with its row in the image (see streamTensorRows: 'lean' gives the field's pixels, 'tensor'
 * Jxx, Jxy, Jyy). The views start at the tile's left edge (`tile.x`), valid only during the call. Returns the
 * largest |value| read (NaN or infinity when one is not finite). `extra`: as streamTensorRows (rows and pixels in the crop).
 */
export async function streamTileRows(plane: PlaneRows, tile: Tile | null, o: Required<StructureTensorOptions>, kind: RowKind, sink: RowSink, extra?: StreamExtras): Promise<number> {
  const k = await loadTensorKernel();
  const t = tile ?? { x: 0, y: 0, w: plane.width, h: plane.height, innerX: 0, innerY: 0, innerW: plane.width, innerH: plane.height };
  if (tile && !(tile.w === plane.width && tile.h === plane.height)) checkTileInside({ width: plane.width, height: plane.height, data: new Float32Array(0) }, tile);
  const from = t.innerY - t.y;
  return streamTensorRows(k, plane, { x: t.x, y: t.y, w: t.w, h: t.h }, o, kind, from, from + t.innerH, (y, a, b, c, d) => sink(t.y + y, a, b, c, d), extra);
}

/**
 * Gradient structure tensor J = G_sigma * (grad I grad I^T) of a whole plane (tensorStream.ts gives the method,
 * references and borders), tile by tile when the plane has more than tilePixels pixels (the same bits either way).
 */
export async function structureTensor(plane: Plane, options: StructureTensorOptions = {}): Promise<TensorField> {
  const o = resolveTensorOptions(options);
  const { width, height } = plane;
  const n = width * height;
  const out: TensorField = { width, height, jxx: new Float32Array(n), jxy: new Float32Array(n), jyy: new Float32Array(n) };
  for (const t of tensorTiles(width, height, o)) {
    const skip = t.innerX - t.x, len = t.innerW;
    await streamTileRows(plane, t, o, 'tensor', (y, a, b, c) => {
      const at = y * width + t.innerX;
      out.jxx.set(a.subarray(skip, skip + len), at);
      out.jxy.set(b.subarray(skip, skip + len), at);
      out.jyy.set(c.subarray(skip, skip + len), at);
    });
  }
  return out;
}
