/**
 * First guess of a ruler's tick direction from the image's edges. The tick edges have gradients across
 * the ticks (at angle theta), the baseline, the tick ends and upright printed numbers have gradients
 * along them (theta + 90 deg); in the quadrupled angle 4 phi all of them agree, so the squared-gradient-weighted
 * histogram of 4 phi peaks at 4 theta however the tick lengths are mixed. The guess is theta modulo
 * 90 deg; the caller decides which of theta and theta + 90 deg is across the ticks (the one whose
 * profile shows a regular grid of lines). docs/methods.md, "Micrometer calibration".
 */
import type { Plane } from '../common/index.ts';

const BINS = 720;

/**
 * Separable convolution with kernels kx along x and ky along y (both of odd length, centred; edge
 * samples repeated).
 */
function separable(data: Float32Array, w: number, h: number, kx: Float32Array, ky: Float32Array): Float32Array {
  const pass = (src: Float32Array, k: Float32Array, n: number, lines: number, along: number, across: number) => {
    const r = (k.length - 1) / 2;
    const out = new Float32Array(w * h);
    for (let l = 0; l < lines; l++) {
      const o = l * across;
      for (let i = 0; i < n; i++) {
        let s = 0;
        if (i >= r && i < n - r) for (let d = -r; d <= r; d++) s += k[d + r] * src[o + (i - d) * along];
        else for (let d = -r; d <= r; d++) s += k[d + r] * src[o + Math.min(n - 1, Math.max(0, i - d)) * along];
        out[o + i * along] = s;
      }
    }
    return out;
  };
  return pass(pass(data, kx, w, h, 1, w), ky, h, w, w, 1);
}

/** Sampled Gaussian of sigma (to 3 sigma, unit sum) and its derivative (unit first moment: sum -x k'(x) ... = 1 on a ramp). */
function gaussianKernels(sigma: number): { g: Float32Array; d: Float32Array } {
  const r = Math.max(1, Math.ceil(3 * sigma));
  const g = new Float32Array(2 * r + 1);
  const d = new Float32Array(2 * r + 1);
  let sg = 0;
  let sd = 0;
  for (let i = -r; i <= r; i++) {
    const v = Math.exp(-0.5 * (i / sigma) ** 2);
    g[i + r] = v;
    d[i + r] = -i * v;
    sg += v;
    sd += i * i * v;
  }
  for (let i = 0; i < g.length; i++) {
    g[i] /= sg;
    d[i] /= sd;
  }
  return { g, d };
}

/** Box-average by an integer factor (non-finite pixels count as the plane's mean). */
function binned(p: Plane, f: number): { data: Float32Array; w: number; h: number } {
  if (f === 1 && p.data.every(Number.isFinite)) return { data: Float32Array.from(p.data), w: p.width, h: p.height };
  let mean = 0;
  let n = 0;
  for (const v of p.data) if (Number.isFinite(v)) { mean += v; n++; }
  mean = n > 0 ? mean / n : 0;
  const w = Math.floor(p.width / f);
  const h = Math.floor(p.height / f);
  const data = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let dy = 0; dy < f; dy++) {
        for (let dx = 0; dx < f; dx++) {
          const v = p.data[(y * f + dy) * p.width + x * f + dx];
          s += Number.isFinite(v) ? v : mean;
        }
      }
      data[y * w + x] = s / (f * f);
    }
  }
  return { data, w, h };
}

export interface DirectionGuess {
  /** Angle of one of the two axes of the ruler (across or along the ticks), radians in [0, pi/2), image coordinates (y down). */
  axisRad: number;
  /** Share of the squared gradient within +-5 deg of the peak (modulo 90 deg): 0.22 for no preferred direction, near 1 for a clean ruler. */
  concentration: number;
}

/**
 * Ruler axes modulo 90 deg: the peak of the histogram of 4 phi weighted by the squared gradient (phi the gradient angle,
 * Gaussian derivatives on the image binned to at most about a megapixel; pixels of at least the mean
 * squared gradient), refined by the
 * circular mean, weighted by the squared gradient, within +-3 deg of the peak; of the gradient scales tried, the one whose
 * histogram is most concentrated.
 */
export function rulerAxes(p: Plane): DirectionGuess {
  const f = Math.max(1, Math.floor(Math.sqrt((p.width * p.height) / 1.2e6)));
  const b = binned(p, f);
  // Fine scale for sharp clean rulers; coarse (sigma 1.25 on the image binned 2 x 2, about 2.5 px)
  // where noise swamps the fine gradients.
  const fine = axesAtScale(b.data, b.w, b.h, 1);
  const b2 = binned({ width: b.w, height: b.h, data: b.data }, 2);
  const coarse = b2.w >= 16 && b2.h >= 16 ? axesAtScale(b2.data, b2.w, b2.h, 1.25) : fine;
  return coarse.concentration > fine.concentration ? coarse : fine;
}

function axesAtScale(data: Float32Array, w: number, h: number, sigma: number): DirectionGuess {
  // Gaussian-derivative gradients: a derivative kernel times a smoothing one is isotropic, so the
  // angle carries no pixel-grid bias (a central difference would tilt narrow stripes by a degree or two).
  const k = gaussianKernels(sigma);
  const gx = separable(data, w, h, k.d, k.g);
  const gy = separable(data, w, h, k.g, k.d);
  let meanE = 0;
  for (let i = 0; i < w * h; i++) meanE += gx[i] * gx[i] + gy[i] * gy[i];
  meanE /= Math.max(1, w * h);
  // Pixels below the mean squared gradient (flat field, most of the noise) add little and are skipped.
  const hist = new Float64Array(BINS);
  let total = 0;
  for (let i = 0; i < w * h; i++) {
    const e = gx[i] * gx[i] + gy[i] * gy[i];
    if (!(e >= meanE) || !(e > 0)) continue;
    let a4 = 4 * Math.atan2(gy[i], gx[i]);
    a4 -= 2 * Math.PI * Math.floor(a4 / (2 * Math.PI));
    hist[Math.min(BINS - 1, Math.floor((a4 / (2 * Math.PI)) * BINS))] += e;
    total += e;
  }
  // Smooth circularly over +-3 bins (about +-0.4 deg in phi) and take the peak.
  let best = 0;
  let bestV = -1;
  for (let i = 0; i < BINS; i++) {
    let s = 0;
    for (let d = -3; d <= 3; d++) s += hist[(i + d + BINS) % BINS] * Math.exp(-0.5 * (d / 1.5) ** 2);
    if (s > bestV) { bestV = s; best = i; }
  }
  const binRad = (2 * Math.PI) / BINS;
  const half = Math.round((12 * Math.PI) / 180 / binRad);
  let re = 0;
  let im = 0;
  for (let d = -half; d <= half; d++) {
    const a = (best + d + 0.5) * binRad;
    const v = hist[(best + d + BINS) % BINS];
    re += v * Math.cos(a);
    im += v * Math.sin(a);
  }
  let axis = Math.atan2(im, re) / 4;
  axis -= (Math.PI / 2) * Math.floor(axis / (Math.PI / 2));
  const near = Math.round((20 * Math.PI) / 180 / binRad);
  let share = 0;
  for (let d = -near; d <= near; d++) share += hist[(best + d + BINS) % BINS];
  return { axisRad: axis, concentration: total > 0 ? share / total : 0 };
}
