/**
 * The cyclic colour map for orientation pictures: a path through CIELAB that closes on itself, with
 * equal perceptual steps between neighbouring entries, so that no angle looks like a false edge and
 * 0 deg meets 180 deg without a seam.
 *
 * Built as in Kovesi (2015), "Good colour maps: how to design them", arXiv:1509.03700, and his
 * reference code (equalisation step): control points in CIELAB joined by a periodic order-2 spline
 * (straight segments), sampled densely, then resampled at equal cumulative lightness difference
 * (weighted CIE76) and smoothed cyclically with a Gaussian, three times, then resampled once more
 * without smoothing so the final steps are equal. Control points are his cyclic
 * "magenta-yellow-green-blue" map (docs/methods.md §14 "The orientation colour map").
 *
 * One departure from his settings: he weights lightness only (W = [1, 0, 0]) for this map. Then the
 * steps at the two lightness turning points carry no weighted difference at all and the final
 * resampling would skip them, so we weight the squared chroma terms by 0.25 (chroma differences count
 * at half their size). Lightness still dominates, and every step has the same weighted difference.
 */

import { D65_WHITE, labToXyz, srgbEncode, xyzToLinearSrgb } from '../optics/index.ts';

export type Lab = [number, number, number];

/** Cyclic control points (L*, a*, b*) of Kovesi (2015) (docs/methods.md §14); the path returns to the first point. */
export const CYCLIC_CONTROL_POINTS: readonly Lab[] = [
  [62.5, 83, -54], [80, 20, 25], [95, -20, 90], [62.5, -65, 62], [42, 10, -50], [30, 75, -103], [48, 70, -80],
];

/**
 * Weights of the squared L*, a*, b* differences in the step size ("lightness-weighted" CIE76), and
 * the smoothing sigma per 256 entries (Kovesi 2015 reference code: sigma 5-7; docs/methods.md §14).
 */
export const STEP_WEIGHTS: Lab = [1, 0.25, 0.25];
const SIGMA_PER_256 = 7;
const ITERATIONS = 3;

/** CIELAB (D65) to linear sRGB (IEC 61966-2-1 matrix), not clipped. */
export function labToLinearSrgb(lab: Lab): Lab {
  return xyzToLinearSrgb(labToXyz(lab, D65_WHITE));
}

/** CIELAB to 8-bit sRGB, clipping linear values to the gamut. */
export function labToSrgb8(lab: Lab): [number, number, number] {
  const [r, g, b] = labToLinearSrgb(lab);
  const enc = (v: number) => Math.round(255 * srgbEncode(Math.min(1, Math.max(0, v))));
  return [enc(r), enc(g), enc(b)];
}

/** Linear interpolation of y(x) at xi; x increasing. */
function interp(x: ArrayLike<number>, y: ArrayLike<number>, xi: number): number {
  const n = x.length;
  if (xi <= x[0]) return y[0];
  if (xi >= x[n - 1]) return y[n - 1];
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (x[mid] <= xi) lo = mid; else hi = mid;
  }
  const t = (xi - x[lo]) / (x[hi] - x[lo] || 1);
  return y[lo] + t * (y[hi] - y[lo]);
}

/** Gaussian smoothing with wrap-around, so the map stays periodic. */
function smoothCyclic(v: Float64Array, sigma: number): Float64Array {
  if (sigma <= 0) return v;
  const n = v.length, r = Math.ceil(3 * sigma);
  const k = Float64Array.from({ length: 2 * r + 1 }, (_, i) => Math.exp(-((i - r) ** 2) / (2 * sigma * sigma)));
  const ks = k.reduce((s, w) => s + w, 0);
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = -r; j <= r; j++) s += k[j + r] * v[(((i + j) % n) + n) % n];
    out[i] = s / ks;
  }
  return out;
}

/** The raw path: straight segments through the control points, closed, sampled at n points. */
function samplePath(points: readonly Lab[], n: number): Float64Array[] {
  const m = points.length;
  const out = [new Float64Array(n), new Float64Array(n), new Float64Array(n)];
  for (let i = 0; i < n; i++) {
    const u = (i / n) * m, k = Math.floor(u), t = u - k;
    const p = points[k % m], q = points[(k + 1) % m];
    for (let c = 0; c < 3; c++) out[c][i] = p[c] + t * (q[c] - p[c]);
  }
  return out;
}

/** Weighted CIE76 step between two CIELAB colours (STEP_WEIGHTS on the squared differences). */
export function weightedStep(p: Lab, q: Lab): number {
  return Math.sqrt(STEP_WEIGHTS[0] * (q[0] - p[0]) ** 2 + STEP_WEIGHTS[1] * (q[1] - p[1]) ** 2 + STEP_WEIGHTS[2] * (q[2] - p[2]) ** 2);
}

