import { InputError } from '../common/index.ts';
import type { Plane } from '../common/index.ts';
import { KernelArena, type KernelExports } from '../wasm/index.ts';
import { gaussianDerivativeKernel, gaussianKernel } from './kernels.ts';

/** The scales of the tensor (StructureTensorOptions, resolved). */
export interface TensorScales { sigmaPx: number; sigmaDerivPx: number; derivative: 'gaussian' | 'sobel' }

/**
 * An image's grey rows read on demand (e.g. a file's samples decoded row by row) instead of a plane held whole:
 * `readRow` writes `w` values of row y from column x into `out`, the values the decoded plane would hold.
 */
export interface RowSource { width: number; height: number; readRow(y: number, x: number, w: number, out: Float32Array): void }

/** A plane held whole, or its rows read on demand. */
export type PlaneRows = Plane | RowSource;

/** A rectangle of a plane: top-left pixel and size. */
export interface CropRect { x: number; y: number; w: number; h: number }

/**
 * What each output row holds: 'lean' the field's pixels (texture strength, coherency, cos 2 theta, sin 2 theta:
 * the kernel's outputRow), 'tensor' Jxx, Jxy, Jyy themselves (and nothing in the fourth view).
 */
export type RowKind = 'lean' | 'tensor';

/**
 * Receives output row `y` (0-based in the crop) as four views of `width` floats and more (the row's vectors
 * run on to a multiple of 16), valid only during the call: copy what is kept.
 */
export type RowSink = (y: number, a: Float32Array, b: Float32Array, c: Float32Array, d: Float32Array) => void;

/** Where streamTensorRows keeps its memory, and which rows it makes only in part (see there). */
export interface StreamExtras { arenaStart?: number; windows?: { most: number; of: (y: number) => ArrayLike<number> | null } }

/** OpenCV's borderInterpolate for BORDER_REFLECT (fedcba|abcdef|fedcba), any n >= 1. */
export function reflectIndex(p: number, n: number): number {
  if (n === 1) return 0;
  while (p < 0 || p >= n) p = p < 0 ? -p - 1 : 2 * n - p - 1;
  return p;
}

/**
 * The derivative kernel d and its smoothing partner s (correlation kernels, as OpenCV's filters use): Ix is d
 * along x then s along y, Iy is s along x then d along y. OpenCV's Sobel(dx=1) is the separable pair [-1 0 1]
 * along x and [1 2 1] along y.
 */
export function derivativeKernels(o: TensorScales): { d: Float32Array; s: Float32Array } {
  if (o.derivative === 'sobel') return { d: Float32Array.of(-1, 0, 1), s: Float32Array.of(1, 2, 1) };
  return { d: gaussianDerivativeKernel(o.sigmaDerivPx), s: gaussianKernel(o.sigmaDerivPx) };
}

/** The kernel folds taps j and n-1-j together: it must be (anti)symmetric to the bit. */
function checkSymmetry(k: Float32Array, sign: 1 | -1): void {
  for (let j = 0; j < k.length; j++) {
    if (k[j] !== sign * k[k.length - 1 - j]) throw new Error(`a ${sign > 0 ? 'smoothing' : 'derivative'} kernel that is not ${sign > 0 ? '' : 'anti'}symmetric`);
  }
}

/**
 * Gradient structure tensor J = G_sigma * (grad I grad I^T) (Bigun & Granlund 1987; OpenCV tutorial
 * "Anisotropic image segmentation by a gradient structure tensor") of the crop `crop` of `plane`, streamed row
 * by row through the WebAssembly kernel (src/wasm/tensorKernel.as.ts): rows `rowFrom` <= y < `rowTo` of the
 * crop are handed to `sink` in order. Borders are the crop's, mirrored with the edge pixel repeated (scipy
 * 'reflect' = OpenCV BORDER_REFLECT) at every filter; y is the row index, downwards. The kernel's memory holds
 * about (kernel heights + 8) rows of the crop's width, reused from crop to crop; a pixel's result does not
 * depend on where the crop starts, so the inner part of a crop with a halo of tensorHaloPx equals the
 * whole image's, bit for bit. Returns the largest |value| of the input rows read: NaN or infinity when one of
 * them is not finite (the rows given out are then not to be used). `extra.arenaStart`: the kernel memory used
 * starts at this byte (default: the first free page), so a caller may keep its own buffers below it.
 * `extra.windows`: rows for which only some pixels are read; `of(y)` lists pixels x (at most `most`) whose
 * 16-pixel window is made (the kernel's outputWindows: the same bits as the whole row, at a fraction of the last
 * stage's cost), or null for the whole row. Only those pixels of the views are then valid.
 */
