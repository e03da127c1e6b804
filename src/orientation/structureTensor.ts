import { InputError, checkNumber } from '../common/index.ts';
import { checkLimit, type Limit } from '../common/index.ts';
import { withDefaults } from '../common/index.ts';
import { checkTileInside, planTiles, type Tile } from '../image/index.ts';
import type { Plane } from '../common/index.ts';
import { KernelArena, loadTensorKernel, type KernelExports } from '../wasm/index.ts';
import { gaussianKernel, gaussianDerivativeKernel, gaussianRadius } from './kernels.ts';
import type { FieldPixels } from './fieldFromTensor.ts';

/** The three smoothed components of the gradient structure tensor, per pixel. */
export interface TensorField {
  width: number;
  height: number;
  jxx: Float32Array;
  jxy: Float32Array;
  jyy: Float32Array;
}

/** A tile's tensor as the kernel leaves it: rows `stride` floats apart (stride >= width, a multiple of 16). */
export interface StridedTensor extends TensorField { stride: number }

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
 * Runs the tensor over the image in square tiles with a halo wide enough that each tile's inner part
 * equals the whole-image result, handing every tile's tensor and inner rectangle to `use`. Peak WASM
 * memory is then one tile's pipeline, whatever the image size. `origin` is the tile's top-left pixel.
 */
export async function forEachTensorTile(
  plane: Plane, options: StructureTensorOptions,
  use: (t: StridedTensor, inner: TileRect, origin: { x: number; y: number }) => void,
): Promise<void> {
  const o = resolveTensorOptions(options);
  for (const t of tensorTiles(plane.width, plane.height, o)) await withTensorOf(plane, t, o, (tensor) => use(tensor, innerRect(t), { x: t.x, y: t.y }));
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
 * it returns. The arrays are views of the kernel's memory, valid only during `use`: reading them there
 * saves copying three arrays out per tile.
 */
export async function withTensorOf<R>(plane: Plane, tile: Tile | null, o: Required<StructureTensorOptions>, use: (t: StridedTensor) => R): Promise<R> {
  const run = tensorRun(await loadTensorKernel(), plane, tile, o, false);
  return use(run.tensor);
}

/**
 * Like withTensorOf, with the field pixels of every pixel of the tile (fieldFromTensor.ts gives the
 * formulas), computed by the kernel next to the tensor. `px.width` is the row stride of the views.
 */
export async function withFieldPixelsOf<R>(plane: Plane, tile: Tile | null, o: Required<StructureTensorOptions>, use: (px: FieldPixels) => R): Promise<R> {
  const run = tensorRun(await loadTensorKernel(), plane, tile, o, true);
  return use(run.pixels!);
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
      const src = (y - origin.y) * t.stride + (r.x0 - origin.x), dst = y * width + r.x0, len = r.x1 - r.x0;
      out.jxx.set(t.jxx.subarray(src, src + len), dst);
      out.jxy.set(t.jxy.subarray(src, src + len), dst);
      out.jyy.set(t.jyy.subarray(src, src + len), dst);
    }
  });
  return out;
}

/**
 * The derivative kernel d and its smoothing partner s (correlation kernels, as OpenCV's filters use):
 * Ix is d along x then s along y, Iy is s along x then d along y.
 */
function derivativeKernels(o: Required<StructureTensorOptions>): { d: Float32Array; s: Float32Array } {
  // OpenCV's Sobel(dx=1) is the separable pair [-1 0 1] along x and [1 2 1] along y.
  if (o.derivative === 'sobel') return { d: Float32Array.of(-1, 0, 1), s: Float32Array.of(1, 2, 1) };
  return { d: gaussianDerivativeKernel(o.sigmaDerivPx), s: gaussianKernel(o.sigmaDerivPx) };
}

/**
 * One tile through the kernel: Ix = (d along x, s along y), Iy = (s along x, d along y), the three
 * products, their Gaussian smoothing and (when `pixels`) the field pixels. Memory is laid out here, eight
 * arrays of the tile's size at most; the kernel's memory grows to the largest tile seen and stays.
 */
function tensorRun(k: KernelExports, plane: Plane, tile: Tile | null, o: Required<StructureTensorOptions>, pixels: boolean) {
  const whole = !tile || (tile.w === plane.width && tile.h === plane.height);
  if (!whole) checkTileInside(plane, tile);
  const width = whole ? plane.width : tile.w, height = whole ? plane.height : tile.h;
  if (width < 1 || height < 1) throw new InputError('the structure tensor needs an image of at least 1 x 1 pixels');
  const stride = Math.ceil(width / 16) * 16, n = stride * height;
  const { d, s } = derivativeKernels(o);
  const smooth = gaussianKernel(o.sigmaPx);
  const longest = Math.max(d.length, s.length, smooth.length);
  const mem = new KernelArena(k);
  const kd = mem.reserve(d.length), ks = mem.reserve(s.length), kg = mem.reserve(smooth.length);
  const line = mem.reserve(stride + longest + 16), rows = mem.reserve(longest);
  const p = Array.from({ length: pixels ? 8 : 5 }, () => mem.reserve(n));
  mem.commit();
  mem.view(kd, d.length).set(d);
  mem.view(ks, s.length).set(s);
  mem.view(kg, smooth.length).set(smooth);
  // The tile's rows go straight into the kernel's memory (no crop copied out first).
  const src = mem.view(p[0], n);
  for (let r = 0; r < height; r++) {
    const from = whole ? r * plane.width : (tile.y + r) * plane.width + tile.x;
    src.set(plane.data.subarray(from, from + width), r * stride);
  }
  // Derivatives, rows then columns: Ix in p[3], Iy in p[4].
  k.rowFilter(p[0], p[1], width, height, stride, kd, d.length, line);
  k.rowFilter(p[0], p[2], width, height, stride, ks, s.length, line);
  k.columnFilter(p[1], p[3], height, stride, ks, s.length, rows);
  k.columnFilter(p[2], p[4], height, stride, kd, d.length, rows);
  k.products(p[3], p[4], p[0], p[1], p[2], n);
  // Each product smoothed by the integration Gaussian, back into its own array (p[3] is the scratch).
  for (const q of [p[0], p[1], p[2]]) {
    k.rowFilter(q, p[3], width, height, stride, kg, smooth.length, line);
    k.columnFilter(p[3], q, height, stride, kg, smooth.length, rows);
  }
  if (pixels) k.fieldPixels(p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7], n);
  const tensor: StridedTensor = { width, height, stride, jxx: mem.view(p[0], n), jxy: mem.view(p[1], n), jyy: mem.view(p[2], n) };
  const px: FieldPixels | null = pixels
    ? { width: stride, angleRad: mem.view(p[3], n), confidence: mem.view(p[4], n), strength: mem.view(p[5], n), cos2: mem.view(p[6], n), sin2: mem.view(p[7], n) }
    : null;
  return { tensor, pixels: px };
}
