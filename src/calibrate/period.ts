/**
 * Lines and their period in one profile across a ruler (the robust recipe of docs/methods.md,
 * "Micrometer calibration"): line candidates are the prominent extrema of the lightly smoothed profile,
 * P0 the median spacing, each line indexed by counting divisions from its on-grid neighbour, centres by
 * the symmetric-window centroid (lineCentre), then the least-squares fit c = P m + c0. Unlike the argmax
 * of a spectrum this cannot lock onto a harmonic: narrow lines have harmonics as strong as the
 * fundamental, and the spectral peak then reads P/2.
 */
import { median } from '../common/index.ts';
import { InputError } from '../common/index.ts';
import { lineCentre } from './lineCentre.ts';
import { MICROMETER_LIMITS } from './limits.ts';

export interface LineFit {
  /** Period, in the profile's length unit (px). */
  periodPx: number;
  /** Standard error of the period from the fit, px. */
  periodStdErrPx: number;
  /** Position of the line of index 0, px from the profile start. */
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
  /** Median prominence of the lines used (the profile's unit). */
  amplitude: number;
  /** Median full width of the lines at half their prominence, px. */
  lineWidthPx: number;
  polarity: 'dark' | 'bright';
}

export interface ProfileOptions {
  /** Spacing of the profile samples, px. Default 1. */
  sampleStepPx?: number;
  /** 'auto' takes narrow dips as dark lines (negative skew) and narrow peaks as bright lines. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Smoothing of the profile before the extrema are found, in samples. Default 1. */
  smoothSamples?: number;
}

/** Gaussian smoothing of a profile (sigma in samples, kernel to 3 sigma, NaN samples left out of the weights). */
export function smooth1d(v: Float64Array, sigma: number): Float64Array {
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
    out[i] = w > 0 && !Number.isNaN(v[i]) ? s / w : NaN;
  }
  return out;
}

/** Running mean over a centred window of `window` samples (cumulative sums; NaN samples left out). */
function movingMean(v: Float64Array, window: number): Float64Array {
  const n = v.length;
  const cs = new Float64Array(n + 1);
  const cn = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) {
    const ok = Number.isFinite(v[i]);
    cs[i + 1] = cs[i] + (ok ? v[i] : 0);
    cn[i + 1] = cn[i] + (ok ? 1 : 0);
  }
  const h = Math.max(1, Math.floor(window / 2));
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const lo = Math.max(0, i - h);
    const hi = Math.min(n, i + h + 1);
    const c = cn[hi] - cn[lo];
    out[i] = c > 0 ? (cs[hi] - cs[lo]) / c : NaN;
  }
  return out;
}

/**
 * Third and second central moments of a profile after removing its trend (running mean over `window`
 * samples); skewness = m3 / m2^1.5 is negative for narrow dips (dark lines).
 */
export function detrendedMoments(v: Float64Array, window: number): { m2: number; m3: number; n: number } {
  const trend = movingMean(v, window);
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
  return { m2: m2 / Math.max(1, n), m3: m3 / Math.max(1, n), n };
}

export interface ProfilePeak {
  /** Coarse centre, samples: midpoint of the half-prominence crossings. */
  pos: number;
  /** Height above the higher of the two saddles to higher ground (topographic prominence). */
  prominence: number;
  /** Full width at half prominence, samples. */
  width: number;
}

/**
 * Local maxima of `q` (lines as peaks; NaN = no data) with their prominence and half-prominence
 * crossings (linear interpolation); peaks whose crossings are not both inside the data are left out.
 */
export function profilePeaks(q: Float64Array): ProfilePeak[] {
  const v = q.map((x) => (Number.isNaN(x) ? -Infinity : x));
  const out: ProfilePeak[] = [];
  for (let i = 1; i < v.length - 1; i++) {
    if (!(v[i] > v[i - 1] && v[i] >= v[i + 1])) continue;
    let leftMin = v[i];
    let j = i - 1;
    for (; j >= 0 && !(v[j] > v[i]); j--) if (v[j] < leftMin) leftMin = v[j];
    let rightMin = v[i];
    for (j = i + 1; j < v.length && !(v[j] > v[i]); j++) if (v[j] < rightMin) rightMin = v[j];
    const prominence = v[i] - Math.max(leftMin, rightMin);
    if (!Number.isFinite(prominence) || prominence <= 0) continue;
    const level = v[i] - prominence / 2;
    let l = i;
    while (l > 0 && v[l] > level) l--;
    let r = i;
    while (r < v.length - 1 && v[r] > level) r++;
    if (!(v[l] <= level) || !(v[r] <= level) || !Number.isFinite(v[l]) || !Number.isFinite(v[r])) continue;
    const xl = l + (level - v[l]) / (v[l + 1] - v[l]);
    const xr = r - (level - v[r]) / (v[r - 1] - v[r]);
    out.push({ pos: 0.5 * (xl + xr), prominence, width: xr - xl });
  }
  return out;
}

/** Peaks at least `absolute` prominent and at least `relative` x the third-largest prominence (two outliers cannot raise it). */
export function strongPeaks(peaks: ProfilePeak[], absolute: number, relative: number): ProfilePeak[] {
  if (peaks.length === 0) return [];
  const proms = peaks.map((p) => p.prominence).sort((a, b) => b - a);
  const ref = proms[Math.min(2, proms.length - 1)];
  const limit = Math.max(Number.isFinite(absolute) ? absolute : 0, relative * ref);
  return peaks.filter((p) => p.prominence >= limit);
}