export function streamTensorRows(
  k: KernelExports, plane: PlaneRows, crop: CropRect, o: TensorScales, kind: RowKind,
  rowFrom: number, rowTo: number, sink: RowSink, extra: StreamExtras = {},
): number {
  const { w: width, h: height } = crop;
  if (width < 1 || height < 1) throw new InputError('the structure tensor needs an image of at least 1 x 1 pixels');
  if (crop.x < 0 || crop.y < 0 || crop.x + width > plane.width || crop.y + height > plane.height) throw new Error('a crop outside its plane');
  const stride = Math.ceil(width / 16) * 16;
  const { d, s } = derivativeKernels(o);
  const g = gaussianKernel(o.sigmaPx);
  checkSymmetry(d, -1); checkSymmetry(s, 1); checkSymmetry(g, 1);
  const L = d.length, Lg = g.length, rd = L >> 1, rg = Lg >> 1;

  const mem = new KernelArena(k, extra.arenaStart);
  const kd = mem.reserve(L), ks = mem.reserve(L), kg = mem.reserve(Lg);
  const lineIn = mem.reserve(stride + 2 * rd + 16);
  const ringD = mem.reserve(L * stride), ringS = mem.reserve(L * stride);
  const ix = mem.reserve(stride), iy = mem.reserve(stride);
  const lxx = mem.reserve(stride + 2 * rg + 16), lxy = mem.reserve(stride + 2 * rg + 16), lyy = mem.reserve(stride + 2 * rg + 16);
  const ringXX = mem.reserve(Lg * stride), ringXY = mem.reserve(Lg * stride), ringYY = mem.reserve(Lg * stride);
  const out = [mem.reserve(stride), mem.reserve(stride), mem.reserve(stride), mem.reserve(stride)];
  const tD = mem.reserve(L), tS = mem.reserve(L), tXX = mem.reserve(Lg), tXY = mem.reserve(Lg), tYY = mem.reserve(Lg);
  const most = extra.windows?.most ?? 0, xs = mem.reserve(most), shifted = mem.reserve(3 * Lg);
  mem.commit();
  const windowStarts = new Int32Array(k.memory.buffer, xs, most);
  mem.view(kd, L).set(d);
  mem.view(ks, L).set(s);
  mem.view(kg, Lg).set(g);
  const inView = mem.view(lineIn + 4 * rd, width);
  const tables = { d: mem.addresses(tD, L), s: mem.addresses(tS, L), xx: mem.addresses(tXX, Lg), xy: mem.addresses(tXY, Lg), yy: mem.addresses(tYY, Lg) };
  const outViews = out.map((p) => mem.view(p, stride));
  const rowBytes = 4 * stride;

  // Rows needed: gradient rows within rg of an output row, input rows within rd of a gradient row (the
  // reflected ones near the crop's top and bottom lie inside these ranges too).
  const gradFrom = Math.max(0, rowFrom - rg), inFrom = Math.max(0, gradFrom - rd);
  let nextIn = inFrom, nextGrad = gradFrom, largest = 0;
  const pushInput = (i: number) => {
    if ('data' in plane) {
      const from = (crop.y + i) * plane.width + crop.x;
      inView.set(plane.data.subarray(from, from + width));
    } else plane.readRow(crop.y + i, crop.x, width, inView);
    const slot = (i % L) * rowBytes;
    largest = Math.max(largest, k.inputRow(lineIn, width, stride, kd, ks, L, ringD + slot, ringS + slot));
  };
  const pushGradient = (q: number) => {
    const last = Math.min(height - 1, q + rd);
    while (nextIn <= last) pushInput(nextIn++);
    for (let t = 0; t < L; t++) {
      const slot = (reflectIndex(q + t - rd, height) % L) * rowBytes;
      tables.d[t] = ringD + slot;
      tables.s[t] = ringS + slot;
    }
    const slot = (q % Lg) * rowBytes;
    k.gradientRow(tD, tS, kd, ks, L, width, stride, ix, iy, lxx, lxy, lyy, kg, Lg, ringXX + slot, ringXY + slot, ringYY + slot);
  };
  const lean = kind === 'lean' ? 1 : 0;
  for (let y = rowFrom; y < rowTo; y++) {
    const last = Math.min(height - 1, y + rg);
    while (nextGrad <= last) pushGradient(nextGrad++);
    for (let t = 0; t < Lg; t++) {
      const slot = (reflectIndex(y + t - rg, height) % Lg) * rowBytes;
      tables.xx[t] = ringXX + slot;
      tables.xy[t] = ringXY + slot;
      tables.yy[t] = ringYY + slot;
    }
    const part = extra.windows?.of(y);
    if (part) {
      if (part.length > most) throw new Error('more windows than reserved');
      for (let i = 0; i < part.length; i++) windowStarts[i] = Math.min(part[i], stride - 16);
      k.outputWindows(tXX, tXY, tYY, kg, Lg, lean, xs, part.length, shifted, out[0], out[1], out[2], out[3]);
    } else k.outputRow(tXX, tXY, tYY, kg, Lg, stride, lean, out[0], out[1], out[2], out[3]);
    sink(y, outViews[0], outViews[1], outViews[2], outViews[3]);
  }
  return largest;
}
