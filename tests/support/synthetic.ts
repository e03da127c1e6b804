/**
 * Analytic test images (not data): gratings, rings and seeded noise whose orientation is known by
 * construction, as in the check tables of docs/methods.md §7.5.
 */
import { seededRandom, normalRandom } from '../../src/order/index.ts';
import type { Plane } from '../../src/common/plane.ts';

/** Seeded uniform generator, so every run sees the same pixels. */
export const rng = seededRandom;

/** Standard normal samples (Box-Muller). */
export const gaussian = normalRandom;

/** I(c, r) = sin(2 pi (c sin psi + r cos psi) / period): stripes running at psi CCW on screen. */
export function grating(width: number, height: number, psiDeg: number, periodPx: number): Plane {
  const p = (psiDeg * Math.PI) / 180;
  const data = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) data[r * width + c] = Math.sin((2 * Math.PI * (c * Math.sin(p) + r * Math.cos(p))) / periodPx);
  }
  return { width, height, data };
}

export function rings(width: number, height: number, cx: number, cy: number, periodPx: number): Plane {
  const data = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) data[r * width + c] = Math.cos((2 * Math.PI * Math.hypot(c - cx, r - cy)) / periodPx);
  }
  return { width, height, data };
}

export function addNoise(p: Plane, sd: number, seed: number): Plane {
  const g = gaussian(rng(seed));
  return { ...p, data: p.data.map((v) => v + sd * g()) };
}

export function noise(width: number, height: number, seed: number): Plane {
  const g = gaussian(rng(seed));
  return { width, height, data: Float32Array.from({ length: width * height }, g) };
}

export function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Values of a per-pixel array in the central half of the image (docs/methods.md §7.5: "central 128 x 128"). */
export function central(a: ArrayLike<number>, width: number, height: number): number[] {
  const out: number[] = [];
  for (let r = height / 4; r < (3 * height) / 4; r++) for (let c = width / 4; c < (3 * width) / 4; c++) out.push(a[r * width + c]);
  return out;
}

/**
 * Stationary Gaussian random field of unit variance: white noise smoothed by a Gaussian of `corrPx`
 * (on a margin wide enough for the kernel) and rescaled by the root of the sum of the squared 2-D
 * weights (the variance of a weighted sum of independent unit normals).
 */
export function correlatedNormalField(seed: number, width: number, height: number, corrPx: number): Float32Array {
  const g = gaussian(rng(seed));
  const r = Math.ceil(3 * corrPx), PW = width + 2 * r, PH = height + 2 * r;
  const raw = Float32Array.from({ length: PW * PH }, g);
  const k = Float64Array.from({ length: 2 * r + 1 }, (_, i) => Math.exp(-0.5 * ((i - r) / corrPx) ** 2));
  const tmp = new Float64Array(PH * width), out = new Float32Array(width * height);
  for (let y = 0; y < PH; y++) for (let x = 0; x < width; x++) {
    let s = 0;
    for (let j = -r; j <= r; j++) s += k[j + r] * raw[y * PW + x + r + j];
    tmp[y * width + x] = s;
  }
  let norm = 0;
  for (let j = -r; j <= r; j++) for (let i = -r; i <= r; i++) norm += (k[j + r] * k[i + r]) ** 2;
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    let s = 0;
    for (let j = -r; j <= r; j++) s += k[j + r] * tmp[(y + r + j) * width + x];
    out[y * width + x] = s / Math.sqrt(norm);
  }
  return out;
}

/** Stripes of period 6 px whose angle follows a smooth random field (a few to tens of degrees across the image), with noise. */
export function swingingStripes(width: number, height: number, seed: number): Plane {
  const swing = correlatedNormalField(seed, width, height, 12);
  const data = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const a = 0.4 * swing[y * width + x] + 0.3;
      data[y * width + x] = 0.5 + 0.3 * Math.sin((2 * Math.PI * (-x * Math.sin(a) + y * Math.cos(a))) / 6);
    }
  }
  return addNoise({ width, height, data }, 0.05, seed + 1);
}
