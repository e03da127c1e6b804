/**
 * Diameter stations along one fibre: every `stepPx` along the axis, a profile across it (along the
 * local normal, bilinear samples every `profileStepPx`, averaged over `averageLengthPx` along the
 * axis), the two edges by erf edge-spread fits, width = distance between them. Stations that cannot
 * give two clean edges are dropped with a reason. A second pass re-centres the stations on a
 * quadratic centre line fitted to the first pass's midpoints, so the profiles are normal to the
 * fibre even where the mask's principal axis is slightly off (ends cut by the border, taper, bend).
 */
import { bilinear } from '../common/index.ts';
import type { FibreObject } from './detect.ts';
import { fitBlurredBar, fitErfEdge, parabolaEdgeIndex, type BlurredBarFit } from './edgeFit.ts';
import { poolBarStations, type BarPool } from './barPool.ts';
import { pixelFootprint, type PixelFootprint } from './pixelEdge.ts';
import { solveLinear } from './linalg.ts';
import { median, robustSd } from './stats.ts';

export type DropReason = 'border' | 'no-fibre-at-station' | 'edge-missing' | 'edge-fit' | 'not-two-edges'
  | 'width-outlier' | 'unresolved';

export const DROP_REASONS: Record<DropReason, string> = {
  'border': 'the profile or an edge window leaves the image (or meets invalid pixels)',
  'no-fibre-at-station': 'no fibre-level pixels near the centre line at this station',
  'edge-missing': 'an edge was not found inside the profile',
  'edge-fit': 'the edge-spread fit failed or gave an implausible edge',
  'not-two-edges': 'the profile is not two clean edges (something else inside an edge window)',
  'width-outlier': 'the width differs from the fibre\'s trend by more than the robust limit',
  'unresolved': 'the fibre is narrower than about two blur widths: its width is not determined (an upper bound is given)',
};

export interface StationOptions {
  stepPx: number;
  averageLengthPx: number;
  profileStepPx: number;
}

export interface MeasuredStation {
  alongPx: number;
  xPx: number;
  yPx: number;
  diameterPx: number;
  /** Edge-spread sigma of the two edges (blur of the edge), px. */
  edgeSigmaPx: [number, number];
  /** Standard errors of the two edge positions from the fits, px. */
  edgeStdErrPx: [number, number];
  /** 'edges': each edge fitted on its own (wide fibre); 'bar': the whole profile as one blurred bar. */
  profileFit: 'edges' | 'bar';
  /** For a bar station: the fitted samples and the fit with the PSF sigma free (kept for the fibre's pooled refit). */
  bar?: { xs: Float64Array; ys: Float64Array; footprint: PixelFootprint; free: BlurredBarFit; widthPerSigma?: number };
}

export interface DroppedStation {
  alongPx: number;
  xPx: number;
  yPx: number;
  reason: DropReason;
}

export interface FibreStations {
  /** Direction of the fitted centre line at the middle of the fibre (unit vector, image coordinates). */
  axisUx: number;
  axisUy: number;
  startX: number;
  startY: number;
  lengthPx: number;
  stations: MeasuredStation[];
  dropped: DroppedStation[];
  /** The fibre's pooled PSF over its bar stations (null when every station was fitted edge by edge). */
  pool: BarPool | null;
}

interface Frame {
  cx: number;
  cy: number;
  ux: number;
  uy: number;
  /** Centre-line offset along the normal as a polynomial in t (coefficients, lowest first). */
  offset: number[];
}

const polyAt = (c: number[], t: number) => c.reduce((s, v, k) => s + v * t ** k, 0);
const polySlope = (c: number[], t: number) => c.reduce((s, v, k) => (k ? s + k * v * t ** (k - 1) : s), 0);

/**
 * Fraction of the fibre contrast at which the profile walk from the centre line looks for the edges
 * (coarse positions only; the fits place the edges). Below one half so that a moderately bright
 * centre line (refraction in a transparent fibre) is not taken for the background.
 */
const EDGE_SEARCH_LEVEL = 0.3;

