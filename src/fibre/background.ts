/**
 * Uneven illumination: a low-order 2D polynomial fitted by least squares to the background pixels
 * only (fibre pixels and their surroundings excluded), evaluated everywhere and subtracted. A smooth
 * surface cannot follow a fibre, so unlike large-kernel smoothing it does not eat wide fibres.
 */
import { solveLinear } from './linalg.ts';

export interface BackgroundSurface {
  degree: number;
  /** Background level at every pixel. */
  level: Float32Array;
}

function terms(degree: number): [number, number][] {
  const t: [number, number][] = [];
  for (let total = 0; total <= degree; total++) for (let a = total; a >= 0; a--) t.push([a, total - a]);
  return t;
}

/**
 * Least-squares polynomial surface sum c_ab u^a v^b (a + b <= degree), with u, v the pixel
 * coordinates scaled to [-1, 1], fitted to pixels where `use` is 1 and the value is finite, on a grid
 * of every `stride`-th pixel. Falls back to lower degrees when the system is singular.
 */
export function fitBackground(
  data: Float32Array, width: number, height: number, use: Uint8Array, degree: number, stride: number,
): BackgroundSurface {
  const fit = fitSurface(data, width, height, use, degree, stride);
  return { degree: fit.degree, level: fit.degree < 0 ? new Float32Array(width * height) : evaluateSurface(fit) };
}

export interface SurfaceFit {
  degree: number;
  width: number;
  height: number;
  terms: [number, number][];
  coefficients: number[];
}

/** Background level of a fitted surface at pixel (x, y). */
export function surfaceAt(f: SurfaceFit, x: number, y: number): number {
  const u = f.width > 1 ? (2 * x) / (f.width - 1) - 1 : 0;
  const v = f.height > 1 ? (2 * y) / (f.height - 1) - 1 : 0;
  let s = 0;
  for (let k = 0; k < f.terms.length; k++) s += f.coefficients[k] * u ** f.terms[k][0] * v ** f.terms[k][1];
  return s;
}

/** The coefficients of the least-squares surface (see fitBackground); degree -1 when nothing fits. */
export function fitSurface(
  data: Float32Array, width: number, height: number, use: Uint8Array, degree: number, stride: number,
): SurfaceFit {
  for (let deg = degree; deg >= 0; deg--) {
    const tm = terms(deg);
    const m = tm.length;
    const ata = Array.from({ length: m }, () => new Array<number>(m).fill(0));
    const atb = new Array<number>(m).fill(0);
    const basis = new Array<number>(m);
    let count = 0;
    for (let y = 0; y < height; y += stride) {
      const v = height > 1 ? (2 * y) / (height - 1) - 1 : 0;
      for (let x = 0; x < width; x += stride) {
        const i = y * width + x;
        const val = data[i];
        if (!use[i] || !Number.isFinite(val)) continue;
        const u = width > 1 ? (2 * x) / (width - 1) - 1 : 0;
        for (let k = 0; k < m; k++) basis[k] = u ** tm[k][0] * v ** tm[k][1];
        for (let a = 0; a < m; a++) {
          atb[a] += basis[a] * val;
          for (let b = a; b < m; b++) ata[a][b] += basis[a] * basis[b];
        }
        count++;
      }
    }
    if (count < 4 * m) continue;
    for (let a = 0; a < m; a++) for (let b = 0; b < a; b++) ata[a][b] = ata[b][a];
    const c = solveLinear(ata, atb);
    if (!c) continue;
    return { degree: deg, width, height, terms: tm, coefficients: c };
  }
  return { degree: -1, width, height, terms: [], coefficients: [] };
}

/** The surface at every pixel, with per-column and per-row power tables (no pow per pixel). */
export function evaluateSurface(f: SurfaceFit): Float32Array {
  const { width, height, degree: deg, terms: tm, coefficients: c } = f;
  const uPow = Array.from({ length: deg + 1 }, (_, a) => Float64Array.from({ length: width },
    (_, x) => (width > 1 ? (2 * x) / (width - 1) - 1 : 0) ** a));
  const level = new Float32Array(width * height);
  const rowCoef = new Float64Array(deg + 1);
  for (let y = 0; y < height; y++) {
    const v = height > 1 ? (2 * y) / (height - 1) - 1 : 0;
    rowCoef.fill(0);
    for (let k = 0; k < tm.length; k++) rowCoef[tm[k][0]] += c[k] * v ** tm[k][1];
    const off = y * width;
    for (let x = 0; x < width; x++) {
      let s = 0;
      for (let a = 0; a <= deg; a++) s += rowCoef[a] * uPow[a][x];
      level[off + x] = s;
    }
  }
  return level;
}
