/**
 * Gaussian filtering and spatially correlated Gaussian random fields for the validation renderer.
 * Planes are row-major Float32Array, x right, y down.
 */
import { Rng } from './rng.ts';

/** Normalised, sampled Gaussian kernel exp(-i^2 / (2 sigma^2)) on [-r, r], r = ceil(reach sigma) (default 4). */
export function gaussKernel(sigmaPx: number, reach = 4): Float64Array {
  const r = Math.max(1, Math.ceil(reach * sigmaPx));
  const k = new Float64Array(2 * r + 1);
  let sum = 0;
  for (let i = -r; i <= r; i++) sum += k[i + r] = Math.exp((-0.5 * i * i) / (sigmaPx * sigmaPx));
  for (let i = 0; i < k.length; i++) k[i] /= sum;
  return k;
}

/** Index reflected into [0, n) (edge sample not repeated: -1 -> 1, n -> n - 2). */
function reflect(i: number, n: number): number {
  if (n === 1) return 0;
  const p = 2 * (n - 1);
  i = ((i % p) + p) % p;
  return i < n ? i : p - i;
}

/** Separable Gaussian blur with mirrored borders; sigma 0 returns a copy. */
export function gaussBlur(src: Float32Array, w: number, h: number, sigmaPx: number): Float32Array {
  if (!(sigmaPx > 0)) return Float32Array.from(src);
  const k = gaussKernel(sigmaPx), r = (k.length - 1) / 2;
  const tmp = new Float32Array(w * h), out = new Float32Array(w * h);
  const col = new Int32Array(w + 2 * r), row = new Int32Array(h + 2 * r);
  for (let i = -r; i < w + r; i++) col[i + r] = reflect(i, w);
  for (let i = -r; i < h + r; i++) row[i + r] = reflect(i, h);
  for (let y = 0; y < h; y++) {
    const o = y * w;
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let j = 0; j < k.length; j++) s += k[j] * src[o + col[x + j]];
      tmp[o + x] = s;
    }
  }
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let j = 0; j < k.length; j++) s += k[j] * tmp[row[y + j] * w + x];
      out[y * w + x] = s;
    }
  }
  return out;
}

/**
 * A stationary Gaussian random field of zero mean and unit variance whose correlation between points
 * r apart is exp(-r^2 / (2 L^2)), L = corrLengthPx. Made by convolving white noise with a Gaussian of
 * standard deviation L / sqrt(2) (the autocorrelation of a Gaussian kernel is a Gaussian of sqrt(2) times
 * its width) on a canvas padded by the kernel radius, so the image borders see the same statistics as the
 * middle; divided by the square root of the sum of the squared 2-D kernel weights, so the variance is
 * exactly 1 in expectation for the truncated kernel actually used (cut at 3 sigma: the correlation's tail
 * changes a little, the normal marginal that the truth rests on does not).
 */
export function correlatedField(rng: Rng, w: number, h: number, corrLengthPx: number): Float32Array {
  const k = gaussKernel(corrLengthPx / Math.SQRT2, 3), r = (k.length - 1) / 2;
  const W = w + 2 * r, H = h + 2 * r;
  const noise = rng.normals(W * H);
  let k2 = 0;
  for (let i = 0; i < k.length; i++) k2 += k[i] * k[i];
  const norm = 1 / k2; // 1 / sqrt((sum k^2)^2): the 2-D kernel is the outer product of k with itself
  const tmp = new Float32Array(W * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < W; x++) {
      let s = 0;
      for (let j = 0; j < k.length; j++) s += k[j] * noise[(y + j) * W + x];
      tmp[y * W + x] = s;
    }
  }
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let s = 0;
      const o = y * W + x;
      for (let j = 0; j < k.length; j++) s += k[j] * tmp[o + j];
      out[y * w + x] = s * norm;
    }
  }
  return out;
}
