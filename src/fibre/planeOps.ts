/** Plane helpers shared by the fibre finder: NaN-aware Gaussian smoothing, dilation, bilinear sampling. */

/**
 * Gaussian smoothing with sigma in px, separable, kernel radius ceil(3 sigma), borders by renormalising
 * the weights over the pixels inside the image; NaN pixels carry no weight (and stay NaN).
 */
export function smoothGaussian(data: Float32Array, width: number, height: number, sigmaPx: number): Float32Array {
  const r = Math.max(1, Math.ceil(3 * sigmaPx));
  const k = new Float64Array(2 * r + 1);
  for (let i = -r; i <= r; i++) k[i + r] = Math.exp((-0.5 * i * i) / (sigmaPx * sigmaPx));
  const tmp = new Float32Array(data.length);
  const out = new Float32Array(data.length);
  // One line of `len` samples at `start`, `stride` apart.
  const line = (src: Float32Array, dst: Float32Array, start: number, stride: number, len: number) => {
    for (let p = 0; p < len; p++) {
      const lo = Math.max(0, p - r);
      const hi = Math.min(len - 1, p + r);
      let s = 0;
      let w = 0;
      for (let q = lo, idx = start + lo * stride; q <= hi; q++, idx += stride) {
        const v = src[idx];
        if (v !== v) continue; // NaN carries no weight
        const kw = k[q - p + r];
        s += kw * v;
        w += kw;
      }
      const at = start + p * stride;
      dst[at] = src[at] !== src[at] || w === 0 ? NaN : s / w;
    }
  };
  for (let y = 0; y < height; y++) line(data, tmp, y * width, 1, width);
  for (let x = 0; x < width; x++) line(tmp, out, x, width, height);
  return out;
}

/** Square dilation of a 0/1 mask by `radius` px (separable running maximum). */
export function dilateMask(mask: Uint8Array, width: number, height: number, radius: number): Uint8Array {
  const tmp = new Uint8Array(mask.length);
  const out = new Uint8Array(mask.length);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let v = 0;
      for (let o = Math.max(0, x - radius); o <= Math.min(width - 1, x + radius) && !v; o++) v = mask[y * width + o];
      tmp[y * width + x] = v;
    }
  }
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let v = 0;
      for (let o = Math.max(0, y - radius); o <= Math.min(height - 1, y + radius) && !v; o++) v = tmp[o * width + x];
      out[y * width + x] = v;
    }
  }
  return out;
}

