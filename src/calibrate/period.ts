/**
 * Period of a stage-micrometer profile from its lines (domain.md §8, robust recipe): line centres
 * from the extrema of the lightly smoothed profile, P0 = median spacing, index m = round((c - c_first)/P0),
 * least-squares fit c = P m + c0. Unlike the argmax of a spectrum this cannot lock onto a harmonic:
 * narrow lines have harmonics as strong as the fundamental, and the spectral peak then reads P/2.
 */
import { median } from '../common/sampling.ts';
import { InputError } from '../common/errors.ts';

export interface LineFit {
  /** Period, in the profile's length unit (px). */
  periodPx: number;
  /** Standard error of the period from the fit, px. */
  periodStdErrPx: number;
  offsetPx: number;
  /** Line centres used, px from the profile start. */
  centresPx: number[];
  /** Division index of each centre. */
  indices: number[];
  /** Number of divisions spanned (last index - first index). */
  divisions: number;
  /** RMS residual of the line positions from the fit, px. */
  rmsResidualPx: number;
  /** Lines found but left out as off the fitted grid. */
  rejectedLines: number;
  polarity: 'dark' | 'bright';
}

export interface ProfileOptions {
  /** Spacing of the profile samples, px. Default 1. */
  sampleStepPx?: number;
  /** 'auto' takes narrow dips as dark lines (negative skew) and narrow peaks as bright lines. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Smoothing of the profile before the extrema are found, in samples. Default 1. */
  smoothSamples?: number;
  /** Peaks below this fraction of the 3rd-largest prominence are noise. Default 0.3. */
  minRelativeProminence?: number;
}

function smooth1d(v: Float64Array, sigma: number): Float64Array {
  if (sigma <= 0) return v.slice();
  const r = Math.ceil(3 * sigma);
  const k = Array.from({ length: 2 * r + 1 }, (_, i) => Math.exp(-0.5 * ((i - r) / sigma) ** 2));
  const out = new Float64Array(v.length);
  for (let i = 0; i < v.length; i++) {
    let s = 0;
    let w = 0;
    for (let o = -r; o <= r; o++) {
      const j = i + o;
      if (j < 0 || j >= v.length || Number.isNaN(v[j])) continue;
      s += k[o + r] * v[j];
      w += k[o + r];
    }
    out[i] = w > 0 ? s / w : NaN;
  }
  return out;
}

/** Skewness of the profile after removing its trend over `window` samples. */
function detrendedSkew(v: Float64Array, window: number): number {
  const trend = smooth1d(v, window / 2);
  let n = 0;
  let m = 0;
  for (let i = 0; i < v.length; i++) if (Number.isFinite(v[i] - trend[i])) { m += v[i] - trend[i]; n++; }
  m /= Math.max(1, n);
  let m2 = 0;
  let m3 = 0;
  for (let i = 0; i < v.length; i++) {
    const d = v[i] - trend[i] - m;
    if (!Number.isFinite(d)) continue;
    m2 += d * d;
    m3 += d * d * d;
  }
  m2 /= Math.max(1, n);
  m3 /= Math.max(1, n);
  return m2 > 0 ? m3 / m2 ** 1.5 : 0;
}

interface Peak { index: number; prominence: number }

/** Local maxima with their topographic prominence (the height above the higher of the two saddles). */
function peaksWithProminence(v: Float64Array): Peak[] {
  const peaks: Peak[] = [];
  for (let i = 1; i < v.length - 1; i++) {
    if (!(v[i] > v[i - 1] && v[i] >= v[i + 1])) continue;
    let leftMin = v[i];
    for (let j = i - 1; j >= 0 && !(v[j] > v[i]); j--) if (v[j] < leftMin) leftMin = v[j];
    let rightMin = v[i];
    for (let j = i + 1; j < v.length && !(v[j] > v[i]); j++) if (v[j] < rightMin) rightMin = v[j];
    peaks.push({ index: i, prominence: v[i] - Math.max(leftMin, rightMin) });
  }
  return peaks;
}

/** Centre of a line by the midpoint of its half-prominence crossings (linear interpolation), in samples. */
function halfHeightCentre(v: Float64Array, peak: Peak): number {
  const level = v[peak.index] - peak.prominence / 2;
  let l = peak.index;
  while (l > 0 && v[l] > level) l--;
  let r = peak.index;
  while (r < v.length - 1 && v[r] > level) r++;
  if (!(v[l] <= level) || !(v[r] <= level)) return NaN;
  const xl = l + (level - v[l]) / (v[l + 1] - v[l]);
  const xr = r - (level - v[r]) / (v[r - 1] - v[r]);
  return 0.5 * (xl + xr);
}

/**
 * Period of a 1D profile across the lines of a ruler (values in any unit; NaN = no data).
 * Line centres: midpoints of the half-prominence crossings of each prominent extremum of the smoothed
 * profile (for narrow symmetric lines the same point as the 3-point parabola, and unbiased for broad
 * bars too). Lines off the fitted grid by more than max(5 robust SD, P/8) are left out and counted.
 * Standard error of P: s / sqrt(sum (m - mean m)^2), s the residual SD (n - 2 degrees of freedom).
 *
 * @throws InputError when fewer than 5 lines are found.
 */
