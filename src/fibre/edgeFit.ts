/**
 * Sub-pixel edge location on a 1D profile (docs/methods.md §12.3-12.4, "Edge location", "Fibre diameter:
 * blurred-bar fit"):
 * - start value: peak of |dI/dx| (central differences) refined by the 3-point parabola
 *   x = i + (g[i-1] - g[i+1]) / (2 (g[i-1] - 2 g[i] + g[i+1]));
 * - final value: least-squares fit of the edge-spread function of a Gaussian-blurred step,
 *   I(x) = lo + (hi - lo) * Phi((x - x0) / sigma), Phi the standard normal CDF (= (1 + erf(z / sqrt 2)) / 2),
 *   by Levenberg-Marquardt. The fit is unbiased for a blurred step, where the parabola is not;
 * - for narrow fibres, the whole cross-profile as one blurred bar (both edges, one PSF sigma and a sloping
 *   background fitted jointly; `fitBlurredBar`).
 */
import { normalCdfFast as normalCdf } from '../common/index.ts';
import { levenbergMarquardt, type LmModel } from './levenbergMarquardt.ts';
import { pixelEdgeSpread, type EdgeSpread, type PixelFootprint } from './pixelEdge.ts';

const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);

/**
 * Parabola-refined peak of |gradient| in `values[from..to]` (inclusive sample indices), in sample units.
 * Returns NaN when the range holds no interior maximum or a sample is not finite.
 */
export function parabolaEdgeIndex(values: ArrayLike<number>, from = 0, to = values.length - 1): number {
  const lo = Math.max(1, from);
  const hi = Math.min(values.length - 2, to);
  const grad = (i: number) => Math.abs(0.5 * (values[i + 1] - values[i - 1]));
  let best = -1;
  let bestG = -Infinity;
  for (let i = lo; i <= hi; i++) {
    const g = grad(i);
    if (!Number.isFinite(g)) return NaN;
    if (g > bestG) {
      bestG = g;
      best = i;
    }
  }
  if (best < 2 || best > values.length - 3) return best < 0 ? NaN : best;
  const gm = grad(best - 1);
  const gp = grad(best + 1);
  const den = gm - 2 * bestG + gp;
  if (!Number.isFinite(den) || den >= 0) return best;
  const shift = (0.5 * (gm - gp)) / den;
  return Math.abs(shift) <= 1 ? best + shift : best;
}

export interface ErfEdgeFit {
  x0: number;
  sigma: number;
  lo: number;
  hi: number;
  /** Standard error of x0 from the fit's covariance (residual variance times (J^T J)^-1). */
  x0StdErr: number;
  rmsResidual: number;
  converged: boolean;
}

export interface ErfEdgeStart {
  x0: number;
  sigma: number;
  lo: number;
  hi: number;
}

const erfEdgeModel: LmModel = {
  positive: [1],
  evaluate(x, p, grad) {
    const z = (x - p[0]) / p[1];
    const cdf = normalCdf(z);
    const pdf = INV_SQRT_2PI * Math.exp(-0.5 * z * z);
    const amp = p[3] - p[2];
    grad[0] = -(amp * pdf) / p[1];
    grad[1] = -(amp * pdf * z) / p[1];
    grad[2] = 1 - cdf;
    grad[3] = cdf;
    return p[2] + amp * cdf;
  },
};

/**
 * Fits I(x) = lo + (hi - lo) Phi((x - x0)/sigma) to samples (xs, ys) of a rising edge (mirror x for a
 * falling one). Units of x0 and sigma are those of xs. Levenberg-Marquardt; sigma is kept positive.
 * `converged` is false when the iteration limit is hit or a parameter is not finite.
 */
export function fitErfEdge(xs: ArrayLike<number>, ys: ArrayLike<number>, start: ErfEdgeStart): ErfEdgeFit {
  const r = levenbergMarquardt(xs, ys, [start.x0, Math.max(start.sigma, 1e-3), start.lo, start.hi], erfEdgeModel);
  const [x0, sigma, lo, hi] = r.params;
  const dof = Math.max(1, xs.length - 4);
  const x0Var = r.inverseNormal ? (r.inverseNormal[0][0] * r.cost) / dof : NaN;
  return {
    x0, sigma, lo, hi, x0StdErr: Math.sqrt(Math.max(0, x0Var)), rmsResidual: Math.sqrt(r.cost / xs.length),
    converged: r.converged,
  };
}

/** Start values of a blurred-bar fit (profile coordinates, px). */
export interface BlurredBarStart {
  centre: number;
  width: number;
  sigma: number;
  /** Level change across the edges (signed: negative for a dark bar on a bright background). */
  amplitude: number;
  background: number;
  /** Background slope per px (default 0). */
  slope?: number;
}

