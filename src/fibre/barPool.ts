/**
 * One PSF for a whole fibre. Every bar station of a fibre sees the same blur, so the PSF sigma is
 * estimated once from all of them, as the sigma that minimises the summed residual sum of squares of the
 * stations' fits with sigma held fixed (the profile likelihood of sigma for Gaussian noise), and each
 * station's width is its fit at that sigma (docs/methods.md, "Fibre diameter: blurred-bar fit"). This
 * removes the station-by-station trade-off between width and sigma, which biases fits of single noisy
 * profiles of narrow bars.
 *
 * Uncertainty (GUM, JCGM 100:2008): the pooled sigma's standard uncertainty is from the curvature of the
 * summed RSS, u^2(sigma) = 2 s^2 / (d^2 RSS / d sigma^2), s^2 = RSS / (N - P) (N pixels, P parameters;
 * the pixels' noise is independent). It enters the mean width through the sensitivity coefficient
 * c = d(mean D)/d(sigma) (GUM 5.1.3), found by refitting at sigma +- h. In the linearised model the
 * station scatter at fixed sigma and c u(sigma) are uncorrelated and add in quadrature.
 *
 * Below the resolvable width (D < RESOLVABLE_WIDTH_PER_SIGMA x sigma) the width and the contrast trade off
 * and only their product is measured: the fibre's width is then not determined. What the profiles still
 * determine is the second moment of the blurred bar, V = sigma^2 + D^2 / 12 (variances add under
 * convolution; a bar of width D has variance D^2 / 12), which gives the bound D <= sqrt(12 V), since
 * sigma^2 >= 0.
 */
import { fitBlurredBar, type BlurredBarFit, type BlurredBarStart } from './edgeFit.ts';
import type { MeasuredStation } from './stations.ts';
import { normalQuantile } from '../common/index.ts';
import { median } from './stats.ts';
import { studentTQuantile } from '../common/index.ts';

/** Width below which a bar is not resolved, in PSF sigmas (the edges' blurs merge; docs/methods.md §12.4). */
export const RESOLVABLE_WIDTH_PER_SIGMA = 2;

const ONE_SIDED_95 = normalQuantile(0.95);

export interface BarPool {
  /** Number of bar stations pooled. */
  stations: number;
  /** Pooled PSF sigma (profile-likelihood minimum over the fibre's bar stations), px. */
  sigmaPx: number;
  /** Standard uncertainty of the pooled sigma, px (k = 1). */
  sigmaUPx: number;
  /**
   * True when the mean width is above RESOLVABLE_WIDTH_PER_SIGMA x sigma beyond doubt: the margin
   * m = mean D - 2 sigma exceeds z(0.95) u(m), u^2(m) = SD(D)^2 / n + ((c - 2) u(sigma))^2 with c the mean
   * dD/dsigma (the width and sigma move together, so near the limit the margin is far less certain than
   * either alone). With a single station, the margin alone decides.
   */
  resolved: boolean;
  /** Mean and standard error of the stations' second moments V = sigma^2 + D^2 / 12 (free fits), px^2. */
  secondMomentPx2: number;
  secondMomentUPx2: number;
}

/** Start values for refitting a station from an earlier fit (background carried to the new slope origin). */
function startFrom(f: BlurredBarFit): BlurredBarStart {
  return {
    centre: f.centre, width: f.width, sigma: f.sigma, amplitude: f.amplitude,
    background: f.background + f.slope * (f.centre - f.slopeOrigin), slope: f.slope,
  };
}

/**
 * Pools the PSF over a fibre's bar stations and refits them at the pooled sigma, in place (each bar
 * station's diameterPx, edgeSigmaPx and edgeStdErrPx are replaced, and `bar.widthPerSigma` set to its
 * dD/dsigma). Returns null when the fibre has no bar station or a refit fails (the stations then keep
 * their free fits, and the caller reports them as not determined).
 */
