/**
 * Sampled Gaussian and Gaussian-derivative kernels, truncated at 4 sigma like scipy.ndimage's
 * gaussian_filter (radius = int(4 sigma + 0.5)), so results can be checked against it directly.
 */
export function gaussianRadius(sigmaPx: number): number {
  return Math.max(1, Math.floor(4 * sigmaPx + 0.5));
}

/** Normalised Gaussian (sum 1). */
export function gaussianKernel(sigmaPx: number): Float32Array {
  const r = gaussianRadius(sigmaPx);
  const k = new Float64Array(2 * r + 1);
  let sum = 0;
  for (let i = -r; i <= r; i++) sum += k[i + r] = Math.exp((-0.5 * i * i) / (sigmaPx * sigmaPx));
  return Float32Array.from(k, (v) => v / sum);
}

/**
 * First derivative of the normalised Gaussian, as a correlation kernel: applied with correlation
 * (what OpenCV's filters do) it gives d/dx of the smoothed image with x increasing to the right.
 */
export function gaussianDerivativeKernel(sigmaPx: number): Float32Array {
  const r = gaussianRadius(sigmaPx);
  const g = new Float64Array(2 * r + 1);
  let sum = 0;
  for (let i = -r; i <= r; i++) sum += g[i + r] = Math.exp((-0.5 * i * i) / (sigmaPx * sigmaPx));
  // Correlation at offset i multiplies f(x + i); d/dx (G * f) = sum f(x+i) * (-G'(-i)) = sum f(x+i) * (i/s^2) G(i).
  return Float32Array.from(g, (v, j) => ((j - r) / (sigmaPx * sigmaPx)) * (v / sum));
}
