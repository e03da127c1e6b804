/**
 * A ruler image resampled in the frame of its ticks: s across the ticks (along the unit normal n at
 * angle theta), t along them, both in px from the image centre. The image is cut into strips of
 * `widthPx` rows of constant t; each strip's profile is the mean of bilinear samples over its rows at
 * every s (NaN where a row leaves the image). Each tick then crosses each strip as one line whose
 * position can be measured on its own, so the tick direction and the period come from the tick
 * positions themselves, whatever the ticks' lengths. docs/methods.md, "Micrometer calibration".
 */
import { valueOfRank, type Plane } from '../common/index.ts';

export interface Strip {
  /** Centre of the strip along the ticks, px from the image centre. */
  t: number;
  /** Mean of the strip's rows at s = sStart + k step. */
  values: Float64Array;
  /** Standard deviation of the profile's noise: 1.4826 MAD of (mean of the first half of the rows - mean of the second half) / 2. */
  noiseSd: number;
}

export interface StripProfiles {
  /** Normal across the ticks, radians in image coordinates (x right, y down). */
  normalRad: number;
  sStart: number;
  step: number;
  widthPx: number;
  strips: Strip[];
}

/** Image point of frame coordinates (s, t) for the normal angle theta. */
export function frameToImage(p: Plane, normalRad: number, s: number, t: number): { x: number; y: number } {
  const nx = Math.cos(normalRad), ny = Math.sin(normalRad);
  return { x: (p.width - 1) / 2 + s * nx - t * ny, y: (p.height - 1) / 2 + s * ny + t * nx };
}

/**
 * Strip profiles across the ticks at normal angle `normalRad`, strips `widthPx` rows wide (rows 1 px
 * apart along the ticks), samples `stepPx` apart across them.
 */
export function stripProfiles(p: Plane, normalRad: number, widthPx: number, stepPx: number): StripProfiles {
  const { width: W, height: H, data } = p;
  const nx = Math.cos(normalRad), ny = Math.sin(normalRad);
  const tx = -ny, ty = nx;
  const cx = (W - 1) / 2, cy = (H - 1) / 2;
  const halfS = 0.5 * (Math.abs(nx) * (W - 1) + Math.abs(ny) * (H - 1));
  const halfT = 0.5 * (Math.abs(tx) * (W - 1) + Math.abs(ty) * (H - 1));
  const ns = Math.floor((2 * halfS) / stepPx) + 1;
  const sStart = -halfS;
  const w = Math.max(2, Math.round(widthPx));
  const half = w >> 1;
  const nStrips = Math.floor((2 * halfT + 1) / w);
  const strips: Strip[] = [];
  const diffs = new Float64Array(ns);
  for (let j = 0; j < nStrips; j++) {
    const t0 = -halfT + j * w;
    const values = new Float64Array(ns);
    let nd = 0;
    for (let k = 0; k < ns; k++) {
      const s = sStart + k * stepPx;
      let x = cx + s * nx + t0 * tx;
      let y = cy + s * ny + t0 * ty;
      let a = 0;
      let b = 0;
      let ok = true;
      for (let r = 0; r < w; r++, x += tx, y += ty) {
        if (!(x >= 0 && y >= 0 && x <= W - 1 && y <= H - 1)) { ok = false; break; }
        const x0 = Math.min(Math.floor(x), W - 2), y0 = Math.min(Math.floor(y), H - 2);
        const fx = x - x0, fy = y - y0;
        const i = y0 * W + x0;
        const v = (data[i] * (1 - fx) + data[i + 1] * fx) * (1 - fy) + (data[i + W] * (1 - fx) + data[i + W + 1] * fx) * fy;
        if (r < half) a += v;
        else b += v;
      }
      if (!ok || !Number.isFinite(a + b)) {
        values[k] = NaN;
        continue;
      }
      values[k] = (a + b) / w;
      diffs[nd++] = a / half - b / (w - half);
    }
    let noiseSd = NaN;
    if (nd >= 8) {
      const d = diffs.slice(0, nd);
      const med = selectMedian(d);
      for (let i = 0; i < nd; i++) d[i] = Math.abs(d[i] - med);
      noiseSd = (1.4826 * selectMedian(d)) / 2;
    }
    strips.push({ t: t0 + (w - 1) / 2, values, noiseSd });
  }
  return { normalRad, sStart, step: stepPx, widthPx: w, strips };
}

/** Median by Hoare's selection (reorders `a`; the mean of the two middle values for an even count). */
function selectMedian(a: Float64Array): number {
  const n = a.length;
  return n % 2 ? valueOfRank(a, n >> 1) : 0.5 * (valueOfRank(a, (n >> 1) - 1) + valueOfRank(a, n >> 1));
}