/** Half-width of the centroid window for lines of full width (at half prominence) `widthPx` with period `periodPx`, px: 1.25 x the width, within [1.5 px, P / 2]. */
export function centreWindowPx(widthPx: number, periodPx: number): number {
  return Math.min(0.5 * periodPx, Math.max(MICROMETER_LIMITS.minCentreWindowPx, 1.25 * widthPx));
}

/**
 * The regular grid of lines in one profile `q` (lines as peaks) from its candidate `peaks`, sample
 * step `step` px: P0 = median spacing of consecutive peaks (at least half of the spacings within 15 %
 * of it, as for a ruler and unlike noise); indices counted from the last on-grid line
 * (a spacing more than 0.2 P0 from a whole number of P0 is off the grid); centres by lineCentre; fit
 * c = P m + c0; indices renewed with the fitted P and refitted once. Null when fewer than 5 lines sit on the grid.
 */
export function profileGrid(q: Float64Array, peaks: ProfilePeak[], step: number, polarity: 'dark' | 'bright'): LineFit | null {
  const minLines = MICROMETER_LIMITS.minLines;
  if (peaks.length < minLines) return null;
  const pk = [...peaks].sort((a, b) => a.pos - b.pos);
  const spacings = pk.slice(1).map((p, i) => p.pos - pk[i].pos);
  const p0 = median(spacings);
  if (!(p0 > 0)) return null;
  // A ruler's lines are mostly one spacing apart; peaks of noise are not (their spacings spread widely).
  if (spacings.filter((d) => Math.abs(d - p0) < 0.15 * p0).length < 0.5 * spacings.length) return null;
  const widthPx = median(pk.map((p) => p.width)) * step;
  const hw = centreWindowPx(widthPx, p0 * step) / step;
  const onGrid: { c: number; m: number; prom: number }[] = [];
  let last = -1;
  let m = 0;
  for (let k = 0; k < pk.length; k++) {
    if (last >= 0) {
      const g = (pk[k].pos - pk[last].pos) / p0;
      const n = Math.round(g);
      if (n < 1 || Math.abs(g - n) > 0.2) continue;
      m += n;
    }
    last = k;
    const c = lineCentre(q, pk[k].pos, hw, p0 - hw);
    if (Number.isFinite(c)) onGrid.push({ c, m, prom: pk[k].prominence });
  }
  if (onGrid.length < minLines) return null;
  let fit = lineFit(onGrid);
  let use = onGrid;
  for (let round = 0; round < 2; round++) {
    const byIndex = new Map<number, { c: number; m: number; prom: number }>();
    for (const e of onGrid) {
      const mi = Math.round((e.c - fit.c0) / fit.p);
      const r = Math.abs(e.c - fit.c0 - mi * fit.p);
      const prev = byIndex.get(mi);
      if (r < 0.2 * fit.p && (!prev || r < Math.abs(prev.c - fit.c0 - mi * fit.p))) byIndex.set(mi, { ...e, m: mi });
    }
    use = [...byIndex.values()].sort((a, b) => a.m - b.m);
    if (use.length < minLines) return null;
    fit = lineFit(use);
  }
  return {
    periodPx: fit.p * step, periodStdErrPx: fit.se * step, offsetPx: fit.c0 * step, centresPx: use.map((e) => e.c * step),
    indices: use.map((e) => e.m), divisions: use[use.length - 1].m - use[0].m, rmsResidualPx: fit.rms * step,
    rejectedLines: peaks.length - use.length, amplitude: median(use.map((e) => e.prom)), lineWidthPx: widthPx, polarity,
  };
}

/**
 * Period of a 1D profile across the lines of a ruler (values in any unit; NaN = no data): the lines of
 * the lightly smoothed profile whose prominence is at least 0.3 x the third largest, then profileGrid.
 *
 * @throws InputError when fewer than 5 lines sit on a regular grid, or the lines scatter by more than
 * the refusal fraction of the period around it.
 */
export function periodFromProfile(profile: ArrayLike<number>, options: ProfileOptions = {}): LineFit {
  const step = options.sampleStepPx ?? 1;
  const v = Float64Array.from(profile);
  if (v.length < 16) throw new InputError(`the ruler profile has only ${v.length} samples`, 'Use a larger image');
  let polarity = options.polarity ?? 'auto';
  if (polarity === 'auto') polarity = detrendedMoments(v, Math.max(64, v.length / 8)).m3 < 0 ? 'dark' : 'bright';
  const q = polarity === 'dark' ? v.map((x) => -x) : v;
  const peaks = strongPeaks(profilePeaks(smooth1d(q, options.smoothSamples ?? 1)), 0, 0.3);
  const fit = profileGrid(q, peaks, step, polarity);
  if (!fit) {
    throw new InputError(`found ${peaks.length} line(s) in the ruler profile but not ${MICROMETER_LIMITS.minLines} on a regular grid`,
      `Image at least ${MICROMETER_LIMITS.minLines} divisions of the micrometer in focus (20 or more is better)`);
  }
  if (fit.rmsResidualPx > MICROMETER_LIMITS.stripResidualFraction * fit.periodPx) {
    throw new InputError(`no regular ruler found: the lines scatter by ${(100 * fit.rmsResidualPx / fit.periodPx).toFixed(0)} % ` +
      `of their spacing around a regular grid (a ruler in focus scatters by well under ${100 * MICROMETER_LIMITS.warnResidualFraction} %)`,
    'Check that the image shows a stage micrometer in focus');
  }
  return fit;
}

/**
 * Least-squares line c = p m + c0 through (m, c) points: p = S_mc / S_mm, standard error
 * se = s / sqrt(S_mm) with s^2 = RSS / (n - 2), and the RMS residual sqrt(RSS / n).
 */
export function lineFit(pts: { c: number; m: number }[]): { p: number; c0: number; se: number; rms: number } {
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
