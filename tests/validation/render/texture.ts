/**
 * Streak texture along a director field by line-integral convolution (Cabral & Leedom 1993, "Imaging
 * vector fields using line integral convolution", SIGGRAPH '93): each pixel averages a noise image along
 * the streamline of the director through it, so the texture is elongated along the local theta and the
 * gradient structure tensor sees theta (gradients run across the streaks).
 */

/** Bilinear sample of a plane at (x, y), clamped to the frame. */
function bilinear(p: Float32Array, w: number, h: number, x: number, y: number): number {
  const xc = Math.min(w - 1.000001, Math.max(0, x)), yc = Math.min(h - 1.000001, Math.max(0, y));
  const x0 = Math.floor(xc), y0 = Math.floor(yc), fx = xc - x0, fy = yc - y0;
  const i = y0 * w + x0;
  return (1 - fy) * ((1 - fx) * p[i] + fx * p[i + 1]) + fy * ((1 - fx) * p[i + w] + fx * p[i + w + 1]);
}

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
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i0 = y * w + x;
      let acc = weight[0] * noise[i0], wsum = weight[0];
      for (let sense = -1; sense <= 1; sense += 2) {
        let px = x, py = y, dx = sense * cosT[i0], dy = sense * sinT[i0];
        for (let k = 1; k <= L; k++) {
          px += dx; py += dy;
          if (px < 0 || py < 0 || px > w - 1 || py > h - 1) break;
          acc += weight[k] * bilinear(noise, w, h, px, py);
          wsum += weight[k];
          const j = Math.round(py) * w + Math.round(px);
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
