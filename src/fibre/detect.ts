/**
 * Finding the fibres: smooth lightly, split fibre from background (Otsu, then 0.3 of the fibre
 * contrast), decide the polarity (the background is the class that owns most of the image border),
 * flatten uneven illumination with a polynomial fitted to the background, and label the connected
 * elongated objects. Each object's axis is its principal axis (second moments of the mask).
 */
import { InputError } from '../common/index.ts';
import { evaluateSurface, fitBackground, fitSurface, surfaceAt } from './background.ts';
import { dilateMask, smoothGaussian } from './planeOps.ts';
import { median, robustSd } from './stats.ts';

export interface FibreObject {
  /** Pixel indices of the object's mask. */
  pixels: Int32Array;
  areaPx: number;
  centreX: number;
  centreY: number;
  /** Unit vector along the principal axis, image coordinates (x right, y down). */
  ux: number;
  uy: number;
  /** sqrt(lambda1 / lambda2) of the mask's second moments. */
  elongation: number;
}

export interface Segmentation {
  /** polarity * (image - background): the fibre is positive, the background near 0. */
  flattened: Float32Array;
  polarity: 'dark' | 'bright';
  /** Median fibre level in `flattened` (the fibre contrast), image units. */
  contrast: number;
  /** Robust SD of the background after light smoothing, image units. */
  noiseSd: number;
  shadingDegree: number;
  fibres: FibreObject[];
  /** Objects too small or not elongated enough to be a fibre. */
  ignoredObjects: number;
}

export interface SegmentOptions {
  polarity: 'auto' | 'dark' | 'bright';
  shadingDegree: number;
  /** Smallest contrast-to-noise ratio (smoothed) accepted as a fibre. */
  minContrastToNoise: number;
  minElongation: number;
  minAreaPx: number;
  smoothSigmaPx: number;
}

function otsuThreshold(values: Float32Array): number {
  const step = Math.max(1, Math.floor(values.length / 50_000));
  const sorted = new Float32Array(Math.ceil(values.length / step));
  for (let i = 0, k = 0; i < values.length; i += step) sorted[k++] = values[i];
  sorted.sort();
  const lo = sorted[Math.floor(0.001 * (sorted.length - 1))];
  const hi = sorted[Math.ceil(0.999 * (sorted.length - 1))];
  if (!(hi > lo)) return lo;
  const bins = 512;
  const hist = new Float64Array(bins);
  for (const v of values) hist[Math.min(bins - 1, Math.max(0, Math.floor(((v - lo) / (hi - lo)) * bins)))]++;
  const total = values.length;
  let sumAll = 0;
  for (let i = 0; i < bins; i++) sumAll += i * hist[i];
  let wB = 0;
  let sumB = 0;
  let best = 0;
  let bestVar = -1;
  for (let i = 0; i < bins - 1; i++) {
    wB += hist[i];
    sumB += i * hist[i];
    const wF = total - wB;
    if (wB === 0 || wF === 0) continue;
    const between = wB * wF * (sumB / wB - (sumAll - sumB) / wF) ** 2;
    if (between > bestVar) {
      bestVar = between;
      best = i;
    }
  }
  return lo + ((best + 1) / bins) * (hi - lo);
}

/** Fraction of the fibre contrast above which a pixel belongs to a fibre object (see stations.ts). */
const MASK_LEVEL = 0.3;

/**
 * Segments the fibres. The first split is made against a robust plane (a curved surface could bend into a
 * wide fibre); when that finds no fibre, as under a strong lamp fall-off towards the border (which a
 * plane leaves as a dark frame that looks like the fibre's class), it is made again against a robust
 * quadratic surface.
 */
export function segmentFibres(data: Float32Array, width: number, height: number, o: SegmentOptions): Segmentation {
  try {
    const first = segmentWith(data, width, height, o, 1);
    if (first.fibres.length > 0 || o.shadingDegree < 2) return first;
  } catch (e) {
    if (!(e instanceof InputError) || o.shadingDegree < 2) throw e;
  }
  return segmentWith(data, width, height, o, 2);
}

