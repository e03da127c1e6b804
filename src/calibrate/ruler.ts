/**
 * Stage-micrometer image -> 1D profile across its lines. The line direction comes from the summed
 * gradient structure tensor of the whole image (the lines dominate it), refined by maximising the
 * contrast of the profile; the profile is the mean of bilinear samples along each line.
 */
import { bilinear } from '../common/sampling.ts';
import type { Plane } from '../common/plane.ts';

export interface RulerProfile {
  /** Mean image value along the lines, one sample per `sampleStepPx` across them. */
  values: Float64Array;
  sampleStepPx: number;
  /** Unit vector across the lines (the profile direction), image coordinates (x right, y down). */
  acrossX: number;
  acrossY: number;
  /** Coherency of the summed structure tensor, 0 (no direction) .. 1 (pure lines). */
  coherency: number;
}

/** Angle (radians, image coordinates) of the mean gradient direction and the tensor's coherency. */
export function gradientDirection(p: Plane): { angle: number; coherency: number } {
  const { width: w, height: h, data } = p;
  let jxx = 0;
  let jyy = 0;
  let jxy = 0;
  for (let y = 1; y < h - 1; y++) {
    for (let x = 1; x < w - 1; x++) {
      const i = y * w + x;
      const gx = 0.5 * (data[i + 1] - data[i - 1]);
      const gy = 0.5 * (data[i + w] - data[i - w]);
      if (!Number.isFinite(gx) || !Number.isFinite(gy)) continue;
      jxx += gx * gx;
      jyy += gy * gy;
      jxy += gx * gy;
    }
  }
  const tr = jxx + jyy;
  const coherency = tr > 0 ? Math.sqrt((jxx - jyy) ** 2 + 4 * jxy * jxy) / tr : 0;
  return { angle: 0.5 * Math.atan2(2 * jxy, jxx - jyy), coherency };
}

/**
 * Profile across the lines at `angle` (direction of the profile, radians in image coordinates):
 * for each position s along (cos, sin) from the image centre, the mean of bilinear samples every
 * `alongStepPx` along the perpendicular line inside the image. NaN where a line has no samples.
 */
export function profileAcross(p: Plane, angle: number, sampleStepPx: number, alongStepPx: number): Float64Array {
  const ax = Math.cos(angle);
  const ay = Math.sin(angle);
  const lx = -ay;
  const ly = ax;
  const cx = (p.width - 1) / 2;
  const cy = (p.height - 1) / 2;
  const halfS = 0.5 * (Math.abs(ax) * (p.width - 1) + Math.abs(ay) * (p.height - 1));
  const halfT = 0.5 * (Math.abs(lx) * (p.width - 1) + Math.abs(ly) * (p.height - 1));
  const ns = Math.floor((2 * halfS) / sampleStepPx) + 1;
  const out = new Float64Array(ns);
  for (let k = 0; k < ns; k++) {
    const s = -halfS + k * sampleStepPx;
    // Clip the line {c + s a + t l} to the image rectangle to avoid sampling outside.
    let tLo = -halfT;
    let tHi = halfT;
    const clip = (origin: number, dir: number, max: number) => {
      if (Math.abs(dir) < 1e-12) {
        if (origin < 0 || origin > max) { tLo = 1; tHi = 0; }
        return;
      }
      const t1 = (0 - origin) / dir;
      const t2 = (max - origin) / dir;
      tLo = Math.max(tLo, Math.min(t1, t2));
      tHi = Math.min(tHi, Math.max(t1, t2));
    };
    clip(cx + s * ax, lx, p.width - 1);
    clip(cy + s * ay, ly, p.height - 1);
    let sum = 0;
    let n = 0;
    for (let t = Math.ceil(tLo / alongStepPx) * alongStepPx; t <= tHi; t += alongStepPx) {
      const v = bilinear(p, cx + s * ax + t * lx, cy + s * ay + t * ly);
      if (Number.isFinite(v)) {
        sum += v;
        n++;
      }
    }
    out[k] = n > 0 ? sum / n : NaN;
  }
  return out;
}

function profileContrast(v: Float64Array): number {
  let n = 0;
  let m = 0;
  let m2 = 0;
  for (const x of v) {
    if (!Number.isFinite(x)) continue;
    n++;
    const d = x - m;
    m += d / n;
    m2 += d * (x - m);
  }
  return n > 1 ? m2 / n : 0;
}

/**
 * Profile across a ruler's lines. Direction: summed structure tensor (biased by a degree or two for
 * narrow lines on the pixel grid), then a grid search within +-6 deg in 0.1 deg steps and a
 * golden-section refinement that maximise the profile variance (lines smeared by a wrong angle lose
 * contrast; the contrast-versus-angle curve has side lobes, hence the grid first).
 */
export function rulerProfile(p: Plane, sampleStepPx = 0.5): RulerProfile {
  const { angle: a0, coherency } = gradientDirection(p);
  // The search only needs the contrast: about 100 samples along each line and 1 px across suffice.
  const coarseAlong = Math.max(1, Math.floor(Math.min(p.width, p.height) / 100));
  const score = (a: number) => profileContrast(profileAcross(p, a, 1, coarseAlong));
  const deg = Math.PI / 180;
  let best = a0;
  let bestScore = -Infinity;
  for (let k = -60; k <= 60; k++) {
    const a = a0 + k * 0.1 * deg;
    const sc = score(a);
    if (sc > bestScore) {
      bestScore = sc;
      best = a;
    }
  }
  const g = (Math.sqrt(5) - 1) / 2;
  let lo = best - 0.1 * deg;
  let hi = best + 0.1 * deg;
  let x1 = hi - g * (hi - lo);
  let x2 = lo + g * (hi - lo);
  let f1 = score(x1);
  let f2 = score(x2);
  while (hi - lo > 2e-5) {
    if (f1 > f2) {
      hi = x2;
      x2 = x1;
      f2 = f1;
      x1 = hi - g * (hi - lo);
      f1 = score(x1);
    } else {
      lo = x1;
      x1 = x2;
      f1 = f2;
      x2 = lo + g * (hi - lo);
      f2 = score(x2);
    }
  }
  const angle = 0.5 * (lo + hi);
  return {
    values: profileAcross(p, angle, sampleStepPx, 1), sampleStepPx, acrossX: Math.cos(angle), acrossY: Math.sin(angle),
    coherency,
  };
}