export function poolBarStations(stations: MeasuredStation[]): BarPool | null {
  const bars = stations.filter((s) => s.profileFit === 'bar' && s.bar);
  if (bars.length === 0) return null;
  // A single noisy profile of a narrow bar often collapses to D -> 0 (the Gaussian limit, where the fit
  // cannot move D any more, and its sigma takes up the whole width); such stations start the pooled fits
  // at the median width of the others, with the same product A D, which the profile does determine.
  const frees = bars.map((s) => s.bar!.free);
  const isOpen = (f: BlurredBarFit) => f.width >= 0.5 * f.sigma;
  const open = frees.filter(isOpen);
  const typicalWidth = median((open.length > 0 ? open : frees).map((f) => f.width));
  const initial: BlurredBarFit[] = frees.map((f) => (isOpen(f) ? f
    : { ...f, width: Math.max(typicalWidth, f.sigma), amplitude: (f.amplitude * f.width) / Math.max(typicalWidth, f.sigma) }));
  let last = initial;
  const cache = new Map<number, { rss: number; fits: BlurredBarFit[] }>();
  // Summed RSS of the fits at a fixed sigma; a fit that collapses to D -> 0 is a valid (boundary) fit here.
  const at = (sigma: number) => {
    const hit = cache.get(sigma);
    if (hit) return hit;
    const fits = bars.map((s, i) => fitBlurredBar(s.bar!.xs, s.bar!.ys,
      startFrom(last[i].width >= 0.25 * sigma ? last[i] : initial[i]), sigma, s.bar!.footprint));
    last = fits;
    const r = { rss: fits.reduce((a, f) => a + f.rss, 0), fits };
    cache.set(sigma, r);
    return r;
  };

  // Parabolic search for the minimum of the summed RSS over sigma, shrinking the bracket around it; the
  // last bracket (half-width h, under 2.5 % of sigma) also gives the curvature and dD/dsigma.
  let c = median((open.length > 0 ? open : frees).map((f) => f.sigma));
  let h = 0.1 * c;
  let bracket: { h: number; fl: number; fc: number; fr: number; left: BlurredBarFit[]; right: BlurredBarFit[] } | null = null;
  for (let iter = 0; iter < 30; iter++) {
    const l = at(c - h);
    const fc = at(c).rss;
    const r = at(c + h);
    if (fc <= l.rss && fc <= r.rss) {
      const den = l.rss - 2 * fc + r.rss;
      bracket = { h, fl: l.rss, fc, fr: r.rss, left: l.fits, right: r.fits };
      c = den > 0 ? c + (h * (l.rss - r.rss)) / (2 * den) : c;
      if (h < 0.025 * c) break;
      h /= 5;
    } else {
      bracket = null;
      c = Math.max(0.05, l.rss < r.rss ? c - h : c + h);
      if (c - h <= 0.02) h = 0.5 * c;
    }
  }
  if (bracket === null) return null;
  const curvature = (bracket.fl - 2 * bracket.fc + bracket.fr) / (bracket.h * bracket.h);
  if (!(curvature > 0)) return null;
  const sigmaPx = c;
  const final = at(sigmaPx);
  if (!final.fits.every((f) => f.converged && f.width > 0)) return null;
  const totalPixels = bars.reduce((a, s) => a + s.bar!.xs.length, 0);
  const dof = totalPixels - final.fits.reduce((a, f) => a + f.parameters, 0) - 1;
  const s2 = final.rss / Math.max(1, dof);
  const sigmaUPx = Math.sqrt((2 * s2) / curvature);
  const { left, right } = bracket;

  bars.forEach((s, i) => {
    const f = final.fits[i];
    s.diameterPx = f.width;
    s.edgeSigmaPx = [sigmaPx, sigmaPx];
    s.edgeStdErrPx = [f.x1StdErr, f.x2StdErr];
    s.bar!.widthPerSigma = (right[i].width - left[i].width) / (2 * bracket!.h);
  });
  const moments = bars.map((s) => s.bar!.free.sigma ** 2 + s.bar!.free.width ** 2 / 12);
  const vMean = moments.reduce((a, b) => a + b, 0) / moments.length;
  const vSd = moments.length > 1
    ? Math.sqrt(moments.reduce((a, b) => a + (b - vMean) ** 2, 0) / (moments.length - 1)) : NaN;
  const widths = final.fits.map((f) => f.width);
  const n = widths.length;
  const meanWidth = widths.reduce((a, b) => a + b, 0) / n;
  const sdWidth = n > 1 ? Math.sqrt(widths.reduce((a, b) => a + (b - meanWidth) ** 2, 0) / (n - 1)) : 0;
  const meanSensitivity = bars.reduce((a, s) => a + s.bar!.widthPerSigma!, 0) / n;
  const margin = meanWidth - RESOLVABLE_WIDTH_PER_SIGMA * sigmaPx;
  const marginU = Math.hypot(sdWidth / Math.sqrt(n), (meanSensitivity - RESOLVABLE_WIDTH_PER_SIGMA) * sigmaUPx);
  let resolved = n > 1 ? margin > ONE_SIDED_95 * marginU : margin > 0;
  // Near the limit the summed RSS is a long flat valley along which D and sigma trade, and its curvature
  // understates u(sigma): there the likelihood itself decides (see resolvedByLikelihood).
  if (resolved && margin < CLEAR_MARGIN * marginU) resolved = resolvedByLikelihood(at, sigmaPx, final.rss, s2, margin, meanSensitivity);
  return {
    stations: bars.length, sigmaPx, sigmaUPx, resolved,
    secondMomentPx2: vMean, secondMomentUPx2: vSd / Math.sqrt(moments.length),
  };
}

