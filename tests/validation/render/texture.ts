/**
 * Streak texture along a director field by line-integral convolution (Cabral & Leedom 1993, "Imaging
 * vector fields using line integral convolution", SIGGRAPH '93): each pixel averages a noise image along
 * the streamline of the director through it, so the texture is elongated along the local theta and the
 * gradient structure tensor sees theta (gradients run across the streaks).
 */

/**
 * Line-integral convolution of `noise` along the director theta (radians CCW on screen, axial) with a Hann
 * weight over +-halfLengthPx, in unit steps; the streamline re-reads the director at every step (nearest
 * pixel) and keeps its sense of travel. The result is centred and scaled to unit standard deviation.
 */
export function lineIntegralConvolution(noise: Float32Array, thetaRad: Float32Array, w: number, h: number, halfLengthPx: number): Float32Array {
  const cosT = new Float32Array(w * h), sinT = new Float32Array(w * h);
  for (let i = 0; i < w * h; i++) { cosT[i] = Math.cos(thetaRad[i]); sinT[i] = -Math.sin(thetaRad[i]); }
  const L = Math.max(1, Math.round(halfLengthPx));
  const weight = Float64Array.from({ length: L + 1 }, (_, k) => 0.5 * (1 + Math.cos((Math.PI * k) / (L + 1))));
  const out = new Float32Array(w * h);
  const xMax = w - 1, yMax = h - 1;
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i0 = y * w + x;
      let acc = weight[0] * noise[i0], wsum = weight[0];
      for (let sense = -1; sense <= 1; sense += 2) {
        let px = x, py = y, dx = sense * cosT[i0], dy = sense * sinT[i0];
        for (let k = 1; k <= L; k++) {
          px += dx; py += dy;
          if (px < 0 || py < 0 || px >= xMax || py >= yMax) break;
          // Bilinear sample of the noise at (px, py).
          const x0 = px | 0, y0 = py | 0, fx = px - x0, fy = py - y0, j0 = y0 * w + x0;
          const top = noise[j0] + fx * (noise[j0 + 1] - noise[j0]);
          const bottom = noise[j0 + w] + fx * (noise[j0 + w + 1] - noise[j0 + w]);
          const wk = weight[k];
          acc += wk * (top + fy * (bottom - top));
          wsum += wk;
          // Direction at the nearest pixel, with the sense of travel kept.
          const j = ((py + 0.5) | 0) * w + ((px + 0.5) | 0);
          let ndx = cosT[j], ndy = sinT[j];
          if (ndx * dx + ndy * dy < 0) { ndx = -ndx; ndy = -ndy; }
          dx = ndx; dy = ndy;
        }
      }
      out[i0] = acc / wsum;
    }
  }
  let m = 0, v = 0;
  for (let i = 0; i < out.length; i++) m += out[i];
  m /= out.length;
  for (let i = 0; i < out.length; i++) v += (out[i] - m) ** 2;
  const sd = Math.sqrt(v / out.length) || 1;
  for (let i = 0; i < out.length; i++) out[i] = (out[i] - m) / sd;
  return out;
}