/**
 * A station is fitted as one blurred bar when its width is below NARROW_FACTOR x (sum of the two edge
 * sigmas) + NARROW_MARGIN_PX: there the blur of one edge reaches the other (at 3 sigma from an edge the
 * blurred step is within 0.14 % of its plateau) and single-edge fits lose their plateau.
 */
const NARROW_FACTOR = 3;
const NARROW_MARGIN_PX = 4;
/** Background taken on each side of a bar fit: this many PSF sigmas, at least BAR_WINDOW_MIN_PX. */
const BAR_WINDOW_SIGMAS = 6;
const BAR_WINDOW_MIN_PX = 6;

type StationOutcome = { ok: true; m: MeasuredStation; midX: number; midY: number } | { ok: false; d: DroppedStation };

export function measureStations(
  flat: Float32Array, width: number, height: number, obj: FibreObject, contrast: number, o: StationOptions,
): FibreStations {
  // Extent of the object along and across its principal axis.
  let tMin = Infinity;
  let tMax = -Infinity;
  let dMax = 0;
  for (const i of obj.pixels) {
    const x = (i % width) - obj.centreX;
    const y = (i - (i % width)) / width - obj.centreY;
    const t = x * obj.ux + y * obj.uy;
    const d = -x * obj.uy + y * obj.ux;
    tMin = Math.min(tMin, t);
    tMax = Math.max(tMax, t);
    dMax = Math.max(dMax, Math.abs(d));
  }
  const halfRangePx = dMax + Math.max(20, 0.25 * dMax);
  const count = Math.floor((tMax - tMin) / o.stepPx) + 1;
  const tFirst = 0.5 * (tMin + tMax) - ((count - 1) * o.stepPx) / 2;
  const ts = Array.from({ length: count }, (_, k) => tFirst + k * o.stepPx);

  const frame: Frame = { cx: obj.centreX, cy: obj.centreY, ux: obj.ux, uy: obj.uy, offset: [0] };
  // Bar stations are fitted in the final pass only; the passes that place the centre line use their
  // level-crossing midpoints.
  const measureAll = (final: boolean) =>
    ts.map((t) => measureOne(flat, width, height, frame, t, tMin, halfRangePx, contrast, o, final));
  let outcomes = measureAll(false);
  for (let pass = 0; pass < 2; pass++) {
    const mids = outcomes.filter((r): r is Extract<StationOutcome, { ok: true }> => r.ok);
    if (mids.length < 3) break;
    const tt: number[] = [];
    const dd: number[] = [];
    for (const r of mids) {
      const x = r.midX - frame.cx;
      const y = r.midY - frame.cy;
      tt.push(x * frame.ux + y * frame.uy);
      dd.push(-x * frame.uy + y * frame.ux);
    }
    const coeffs = fitPolynomial(tt, dd, mids.length >= 6 ? 2 : 1);
    if (!coeffs) break;
    frame.offset = coeffs;
    if (pass === 0) outcomes = measureAll(false);
  }
  outcomes = measureAll(true);

  const stations: MeasuredStation[] = [];
  const dropped: DroppedStation[] = [];
  for (const r of outcomes) {
    if (r.ok) stations.push(r.m);
    else dropped.push(r.d);
  }
  const pool = poolBarStations(stations);
  const kept = rejectWidthOutliers(stations, dropped);
  const start = pointAt(frame, tMin);
  const middle = pointAt(frame, 0.5 * (tMin + tMax));
  return {
    axisUx: middle.ux, axisUy: middle.uy, startX: start.x, startY: start.y, lengthPx: tMax - tMin,
    stations: kept, dropped: dropped.sort((a, b) => a.alongPx - b.alongPx), pool,
  };
}

function pointAt(f: Frame, t: number): { x: number; y: number; ux: number; uy: number } {
  const off = polyAt(f.offset, t);
  const slope = polySlope(f.offset, t);
  const norm = Math.hypot(1, slope);
  // Local axis = u + slope * n, normalised; n = (-uy, ux).
  const ux = (f.ux - slope * f.uy) / norm;
  const uy = (f.uy + slope * f.ux) / norm;
  return { x: f.cx + t * f.ux - off * f.uy, y: f.cy + t * f.uy + off * f.ux, ux, uy };
}