function segmentWith(data: Float32Array, width: number, height: number, o: SegmentOptions, firstDegree: number): Segmentation {
  const n = width * height;
  let finite = 0;
  let min = Infinity;
  let max = -Infinity;
  for (const v of data) {
    if (!Number.isFinite(v)) continue;
    finite++;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (finite < 0.5 * n) {
    throw new InputError(`only ${finite} of ${n} pixels hold a finite value`, 'Use an image with valid pixel data');
  }
  if (!(max - min > 1e-6 * Math.max(1e-30, Math.abs(max)))) {
    throw new InputError('the image is uniform (blank): there is no fibre to measure',
      'Check the exposure and that the fibre is in the field');
  }
  const clean = new Float32Array(n);
  for (let i = 0; i < n; i++) clean[i] = Number.isFinite(data[i]) ? data[i] : NaN;
  const smooth = smoothGaussian(clean, width, height, o.smoothSigmaPx);
  const stride = Math.max(1, Math.floor(Math.sqrt(n / 40_000)));
  const frame = 2;

  // First split against a robust plane, then refit the background without the fibre until the mask settles.
  let residual = robustFlatten(smooth, width, height, Math.min(firstDegree, o.shadingDegree), stride);
  let fibreMask = new Uint8Array(n);
  let sign = 1;
  let degree = 0;
  let contrast = 0;
  let noiseSd = 0;
  const passes = 8;
  let previousMaskCount = -1;
  for (let pass = 0; pass < passes; pass++) {
    if (pass === 0) {
      const sampleStep = Math.max(1, Math.floor(n / 200_000));
      const finiteRes: number[] = [];
      for (let i = 0; i < n; i += sampleStep) if (Number.isFinite(residual[i])) finiteRes.push(residual[i]);
      const thr = otsuThreshold(Float32Array.from(finiteRes));
      let borderHigh = 0;
      let borderAll = 0;
      // Pixels within `frame` px of the image border: whole top and bottom rows, ends of the others.
      const countBorder = (x: number, y: number) => {
        const r = residual[y * width + x];
        if (!Number.isFinite(r)) return;
        borderAll++;
        if (r > thr) borderHigh++;
      };
      for (let y = 0; y < height; y++) {
        const edgeRow = y < frame || y >= height - frame;
        for (let x = 0; x < width; x++) {
          if (!edgeRow && x === frame) x = Math.max(frame, width - frame);
          countBorder(x, y);
        }
      }
      const backgroundIsHigh = borderHigh > borderAll / 2;
      sign = o.polarity === 'auto' ? (backgroundIsHigh ? -1 : 1) : o.polarity === 'dark' ? -1 : 1;
      for (let i = 0; i < n; i++) fibreMask[i] = sign * (residual[i] - thr) > 0 ? 1 : 0;
    } else {
      // Generous on purpose: anything fibre-like stays out of the background fit.
      const excludeLevel = Math.max(0.2 * contrast, 4 * noiseSd);
      for (let i = 0; i < n; i++) fibreMask[i] = sign * residual[i] > excludeLevel ? 1 : 0;
    }
    const exclude = dilateMask(fibreMask, width, height, 4);
    const use = new Uint8Array(n);
    for (let i = 0; i < n; i++) use[i] = 1 - exclude[i];
    const bg = fitBackground(smooth, width, height, use, o.shadingDegree, stride);
    degree = bg.degree;
    if (degree < 0) {
      throw new InputError('too little background around the fibre to model the illumination',
        'Use a field of view where the background shows on both sides of the fibre');
    }
    residual = subtract(smooth, bg.level);
    const fib: number[] = [];
    const back: number[] = [];
    const sampleStep = Math.max(1, Math.floor(n / 50_000));
    for (let i = 0; i < n; i += sampleStep) {
      const r = residual[i];
      if (!Number.isFinite(r)) continue;
      if (sign * r > (pass === 0 ? -Infinity : contrast / 2) && fibreMask[i]) fib.push(sign * r);
      else if (use[i]) back.push(sign * r);
    }
    if (fib.length === 0 || back.length === 0) {
      throw new InputError('no fibre found: the image does not split into fibre and background',
        'Check that a fibre is in the field and in focus');
    }
    contrast = median(fib);
    const settled = Math.abs(fib.length - previousMaskCount) <= 0.002 * fib.length;
    previousMaskCount = fib.length;
    noiseSd = robustSd(back);
    if (settled || pass === passes - 1) {
      for (let i = 0; i < n; i++) fibreMask[i] = sign * residual[i] > MASK_LEVEL * contrast ? 1 : 0;
      // The final background level comes from the unsmoothed data at the same surface.
      const flat = new Float32Array(n);
      for (let i = 0; i < n; i++) flat[i] = sign * (clean[i] - bg.level[i]);
      const ratio = noiseSd > 0 ? contrast / noiseSd : Infinity;
      if (!(contrast > 0) || ratio < o.minContrastToNoise) {
        throw new InputError(
          `no fibre found: the best fibre-like contrast is ${ratio.toFixed(1)} times the background noise ` +
          `(needs ${o.minContrastToNoise})`, 'Check focus, exposure and that a fibre is in the field');
      }
      const { fibres, ignored } = labelFibres(fibreMask, width, height, o);
      return {
        flattened: flat, polarity: sign < 0 ? 'dark' : 'bright', contrast, noiseSd, shadingDegree: degree,
        fibres, ignoredObjects: ignored,
      };
    }
  }
  throw new Error('segmentFibres: unreachable');
}

/**
 * First guess of the illumination before anything is known about the fibre: the polynomial surface
 * refitted three times to the pixels within 2.5 robust SD of it (the fibre, a minority of the field,
 * drops out as an outlier). Returns the residual.
 */
function robustFlatten(smooth: Float32Array, width: number, height: number, degree: number, stride: number): Float32Array {
  const n = smooth.length;
  const use = new Uint8Array(n);
  for (let i = 0; i < n; i++) use[i] = Number.isFinite(smooth[i]) ? 1 : 0;
  let fit = fitSurface(smooth, width, height, use, degree, stride);
  // Clipping rounds only need the residual on the fitting grid.
  for (let round = 0; round < 3 && fit.degree >= 0; round++) {
    const grid: number[] = [];
    const values: number[] = [];
    for (let y = 0; y < height; y += stride) {
      for (let x = 0; x < width; x += stride) {
        const i = y * width + x;
        if (!Number.isFinite(smooth[i])) continue;
        grid.push(i);
        values.push(smooth[i] - surfaceAt(fit, x, y));
      }
    }
    const kept = values.filter((_, k) => use[grid[k]]);
    const centre = median(kept);
    const limit = 2.5 * robustSd(kept);
    for (let k = 0; k < grid.length; k++) use[grid[k]] = Math.abs(values[k] - centre) <= limit ? 1 : 0;
    const next = fitSurface(smooth, width, height, use, degree, stride);
    if (next.degree < 0) break;
    fit = next;
  }
  return fit.degree < 0 ? smooth.slice() : subtract(smooth, evaluateSurface(fit));
}

function subtract(a: Float32Array, b: Float32Array): Float32Array {
  const out = new Float32Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] - b[i];
  return out;
}