export function periodFromProfile(profile: ArrayLike<number>, options: ProfileOptions = {}): LineFit {
  const step = options.sampleStepPx ?? 1;
  const v = Float64Array.from(profile);
  if (v.length < 16) throw new InputError(`the ruler profile has only ${v.length} samples`, 'Use a larger image');
  const sm = smooth1d(v, options.smoothSamples ?? 1);
  let polarity = options.polarity ?? 'auto';
  if (polarity === 'auto') polarity = detrendedSkew(sm, Math.max(64, v.length / 8)) < 0 ? 'dark' : 'bright';
  const q = polarity === 'dark' ? sm.map((x) => -x) : sm;
  for (let i = 0; i < q.length; i++) if (Number.isNaN(q[i])) q[i] = -Infinity;
  const peaks = peaksWithProminence(q).filter((p) => Number.isFinite(p.prominence));
  if (peaks.length < 5) {
    throw new InputError(`found ${peaks.length} line(s) in the ruler profile; at least 5 are needed`,
      'Image at least 5 divisions of the micrometer (20 or more is better)');
  }
  const ranked = peaks.map((p) => p.prominence).sort((a, b) => b - a);
  const threshold = (options.minRelativeProminence ?? 0.3) * ranked[Math.min(2, ranked.length - 1)];
  const lines = peaks.filter((p) => p.prominence >= threshold);
  const centres = lines.map((p) => halfHeightCentre(q, p)).filter(Number.isFinite);
  if (centres.length < 5) {
    throw new InputError(`found ${centres.length} clear line(s) in the ruler profile; at least 5 are needed`,
      'Image at least 5 divisions with good contrast and focus');
  }
  centres.sort((a, b) => a - b);
  const p0 = median(centres.slice(1).map((c, i) => c - centres[i]));
  let use = centres.map((c) => ({ c, m: Math.round((c - centres[0]) / p0) }));
  // One centre per division index: keep the one nearest its grid position.
  const byIndex = new Map<number, { c: number; m: number }>();
  for (const e of use) {
    const prev = byIndex.get(e.m);
    const dist = (x: { c: number; m: number }) => Math.abs(x.c - centres[0] - x.m * p0);
    if (!prev || dist(e) < dist(prev)) byIndex.set(e.m, e);
  }
  use = [...byIndex.values()].sort((a, b) => a.m - b.m);
  let fit = lineFit(use);
  for (let round = 0; round < 3; round++) {
    const res = use.map((e) => e.c - (fit.p * e.m + fit.c0));
    const s = 1.4826 * median(res.map(Math.abs));
    const limit = Math.max(5 * s, fit.p / 8);
    const next = use.filter((_, k) => Math.abs(res[k]) <= limit);
    if (next.length === use.length || next.length < 5) break;
    use = next;
    fit = lineFit(use);
  }
  if (use.length < 5) {
    throw new InputError(`only ${use.length} ruler lines sit on a regular grid; at least 5 are needed`,
      'Check that the image shows a stage micrometer in focus');
  }
  // Random extrema (noise, dirt) indexed onto a grid scatter by about P / sqrt(12); real lines by far less.
  if (fit.rms > 0.08 * fit.p) {
    throw new InputError(`no regular ruler found: the lines found scatter by ${(fit.rms / fit.p * 100).toFixed(0)} % ` +
      'of their spacing around a regular grid (a ruler scatters by well under 8 %)',
    'Check that the image shows a stage micrometer in focus');
  }
  const onGrid = centres.slice(1).filter((c, i) => Math.abs(c - centres[i] - p0) < 0.15 * p0).length;
  if (onGrid < 0.5 * (centres.length - 1)) {
    throw new InputError(`no regular ruler found: only ${onGrid} of ${centres.length - 1} line spacings match the ` +
      'median spacing', 'Check that the image shows a stage micrometer in focus');
  }
  return {
    periodPx: fit.p * step, periodStdErrPx: fit.se * step, offsetPx: fit.c0 * step,
    centresPx: use.map((e) => e.c * step), indices: use.map((e) => e.m), divisions: use[use.length - 1].m - use[0].m,
    rmsResidualPx: fit.rms * step, rejectedLines: lines.length - use.length, polarity,
  };
}

function lineFit(pts: { c: number; m: number }[]): { p: number; c0: number; se: number; rms: number } {
  const n = pts.length;
  const mBar = pts.reduce((s, e) => s + e.m, 0) / n;
  const cBar = pts.reduce((s, e) => s + e.c, 0) / n;
  let smm = 0;
  let smc = 0;
  for (const e of pts) {
    smm += (e.m - mBar) ** 2;
    smc += (e.m - mBar) * (e.c - cBar);
  }
  const p = smc / smm;
  const c0 = cBar - p * mBar;
  let ss = 0;
  for (const e of pts) ss += (e.c - (p * e.m + c0)) ** 2;
  const s2 = n > 2 ? ss / (n - 2) : 0;
  return { p, c0, se: Math.sqrt(s2 / smm), rms: Math.sqrt(ss / n) };
}