function measureOne(
  flat: Float32Array, width: number, height: number, f: Frame, t: number, tMin: number, halfRangePx: number,
  contrast: number, o: StationOptions, final: boolean,
): StationOutcome {
  const level = EDGE_SEARCH_LEVEL * contrast;
  const p = pointAt(f, t);
  const nx = -p.uy;
  const ny = p.ux;
  const ds = o.profileStepPx;
  const half = Math.ceil(halfRangePx / ds);
  const len = 2 * half + 1;
  const q = new Float64Array(len);
  const avgCount = Math.max(1, Math.round(o.averageLengthPx));
  for (let j = 0; j < len; j++) {
    const s = (j - half) * ds;
    let sum = 0;
    for (let a = 0; a < avgCount; a++) {
      const along = a - (avgCount - 1) / 2;
      sum += bilinear({ width, height, data: flat }, p.x + along * p.ux + s * nx, p.y + along * p.uy + s * ny);
    }
    q[j] = sum / avgCount;
  }
  const drop = (reason: DropReason): StationOutcome => ({ ok: false, d: { alongPx: t - tMin, xPx: p.x, yPx: p.y, reason } });

  let j0 = half;
  if (Number.isNaN(q[j0])) return drop('border');
  if (!(q[j0] >= level)) {
    let found = -1;
    for (let k = 1; k <= half / 2 && found < 0; k++) {
      if (q[half - k] >= level) found = half - k;
      else if (q[half + k] >= level) found = half + k;
    }
    if (found < 0) return drop('no-fibre-at-station');
    j0 = found;
  }
  let jl = j0;
  while (jl >= 0 && q[jl] >= level) jl--;
  let jr = j0;
  while (jr < len && q[jr] >= level) jr++;
  if ((jl >= 0 && Number.isNaN(q[jl])) || (jr < len && Number.isNaN(q[jr]))) return drop('border');
  if (jl < 0 || jr >= len) return drop('edge-missing');
  const coarseWidth = (jr - jl) * ds;

  const coarseX1 = (jl + 0.5 - half) * ds;
  const coarseX2 = (jr - 0.5 - half) * ds;
  const sigma0 = startSigma(q, ds, jl, jr, contrast);
  let edges: { x1: number; x2: number; sigmas: [number, number]; stdErrs: [number, number] } | null = null;
  if (coarseWidth >= NARROW_FACTOR * 2 * sigma0 + NARROW_MARGIN_PX) {
    const left = fitEdge(q, ds, half, jl + 0.5, +1, coarseWidth, contrast);
    if (!left.ok) return drop(left.reason);
    const right = fitEdge(q, ds, half, jr - 0.5, -1, coarseWidth, contrast);
    if (!right.ok) return drop(right.reason);
    edges = { x1: left.x0, x2: right.x0, sigmas: [left.sigma, right.sigma], stdErrs: [left.stdErr, right.stdErr] };
    if (right.x0 - left.x0 < NARROW_FACTOR * (left.sigma + right.sigma) + NARROW_MARGIN_PX) edges = null;
  }
  if (edges) {
    const mid = 0.5 * (edges.x1 + edges.x2);
    return {
      ok: true,
      m: {
        alongPx: t - tMin, xPx: p.x, yPx: p.y, diameterPx: edges.x2 - edges.x1, edgeSigmaPx: edges.sigmas,
        edgeStdErrPx: edges.stdErrs, profileFit: 'edges',
      },
      midX: p.x + mid * nx,
      midY: p.y + mid * ny,
    };
  }
  // Narrow fibre: each edge's blur reaches the other, so the whole profile is fitted as one blurred bar.
  if (!final) {
    const mid = 0.5 * (coarseX1 + coarseX2);
    const m: MeasuredStation = {
      alongPx: t - tMin, xPx: p.x, yPx: p.y, diameterPx: coarseWidth, edgeSigmaPx: [sigma0, sigma0],
      edgeStdErrPx: [NaN, NaN], profileFit: 'bar',
    };
    return { ok: true, m, midX: p.x + mid * nx, midY: p.y + mid * ny };
  }
  const strip: Strip = { flat, width, height, x: p.x, y: p.y, ux: p.ux, uy: p.uy, lengthPx: o.averageLengthPx };
  const bar = fitBarProfile(q, ds, half, jl, jr, coarseX1, coarseX2, sigma0, contrast, strip);
  if (!bar.ok) return drop(bar.reason);
  const b = bar.fit;
  return {
    ok: true,
    m: {
      alongPx: t - tMin, xPx: p.x, yPx: p.y, diameterPx: b.width, edgeSigmaPx: [b.sigma, b.sigma],
      edgeStdErrPx: [b.x1StdErr, b.x2StdErr], profileFit: 'bar', bar: { xs: bar.xs, ys: bar.ys, footprint: pixelFootprint(-p.uy, p.ux), free: b },
    },
    midX: p.x + b.centre * nx,
    midY: p.y + b.centre * ny,
  };
}