function labelFibres(mask: Uint8Array, width: number, height: number, o: SegmentOptions): {
  fibres: FibreObject[]; ignored: number;
} {
  const labels = new Int32Array(mask.length);
  const stack = new Int32Array(mask.length);
  const fibres: FibreObject[] = [];
  let ignored = 0;
  let next = 0;
  for (let seed = 0; seed < mask.length; seed++) {
    if (!mask[seed] || labels[seed]) continue;
    next++;
    let top = 0;
    stack[top++] = seed;
    labels[seed] = next;
    const pix: number[] = [];
    while (top > 0) {
      const i = stack[--top];
      pix.push(i);
      const x = i % width;
      const y = (i - x) / width;
      for (let dy = -1; dy <= 1; dy++) {
        const yy = y + dy;
        if (yy < 0 || yy >= height) continue;
        for (let dx = -1; dx <= 1; dx++) {
          const xx = x + dx;
          if (xx < 0 || xx >= width) continue;
          const j = yy * width + xx;
          if (mask[j] && !labels[j]) {
            labels[j] = next;
            stack[top++] = j;
          }
        }
      }
    }
    const obj = describe(pix, width);
    if (obj.areaPx < o.minAreaPx || obj.elongation < o.minElongation) ignored++;
    else fibres.push(obj);
  }
  return { fibres, ignored };
}

function describe(pix: number[], width: number): FibreObject {
  let sx = 0;
  let sy = 0;
  for (const i of pix) {
    const x = i % width;
    sx += x;
    sy += (i - x) / width;
  }
  const cx = sx / pix.length;
  const cy = sy / pix.length;
  let cxx = 0;
  let cyy = 0;
  let cxy = 0;
  for (const i of pix) {
    const x = (i % width) - cx;
    const y = (i - (i % width)) / width - cy;
    cxx += x * x;
    cyy += y * y;
    cxy += x * y;
  }
  cxx /= pix.length;
  cyy /= pix.length;
  cxy /= pix.length;
  const angle = 0.5 * Math.atan2(2 * cxy, cxx - cyy);
  const tr = cxx + cyy;
  const disc = Math.sqrt(((cxx - cyy) / 2) ** 2 + cxy * cxy);
  const l1 = tr / 2 + disc;
  const l2 = Math.max(tr / 2 - disc, 1e-12);
  return {
    pixels: Int32Array.from(pix), areaPx: pix.length, centreX: cx, centreY: cy,
    ux: Math.cos(angle), uy: Math.sin(angle), elongation: Math.sqrt(l1 / l2),
  };
}