/** Margins beyond this many u(m) are taken as resolved without the likelihood test (it would agree). */
const CLEAR_MARGIN = 10;

/**
 * Likelihood-ratio test of "the width is at least 2 sigma": along the profile of the summed RSS over sigma,
 * find the blur sigma_b at which the mean width equals 2 sigma_b (secant steps on D(sigma) - 2 sigma, which
 * falls with sigma), and call the fibre resolved when (RSS(sigma_b) - RSS(sigma)) / s^2 exceeds
 * z(0.95)^2 = 2.71, the one-sided 95 % point of the signed root of the likelihood ratio (Wilks 1938).
 * A width that stays above 2 sigma for any blur up to 5 times the fitted one is resolved.
 */
function resolvedByLikelihood(at: (sigma: number) => { rss: number; fits: BlurredBarFit[] }, sigma: number, rss: number,
  s2: number, margin: number, sensitivity: number): boolean {
  const gap = (sg: number) => {
    const fits = at(sg).fits;
    return fits.reduce((a, f) => a + f.width, 0) / fits.length - RESOLVABLE_WIDTH_PER_SIGMA * sg;
  };
  let x0 = sigma;
  let g0 = margin;
  let x1 = sigma + margin / Math.max(RESOLVABLE_WIDTH_PER_SIGMA - sensitivity, 0.5);
  for (let k = 0; k < 8; k++) {
    if (x1 > 5 * sigma) return true;
    const g1 = gap(x1);
    if (Math.abs(g1) < 1e-3 * sigma) break;
    const next = g1 === g0 ? x1 * 1.2 : x1 - (g1 * (x1 - x0)) / (g1 - g0);
    [x0, g0, x1] = [x1, g1, Math.max(sigma * 1.001, next)];
  }
  return (at(x1).rss - rss) / s2 > ONE_SIDED_95 * ONE_SIDED_95;
}

/**
 * One-sided 95 % upper bound on the width of an unresolved bar from its second moment:
 * D <= sqrt(12 V_hi), V_hi = mean V + t(0.95, n - 1) SE(V). Holds whatever the blur (sigma >= 0); a blur
 * known from elsewhere would tighten it to sqrt(12 (V_hi - sigma^2)), which is not offered (the blur of a
 * wide fibre's edge fits is measured through interpolation, a different quantity). Infinity with fewer than
 * two stations.
 */
export function unresolvedUpperBoundPx(pool: BarPool): number {
  const n = pool.stations;
  if (n < 2) return Infinity;
  const vHigh = pool.secondMomentPx2 + studentTQuantile(0.95, n - 1) * pool.secondMomentUPx2;
  return Math.sqrt(12 * Math.max(0, vHigh));
}