/**
 * The equalised cyclic map as `n` CIELAB entries; entry i is for angle i/n x 180 deg (entry n would
 * equal entry 0). Each pass: per-step weighted CIE76 difference around the closed loop, resample at
 * equal cumulative difference, smooth cyclically with sigma = 7 x n / 256 entries; the last pass
 * resamples only.
 */
export function cyclicLab(n = 256, points: readonly Lab[] = CYCLIC_CONTROL_POINTS): Lab[] {
  let ch = samplePath(points, n);
  const sigma = (SIGMA_PER_256 * n) / 256;
  for (let it = 0; it <= ITERATIONS; it++) {
    // Cumulative difference over the closed loop: n steps, the last one back to entry 0.
    const cum = new Float64Array(n + 1);
    for (let i = 0; i < n; i++) {
      const j = (i + 1) % n;
      let d = 0;
      for (let c = 0; c < 3; c++) d += STEP_WEIGHTS[c] * (ch[c][j] - ch[c][i]) ** 2;
      cum[i + 1] = cum[i] + Math.sqrt(d);
    }
    const idx = Float64Array.from({ length: n + 1 }, (_, i) => i);
    const next = ch.map((v) => {
      const closed = Float64Array.from({ length: n + 1 }, (_, i) => v[i % n]);
      const res = new Float64Array(n);
      for (let i = 0; i < n; i++) res[i] = interp(idx, closed, interp(cum, idx, (i / n) * cum[n]));
      return it < ITERATIONS ? smoothCyclic(res, sigma) : res;
    });
    ch = next;
  }
  return Array.from({ length: n }, (_, i) => [ch[0][i], ch[1][i], ch[2][i]] as Lab);
}

/** The map as 8-bit sRGB, `n` entries x 3 bytes, clipped to the gamut. */
export function cyclicSrgb8(n = 256): Uint8Array {
  const lab = cyclicLab(n);
  const out = new Uint8Array(n * 3);
  lab.forEach((e, i) => out.set(labToSrgb8(e), 3 * i));
  return out;
}

let defaultTable: Uint8Array | null = null;

/** The default 256-entry table, built once. */
export function orientationColourTable(): Uint8Array {
  return (defaultTable ??= cyclicSrgb8(256));
}

/**
 * Entry index for an axial angle in degrees: (theta mod 180) / 180 x n, so 0 and 180 deg share a
 * colour and one full cycle of the map covers 180 deg.
 */
export function angleIndex(angleDeg: number, n = 256): number {
  const t = ((angleDeg % 180) + 180) % 180;
  return Math.floor((t / 180) * n) % n;
}

/** Byte order of this machine's 32-bit words (every browser platform in use is little-endian). */
const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;

/**
 * RGBA picture of an orientation field: colour from the angle (radians, CCW as displayed), opacity
 * from the confidence (coherency) so weakly oriented pixels fade; masked pixels are transparent.
 * `alphaMax` caps the opacity (0..255) so the image shows through.
 */
export function orientationRgba(angleRad: Float32Array, confidence: Float32Array, mask: Uint8Array, alphaMax = 255): Uint8ClampedArray {
  const table = orientationColourTable(), n = table.length / 3;
  const out = new Uint8ClampedArray(angleRad.length * 4);
  const scale = n / Math.PI;
  if (!LITTLE_ENDIAN) {
    for (let i = 0; i < angleRad.length; i++) {
      if (!mask[i]) continue;
      let k = Math.floor(angleRad[i] * scale) % n;
      if (k < 0) k += n;
      const o = 4 * i;
      out[o] = table[3 * k]; out[o + 1] = table[3 * k + 1]; out[o + 2] = table[3 * k + 2];
      out[o + 3] = Math.round(alphaMax * Math.min(1, Math.max(0, confidence[i])));
    }
    return out;
  }
  // One 32-bit store per pixel (bytes R, G, B, A in memory order on a little-endian machine) instead of four:
  // the same bytes, about a third quicker on a 12 MP picture in the browser.
  const rgb = new Uint32Array(n);
  for (let k = 0; k < n; k++) rgb[k] = table[3 * k] | (table[3 * k + 1] << 8) | (table[3 * k + 2] << 16);
  const px = new Uint32Array(out.buffer);
  for (let i = 0; i < angleRad.length; i++) {
    if (!mask[i]) continue;
    let k = Math.floor(angleRad[i] * scale) % n;
    if (k < 0) k += n;
    // Clamped to [0, 1] with NaN as 0, then rounded half up: what Math.round and the clamped store give.
    const c = confidence[i], clamped = c > 0 ? (c < 1 ? c : 1) : 0;
    px[i] = (rgb[k] | (((alphaMax * clamped + 0.5) | 0) << 24)) >>> 0;
  }
  return out;
}