/**
 * Start value of the PSF sigma from the steepest slope of the profile between and around the two level
 * crossings: a blurred step of height C has its steepest slope C / (sqrt(2 pi) sigma). Clipped to
 * [0.3, 5] px (a start value only; narrow bars never reach their full contrast, so it reads high).
 */
function startSigma(q: Float64Array, ds: number, jl: number, jr: number, contrast: number): number {
  let steepest = 0;
  for (const j of [jl, jl + 1, jr - 1, jr]) {
    if (j < 1 || j >= q.length - 1) continue;
    const g = Math.abs(q[j + 1] - q[j - 1]) / (2 * ds);
    if (Number.isFinite(g)) steepest = Math.max(steepest, g);
  }
  return Math.min(5, Math.max(0.3, contrast / (Math.sqrt(2 * Math.PI) * Math.max(steepest, 1e-12))));
}

type BarOutcome = { ok: true; fit: BlurredBarFit; xs: Float64Array; ys: Float64Array } | { ok: false; reason: DropReason };

/** The pixels a bar station uses: a strip `lengthPx` long along the axis at (x, y), across the fibre. */
interface Strip {
  flat: Float32Array;
  width: number;
  height: number;
  x: number;
  y: number;
  ux: number;
  uy: number;
  lengthPx: number;
}

/**
 * The pixels whose centres lie in the strip |t| <= lengthPx / 2 along the axis and sLo <= s <= sHi across
 * it (s along the normal n = (-uy, ux)), as (s, value) pairs; null when one of them is invalid.
 */
function stripPixels(st: Strip, sLo: number, sHi: number): { xs: Float64Array; ys: Float64Array } | null {
  const nx = -st.uy;
  const ny = st.ux;
  const halfT = Math.max(0.5, st.lengthPx / 2);
  const corners = [[-halfT, sLo], [-halfT, sHi], [halfT, sLo], [halfT, sHi]].map(([t, s]) => [
    st.x + t * st.ux + s * nx, st.y + t * st.uy + s * ny]);
  const x0 = Math.floor(Math.min(...corners.map((c) => c[0])));
  const x1 = Math.ceil(Math.max(...corners.map((c) => c[0])));
  const y0 = Math.floor(Math.min(...corners.map((c) => c[1])));
  const y1 = Math.ceil(Math.max(...corners.map((c) => c[1])));
  const xs: number[] = [];
  const ys: number[] = [];
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const dx = x - st.x;
      const dy = y - st.y;
      const t = dx * st.ux + dy * st.uy;
      const s = dx * nx + dy * ny;
      if (Math.abs(t) > halfT || s < sLo || s > sHi) continue;
      if (x < 0 || y < 0 || x >= st.width || y >= st.height) return null;
      const v = st.flat[y * st.width + x];
      if (!Number.isFinite(v)) return null;
      xs.push(s);
      ys.push(v);
    }
  }
  return { xs: Float64Array.from(xs), ys: Float64Array.from(ys) };
}

