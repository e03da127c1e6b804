/**
 * Diameter stations along one fibre: every `stepPx` along the axis, a profile across it (along the
 * local normal, bilinear samples every `profileStepPx`, averaged over `averageLengthPx` along the
 * axis), the two edges by erf edge-spread fits, width = distance between them. Stations that cannot
 * give two clean edges are dropped with a reason. A second pass re-centres the stations on a
 * quadratic centre line fitted to the first pass's midpoints, so the profiles are normal to the
 * fibre even where the mask's principal axis is slightly off (ends cut by the border, taper, bend).
 */
import { bilinear } from '../common/sampling.ts';
import type { FibreObject } from './detect.ts';
import { fitErfBar, fitErfEdge, parabolaEdgeIndex } from './edgeFit.ts';
import { solveLinear } from './linalg.ts';
import { median, robustSd } from './stats.ts';

export type DropReason = 'border' | 'no-fibre-at-station' | 'edge-missing' | 'edge-fit' | 'not-two-edges'
  | 'width-outlier';

export const DROP_REASONS: Record<DropReason, string> = {
  'border': 'the profile or an edge window leaves the image (or meets invalid pixels)',
  'no-fibre-at-station': 'no fibre-level pixels near the centre line at this station',
  'edge-missing': 'an edge was not found inside the profile',
  'edge-fit': 'the edge-spread fit failed or gave an implausible edge',
  'not-two-edges': 'the profile is not two clean edges (something else inside an edge window)',
  'width-outlier': 'the width differs from the fibre\'s trend by more than the robust limit',
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
  let outcomes = ts.map((t) => measureOne(flat, width, height, frame, t, tMin, halfRangePx, contrast, o));
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
    outcomes = ts.map((t) => measureOne(flat, width, height, frame, t, tMin, halfRangePx, contrast, o));
  }

  const stations: MeasuredStation[] = [];
  const dropped: DroppedStation[] = [];
  for (const r of outcomes) {
    if (r.ok) stations.push(r.m);
    else dropped.push(r.d);
  }
  const kept = rejectWidthOutliers(stations, dropped);
  const start = pointAt(frame, tMin);
  const middle = pointAt(frame, 0.5 * (tMin + tMax));
  return {
    axisUx: middle.ux, axisUy: middle.uy, startX: start.x, startY: start.y, lengthPx: tMax - tMin,
    stations: kept, dropped: dropped.sort((a, b) => a.alongPx - b.alongPx),
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
  contrast: number, o: StationOptions,
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

  const left = fitEdge(q, ds, half, jl + 0.5, +1, coarseWidth, contrast);
  if (!left.ok) return drop(left.reason);
  const right = fitEdge(q, ds, half, jr - 0.5, -1, coarseWidth, contrast);
  if (!right.ok) return drop(right.reason);
  let x1 = left.x0;
  let x2 = right.x0;
  let edgeSigmaPx: [number, number] = [left.sigma, right.sigma];
  let edgeStdErrPx: [number, number] = [left.stdErr, right.stdErr];
  if (x2 - x1 < 3 * (left.sigma + right.sigma) + 4) {
    // Narrow fibre: each edge's blur reaches the other, so fit both together.
    const bar = fitBar(q, ds, half, x1, left.sigma, x2, right.sigma, contrast);
    if (!bar.ok) return drop(bar.reason);
    [x1, x2] = [bar.x1, bar.x2];
    edgeSigmaPx = bar.sigmas;
    edgeStdErrPx = bar.stdErrs;
  }
  const diameterPx = x2 - x1;
  const mid = 0.5 * (x1 + x2);
  return {
    ok: true,
    m: {
      alongPx: t - tMin, xPx: p.x, yPx: p.y, diameterPx, edgeSigmaPx, edgeStdErrPx,
    },
    midX: p.x + mid * nx,
    midY: p.y + mid * ny,
  };
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

type BarOutcome = { ok: true; x1: number; x2: number; sigmas: [number, number]; stdErrs: [number, number] }
  | { ok: false; reason: DropReason };

/** Joint fit of both edges over [x1 - 6 s1, x2 + 6 s2] (px along the profile), from single-edge starts. */
function fitBar(
  q: Float64Array, ds: number, half: number, x1: number, s1: number, x2: number, s2: number, contrast: number,
): BarOutcome {
  const from = Math.floor((x1 - Math.max(6 * s1, 4)) / ds) + half;
  const to = Math.ceil((x2 + Math.max(6 * s2, 4)) / ds) + half;
  if (from < 0 || to >= q.length) return { ok: false, reason: 'border' };
  const xs: number[] = [];
  const ys: number[] = [];
  for (let j = from; j <= to; j++) {
    if (Number.isNaN(q[j])) return { ok: false, reason: 'border' };
    xs.push((j - half) * ds);
    ys.push(q[j]);
  }
  const fit = fitErfBar(xs, ys, { x1, sigma1: s1, x2, sigma2: s2, lo: 0, amplitude: contrast });
  const plausible = fit.converged && fit.x2 > fit.x1 && fit.sigma1 > 0.05 && fit.sigma2 > 0.05 &&
    fit.sigma1 < Math.max(1, fit.x2 - fit.x1) && fit.sigma2 < Math.max(1, fit.x2 - fit.x1) &&
    Math.abs(fit.x1 - x1) < 2 + s1 && Math.abs(fit.x2 - x2) < 2 + s2 && fit.amplitude > 0.25 * contrast;
  if (!plausible) return { ok: false, reason: 'edge-fit' };
  return { ok: true, x1: fit.x1, x2: fit.x2, sigmas: [fit.sigma1, fit.sigma2], stdErrs: [fit.x1StdErr, fit.x2StdErr] };
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
