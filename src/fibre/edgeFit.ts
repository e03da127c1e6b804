/**
 * Sub-pixel edge location on a 1D profile (domain.md §7):
 * - start value: peak of |dI/dx| (central differences) refined by the 3-point parabola
 *   x = i + (g[i-1] - g[i+1]) / (2 (g[i-1] - 2 g[i] + g[i+1]));
 * - final value: least-squares fit of the edge-spread function of a Gaussian-blurred step,
 *   I(x) = lo + (hi - lo) * Phi((x - x0) / sigma), Phi the standard normal CDF (= (1 + erf(z / sqrt 2)) / 2),
 *   by Levenberg-Marquardt. The fit is unbiased for a blurred step, where the parabola is not;
 * - for narrow fibres, both edges at once: a blurred bar lo + A [Phi((x - x1)/s1) - Phi((x - x2)/s2)].
 */
import { normalCdf } from './erf.ts';
import { levenbergMarquardt, type LmModel } from './levenbergMarquardt.ts';

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

export interface ErfBarFit {
  x1: number;
  sigma1: number;
  x2: number;
  sigma2: number;
  lo: number;
  /** Level change across the edges (signed). */
  amplitude: number;
  x1StdErr: number;
  x2StdErr: number;
  rmsResidual: number;
  converged: boolean;
}

const erfBarModel: LmModel = {
  positive: [1, 3],
  evaluate(x, p, grad) {
    const z1 = (x - p[0]) / p[1];
    const z2 = (x - p[2]) / p[3];
    const c1 = normalCdf(z1);
    const c2 = normalCdf(z2);
    const d1 = INV_SQRT_2PI * Math.exp(-0.5 * z1 * z1);
    const d2 = INV_SQRT_2PI * Math.exp(-0.5 * z2 * z2);
    const a = p[5];
    grad[0] = -(a * d1) / p[1];
    grad[1] = -(a * d1 * z1) / p[1];
    grad[2] = (a * d2) / p[3];
    grad[3] = (a * d2 * z2) / p[3];
    grad[4] = 1;
    grad[5] = c1 - c2;
    return p[4] + a * (c1 - c2);
  },
};

/**
 * Fits a blurred bar, I(x) = lo + A [Phi((x - x1)/sigma1) - Phi((x - x2)/sigma2)], x1 < x2: both edges of
 * a narrow fibre at once, for widths where the blur of one edge reaches the other (there a single-edge
 * fit is biased because the fibre never reaches its full contrast).
 */
export function fitErfBar(xs: ArrayLike<number>, ys: ArrayLike<number>,
  start: { x1: number; sigma1: number; x2: number; sigma2: number; lo: number; amplitude: number }): ErfBarFit {
  const r = levenbergMarquardt(xs, ys,
    [start.x1, Math.max(start.sigma1, 1e-3), start.x2, Math.max(start.sigma2, 1e-3), start.lo, start.amplitude], erfBarModel);
  const [x1, sigma1, x2, sigma2, lo, amplitude] = r.params;
  const dof = Math.max(1, xs.length - 6);
  const se = (k: number) => (r.inverseNormal ? Math.sqrt(Math.max(0, (r.inverseNormal[k][k] * r.cost) / dof)) : NaN);
  return {
    x1, sigma1, x2, sigma2, lo, amplitude, x1StdErr: se(0), x2StdErr: se(2), rmsResidual: Math.sqrt(r.cost / xs.length),
    converged: r.converged,
  };
}