/**
 * Whole-profile blurred-bar fit (fitBlurredBar) over the fibre and `BAR_WINDOW_SIGMAS` sigma (at least
 * `BAR_WINDOW_MIN_PX`) of background on each side, stopping short of a neighbouring object (a sample of
 * the profile back above the search level, less 3 sigma). The window is found on the interpolated
 * profile `q`; the fit itself uses the strip's pixels, each at its own distance from the centre line, with
 * the pixel's footprint in the model (no interpolation smoothing). Coordinates in px across the fibre,
 * s = 0 at the centre line.
 */
function fitBarProfile(
  q: Float64Array, ds: number, half: number, jl: number, jr: number, x1: number, x2: number, sigma0: number,
  contrast: number, strip: Strip,
): BarOutcome {
  const level = EDGE_SEARCH_LEVEL * contrast;
  const reach = Math.round(Math.max(BAR_WINDOW_SIGMAS * sigma0, BAR_WINDOW_MIN_PX) / ds);
  const guard = Math.round((3 * sigma0) / ds);
  const outerLimit = (from: number, step: 1 | -1): number | null => {
    let j = from;
    for (let k = 0; k < reach; k++) {
      const next = j + step;
      if (next < 0 || next >= q.length || Number.isNaN(q[next])) return null;
      if (q[next] >= level) return j - step * guard; // a neighbour: stop well short of it
      j = next;
    }
    return j;
  };
  const lo = outerLimit(jl, -1);
  const hi = outerLimit(jr, 1);
  if (lo === null || hi === null) return { ok: false, reason: 'border' };
  const minBackground = Math.max(3 * sigma0, 2) / ds;
  if (jl - lo < minBackground || hi - jr < minBackground) return { ok: false, reason: 'not-two-edges' };
  let peak = 0;
  for (let j = jl + 1; j < jr; j++) peak = Math.max(peak, q[j]);
  const pixels = stripPixels(strip, (lo - half) * ds, (hi - half) * ds);
  if (pixels === null) return { ok: false, reason: 'border' };
  const { xs, ys } = pixels;
  const fit = fitBlurredBar(xs, ys, {
    centre: 0.5 * (x1 + x2), width: Math.max(x2 - x1, ds), sigma: Math.min(sigma0, Math.max(0.5, 0.5 * (x2 - x1))),
    amplitude: Math.max(peak, contrast), background: 0,
  }, null, pixelFootprint(-strip.uy, strip.ux));
  const span = (hi - lo) * ds;
  const plausible = fit.converged && fit.width > 0 && fit.sigma > 0.05 && fit.sigma < 0.25 * span &&
    Math.abs(fit.centre - 0.5 * (x1 + x2)) < 0.5 * (x2 - x1) + 2 && fit.amplitude > 0.25 * contrast;
  if (!plausible) return { ok: false, reason: 'edge-fit' };
  return { ok: true, fit, xs, ys };
}

type EdgeOutcome = { ok: true; x0: number; sigma: number; stdErr: number } | { ok: false; reason: DropReason };

/**
 * One edge near sample index `crossing` (fractional). `dir` +1: rising edge in +s (fibre on the right),
 * -1: falling edge. Returns the edge position in px along the profile (s = 0 at the centre line).
 */
