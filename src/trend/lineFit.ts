import { InputError, normalQuantile, studentTQuantile } from '../common/index.ts';

/**
 * A reading against a process variable (draw ratio, dope concentration, bath temperature, ...): the straight line
 * y = a + b x fitted by weighted least squares, each point weighted by 1 / se^2 (docs/methods.md §19 "Order
 * against a process variable"; Bevington & Robinson, "Data Reduction and Error Analysis for the Physical
 * Sciences", 3rd ed., §6.3; Taylor, "An Introduction to Error Analysis", 2nd ed., ch. 8):
 *
 *   W = sum w, xbar = sum w x / W, Sxx = sum w (x - xbar)^2
 *   b = sum w (x - xbar)(y - ybar) / Sxx,  a = ybar - b xbar
 *   u(b)^2 = 1 / Sxx,  u(a)^2 = 1 / W + xbar^2 / Sxx
 *   chi^2 = sum w (y - a - b x)^2 on nu = n - 2 degrees of freedom.
 *
 * 95 % intervals: estimate +- z(0.975) u when chi^2 / nu <= 1 (the points' own standard errors explain the
 * scatter); when the points scatter more than their standard errors allow (chi^2 / nu > 1), u is scaled by the
 * Birge ratio sqrt(chi^2 / nu) and t(0.975, nu) replaces z (as the relaxation fits of src/series do; Birge 1932,
 * Phys. Rev. 40:207).
 */

/** One reading at one value of the variable. */
export interface LinePoint {
  /** The variable's value (draw ratio, %, deg C, ...). */
  x: number;
  /** The reading (order parameter, core/skin ratio, diameter). */
  y: number;
  /** Standard error of y; a point without a positive finite one is left out of the fit. */
  se: number;
}

export type TrendDirection = 'rises' | 'falls' | 'no clear trend';

export interface LineFit {
  /** Points in the fit, and how many distinct values of x they hold. */
  n: number;
  distinctX: number;
  /** Slope, reading per unit of the variable, and its 95 % interval; NaN when not determined. */
  slope: number;
  slopeCiLow: number;
  slopeCiHigh: number;
  slopeSe: number;
  /** Intercept (the line at x = 0, often an extrapolation) and its 95 % interval; NaN when not determined. */
  intercept: number;
  interceptCiLow: number;
  interceptCiHigh: number;
  interceptSe: number;
  /** Weighted mean of x: the line is best known there. */
  xMean: number;
  chiSquare: number;
  dof: number;
  /** sqrt(chi^2 / nu); the standard errors above are multiplied by it when it exceeds 1. */
  birgeRatio: number;
  /** The coverage factor of the intervals: z(0.975), or t(0.975, nu) when the Birge ratio exceeds 1. */
  coverageFactor: number;
  /** Whether the slope's interval lies above 0 (rises), below (falls) or holds 0. */
  direction: TrendDirection | null;
  /** What the points do not determine (slope, intercept), with why and what would determine it. */
  notDetermined?: Partial<Record<'slope' | 'intercept', string>>;
}

/** Two-sided level of the intervals. */
export const LINE_LEVEL = 0.95;
/** Fewest distinct values of the variable for a line: with two, a line passes through any data and nothing checks it. */
export const LINE_MIN_DISTINCT_X = 3;

/**
 * A point's standard error from its 95 % interval when none is given: half the interval's width over z(0.975) =
 * 1.96. When the interval was t(0.975, nu) standard errors wide, this overstates the standard error by t / z
 * (a wider, never narrower, line interval). NaN when the interval is open or missing.
 */
export function seFromInterval(ciLow: number | null | undefined, ciHigh: number | null | undefined): number {
  if (typeof ciLow !== 'number' || typeof ciHigh !== 'number' || !Number.isFinite(ciLow) || !Number.isFinite(ciHigh) || !(ciHigh > ciLow)) return NaN;
  return (ciHigh - ciLow) / (2 * normalQuantile(0.5 + LINE_LEVEL / 2));
}

