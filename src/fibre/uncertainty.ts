/**
 * Expression of uncertainty after the GUM (JCGM 100:2008, "Evaluation of measurement data - Guide to the
 * expression of uncertainty in measurement"; docs/methods.md §11.5, "Uncertainty"): standard uncertainties
 * (k = 1) combined by the law of propagation for independent inputs, u_c^2 = sum (c_i u_i)^2 (GUM 5.1.2),
 * effective degrees of freedom by the Welch-Satterthwaite formula (GUM G.4.1), and the expanded 95 %
 * interval y +- k u_c with k = t(0.975, nu_eff) (GUM G.3 and G.4).
 */
import { coverageFactor } from '../common/index.ts';

/** The level of every interval this folder states. */
export const COVERAGE_PROBABILITY = 0.95;

/** Combined standard uncertainty (k = 1) and its effective degrees of freedom (Infinity when every part is exact). */
export interface Combined {
  u: number;
  dof: number;
}

/** A value with its standard uncertainty, degrees of freedom and expanded interval. */
export interface Interval {
  u: number;
  dof: number;
  k: number;
  ciLow: number;
  ciHigh: number;
}

/** value +- k u with k = t_p(dof) (GUM G.3.2): symmetric, so the value always lies inside. */
export function expandedInterval(value: number, c: Combined, p = COVERAGE_PROBABILITY): Interval {
  const k = Number.isFinite(c.u) && c.dof > 0 ? coverageFactor(p, Math.max(c.dof, 1)) : NaN;
  return { u: c.u, dof: c.dof, k, ciLow: value - k * c.u, ciHigh: value + k * c.u };
}