function fitEdge(
  q: Float64Array, ds: number, half: number, crossing: number, dir: 1 | -1, widthPx: number, contrast: number,
): EdgeOutcome {
  const len = q.length;
  const c = Math.round(crossing);
  const search = Math.max(2, Math.round(3 / ds));
  const idx = parabolaEdgeIndex(q, c - search, c + search);
  if (Number.isNaN(idx)) return { ok: false, reason: 'border' };
  const i = Math.round(idx);
  const slopePerPx = Math.abs(q[Math.min(len - 1, i + 1)] - q[Math.max(0, i - 1)]) / (2 * ds);
  const sigma0 = Math.min(Math.max(contrast / (Math.sqrt(2 * Math.PI) * Math.max(slopePerPx, 1e-12)), 0.3),
    Math.max(0.5, 0.25 * widthPx));
  const outsidePx = Math.max(6 * sigma0, 4);
  const insidePx = Math.min(outsidePx, 0.45 * widthPx);
  // Window in sample indices, outside = the background side.
  const outSamples = Math.round(outsidePx / ds);
  const inSamples = Math.max(2, Math.round(insidePx / ds));
  const from = dir > 0 ? i - outSamples : i - inSamples;
  const to = dir > 0 ? i + inSamples : i + outSamples;
  const xs: number[] = [];
  const ys: number[] = [];
  let outsideValid = 0;
  for (let j = from; j <= to; j++) {
    const inside = dir > 0 ? j >= i : j <= i;
    if (j < 0 || j >= len || Number.isNaN(q[j])) {
      if (inside) return { ok: false, reason: 'border' };
      continue;
    }
    if (!inside) outsideValid++;
    xs.push(dir * (j - half) * ds);
    ys.push(q[j]);
  }
  if (outsideValid * ds < Math.max(3 * sigma0, 2)) return { ok: false, reason: 'border' };
  const x0Start = dir * (idx - half) * ds;
  const fit = fitErfEdge(xs, ys, { x0: x0Start, sigma: sigma0, lo: 0, hi: contrast });
  const amp = fit.hi - fit.lo;
  if (!fit.converged || !(fit.sigma > 0.05) || fit.sigma > Math.max(1, 0.5 * widthPx) ||
    Math.abs(fit.x0 - x0Start) > Math.max(2, 2 * sigma0) || !(amp > 0.25 * contrast)) {
    return { ok: false, reason: 'edge-fit' };
  }
  const mid = fit.lo + 0.5 * amp;
  for (let k = 0; k < xs.length; k++) {
    const z = (xs[k] - fit.x0) / fit.sigma;
    if ((z < -2 && ys[k] > mid) || (z > 2 && ys[k] < mid)) return { ok: false, reason: 'not-two-edges' };
  }
  return { ok: true, x0: dir * fit.x0, sigma: fit.sigma, stdErr: fit.x0StdErr };
}

function fitPolynomial(t: number[], d: number[], degree: number): number[] | null {
  const scale = Math.max(1, ...t.map(Math.abs));
  const m = degree + 1;
  const ata = Array.from({ length: m }, () => new Array<number>(m).fill(0));
  const atb = new Array<number>(m).fill(0);
  for (let k = 0; k < t.length; k++) {
    const u = t[k] / scale;
    for (let a = 0; a < m; a++) {
      atb[a] += u ** a * d[k];
      for (let b = 0; b < m; b++) ata[a][b] += u ** (a + b);
    }
  }
  const c = solveLinear(ata, atb);
  return c ? c.map((v, k) => v / scale ** k) : null;
}

/**
 * Robust width-outlier rule: residuals from a straight-line trend of width along the fibre (a taper
 * is a trend, not an outlier); a station is dropped when |residual| > max(4 robust SD, 2 % of the
 * median width, 0.5 px). Repeated until nothing more is dropped (at most 3 rounds).
 */
function rejectWidthOutliers(stations: MeasuredStation[], dropped: DroppedStation[]): MeasuredStation[] {
  let kept = stations;
  for (let round = 0; round < 3 && kept.length >= 5; round++) {
    const c = fitPolynomial(kept.map((s) => s.alongPx), kept.map((s) => s.diameterPx), 1);
    if (!c) break;
    const res = kept.map((s) => s.diameterPx - polyAt(c, s.alongPx));
    const limit = Math.max(4 * robustSd(res), 0.02 * median(kept.map((s) => s.diameterPx)), 0.5);
    const next = kept.filter((_, k) => Math.abs(res[k]) <= limit);
    if (next.length === kept.length) break;
    for (let k = 0; k < kept.length; k++) {
      if (Math.abs(res[k]) > limit) {
        dropped.push({ alongPx: kept[k].alongPx, xPx: kept[k].xPx, yPx: kept[k].yPx, reason: 'width-outlier' });
      }
    }
    kept = next;
  }
  return kept;
}