export interface BlurredBarFit {
  centre: number;
  /** D = x2 - x1, the geometric width of the bar. */
  width: number;
  /** PSF standard deviation (fitted, or the fixed value given). */
  sigma: number;
  amplitude: number;
  /** Background level at x = `slopeOrigin` and its slope per unit x. */
  background: number;
  slope: number;
  slopeOrigin: number;
  /**
   * Standard errors of the edge positions x1 = centre - width / 2 and x2 = centre + width / 2 (residual variance
   * times (J^T J)^-1; NaN when singular).
   */
  x1StdErr: number;
  x2StdErr: number;
  rmsResidual: number;
  /** Residual sum of squares and number of fitted parameters (for pooling fits). */
  rss: number;
  parameters: number;
  converged: boolean;
}

/**
 * Model value and gradient of the blurred bar with parameters [centre, width, sigma, mass, b0, b1]
 * (mass = amplitude x width, which stays finite as the width goes to 0), each sample being a pixel of
 * the given footprint (or a point, for null). `fixedSigma` drops sigma from the parameters.
 */
function blurredBarModel(slopeOrigin: number, fixedSigma: number | null, footprint: PixelFootprint | null): LmModel {
  const full = new Array<number>(6).fill(0);
  const e1: EdgeSpread = { value: 0, dU: 0, dSigma: 0 };
  const e2: EdgeSpread = { value: 0, dU: 0, dSigma: 0 };
  return {
    positive: fixedSigma === null ? [1, 2] : [1],
    evaluate(x, p, grad) {
      const c = p[0];
      const d = p[1];
      const s = fixedSigma ?? p[2];
      const k = fixedSigma === null ? 0 : -1;
      const m = p[3 + k];
      pixelEdgeSpread(x - c + d / 2, s, footprint, e1);
      pixelEdgeSpread(x - c - d / 2, s, footprint, e2);
      const g = e1.value - e2.value;
      const a = m / d;
      full[0] = -a * (e1.dU - e2.dU);
      full[1] = -(a / d) * g + (a * (e1.dU + e2.dU)) / 2;
      full[2] = a * (e1.dSigma - e2.dSigma);
      full[3] = g / d;
      full[4] = 1;
      full[5] = x - slopeOrigin;
      for (let i = 0, j = 0; i < 6; i++) if (!(fixedSigma !== null && i === 2)) grad[j++] = full[i];
      return p[4 + k] + p[5 + k] * (x - slopeOrigin) + a * g;
    },
  };
}

/**
 * Fits the whole cross-profile of a fibre as a blurred bar (Gaussian PSF of sigma, both edges, a
 * background with a slope), jointly:
 *
 *   I(x) = b0 + b1 (x - x_s) + A [Phi((x - x1)/sigma) - Phi((x - x2)/sigma)],  x1,2 = centre -+ D / 2,
 *
 * (the same as A/2 [erf((x - x1)/(sqrt2 sigma)) - erf((x - x2)/(sqrt2 sigma))]); docs/methods.md,
 * "Fibre diameter: blurred-bar fit". Levenberg-Marquardt on [centre, D, sigma, A D, b0, b1]; D and sigma
 * are kept positive. With `fixedSigma` the PSF is not fitted. With a pixel `footprint`, each sample
 * is a whole pixel's mean at its centre's distance x (pixelEdgeSpread), so no interpolation is needed. When D is below about 2 sigma the edges'
 * blurs merge, D and A trade off and only A D is measured: the fit still returns numbers, and the
 * caller decides whether they are determined.
 */
export function fitBlurredBar(xs: ArrayLike<number>, ys: ArrayLike<number>, start: BlurredBarStart,
  fixedSigma: number | null = null, footprint: PixelFootprint | null = null): BlurredBarFit {
  const slopeOrigin = start.centre;
  const width0 = Math.max(start.width, 1e-2);
  const p0 = fixedSigma === null
    ? [start.centre, width0, Math.max(start.sigma, 0.05), start.amplitude * width0, start.background, start.slope ?? 0]
    : [start.centre, width0, start.amplitude * width0, start.background, start.slope ?? 0];
  const r = levenbergMarquardt(xs, ys, p0, blurredBarModel(slopeOrigin, fixedSigma, footprint));
  const k = fixedSigma === null ? 0 : -1;
  const [centre, width] = r.params;
  const sigma = fixedSigma ?? r.params[2];
  const np = p0.length;
  const scale = r.cost / Math.max(1, xs.length - np);
  const cov = (i: number, j: number) => (r.inverseNormal ? r.inverseNormal[i][j] * scale : NaN);
  const edgeSe = (sign: number) => Math.sqrt(Math.max(0, cov(0, 0) + cov(1, 1) / 4 + sign * cov(0, 1)));
  return {
    centre, width, sigma, amplitude: r.params[3 + k] / width, background: r.params[4 + k], slope: r.params[5 + k],
    slopeOrigin, x1StdErr: edgeSe(-1), x2StdErr: edgeSe(1),
    rmsResidual: Math.sqrt(r.cost / xs.length), rss: r.cost, parameters: np,
    converged: r.converged && r.params.every(Number.isFinite),
  };
}