/** A point's standard error: its own when positive and finite, else from its 95 % interval (seFromInterval). */
export function pointSe(se: number | null | undefined, ciLow: number | null | undefined, ciHigh: number | null | undefined): number {
  return typeof se === 'number' && Number.isFinite(se) && se > 0 ? se : seFromInterval(ciLow, ciHigh);
}

/** Whether a point can enter the fit: finite x and y and a positive finite standard error. */
export const usablePoint = (p: LinePoint) => Number.isFinite(p.x) && Number.isFinite(p.y) && Number.isFinite(p.se) && p.se > 0;

/**
 * Fits y = a + b x to the usable points (usablePoint). With fewer than LINE_MIN_DISTINCT_X distinct x among them,
 * slope and intercept are NaN and `notDetermined` says why and what would determine them; `variable` names x in
 * those words.
 */
export function fitLine(points: readonly LinePoint[], variable = 'the variable'): LineFit {
  for (const p of points) if (typeof p.x !== 'number' || typeof p.y !== 'number') throw new InputError('a point of the line fit is not a number', 'Give every image a value');
  const used = points.filter(usablePoint);
  const distinctX = new Set(used.map((p) => p.x)).size;
  const open = points.length - used.length;
  const base = { n: used.length, distinctX, xMean: NaN, chiSquare: NaN, dof: Math.max(0, used.length - 2), birgeRatio: NaN, coverageFactor: NaN, direction: null };
  if (distinctX < LINE_MIN_DISTINCT_X) {
    const why = used.length === 0
      ? `no point has a reading with a closed interval${open ? ` (${open} left out)` : ''}, so no line is determined; readings whose intervals close would determine it`
      : `the readings with an interval lie at ${distinctX} value${distinctX === 1 ? '' : 's'} of ${variable}${open ? ` (${open} point${open === 1 ? '' : 's'} without an interval left out)` : ''}; a straight line needs readings at ${LINE_MIN_DISTINCT_X} or more different values, so that their scatter about it can be seen`;
    return {
      ...base, slope: NaN, slopeCiLow: NaN, slopeCiHigh: NaN, slopeSe: NaN, intercept: NaN, interceptCiLow: NaN, interceptCiHigh: NaN, interceptSe: NaN,
      notDetermined: { slope: why, intercept: why },
    };
  }
  let W = 0, X = 0, Y = 0;
  for (const p of used) { const w = 1 / (p.se * p.se); W += w; X += w * p.x; Y += w * p.y; }
  const xMean = X / W, yMean = Y / W;
  let sxx = 0, sxy = 0;
  for (const p of used) { const w = 1 / (p.se * p.se), dx = p.x - xMean; sxx += w * dx * dx; sxy += w * dx * (p.y - yMean); }
  const slope = sxy / sxx, intercept = yMean - slope * xMean;
  let chiSquare = 0;
  for (const p of used) { const r = (p.y - intercept - slope * p.x) / p.se; chiSquare += r * r; }
  const dof = used.length - 2;
  const ratio = chiSquare / dof;
  const scaled = ratio > 1;
  const k = scaled ? studentTQuantile(0.5 + LINE_LEVEL / 2, dof) : normalQuantile(0.5 + LINE_LEVEL / 2);
  const scale = scaled ? Math.sqrt(ratio) : 1;
  const slopeSe = scale / Math.sqrt(sxx), interceptSe = scale * Math.sqrt(1 / W + (xMean * xMean) / sxx);
  const slopeCiLow = slope - k * slopeSe, slopeCiHigh = slope + k * slopeSe;
  return {
    ...base, slope, slopeCiLow, slopeCiHigh, slopeSe, intercept, interceptCiLow: intercept - k * interceptSe, interceptCiHigh: intercept + k * interceptSe, interceptSe,
    xMean, chiSquare, dof, birgeRatio: Math.sqrt(ratio), coverageFactor: k,
    direction: slopeCiLow > 0 ? 'rises' : slopeCiHigh < 0 ? 'falls' : 'no clear trend',
  };
}

/** The fitted line at x (NaN when it is not determined). */
export const lineAt = (f: Pick<LineFit, 'slope' | 'intercept'>, x: number): number => f.intercept + f.slope * x;
