/**
 * Expression of uncertainty after the GUM (JCGM 100:2008, "Evaluation of measurement data - Guide to the
 * expression of uncertainty in measurement"; docs/methods.md §11.5, "Uncertainty"): standard uncertainties
 * (k = 1) combined by the law of propagation for independent inputs, u_c^2 = sum (c_i u_i)^2 (GUM 5.1.2),
 * effective degrees of freedom by the Welch-Satterthwaite formula (GUM G.4.1), and the expanded 95 %
 * interval y +- k u_c with k = t(0.975, nu_eff) (GUM G.3 and G.4).
 */
import { normalQuantile } from '../common/distributions.ts';
import { studentTQuantile } from '../common/distributions.ts';

/** The level of every interval this folder states. */
export const COVERAGE_PROBABILITY = 0.95;

/** One contribution c_i u(x_i) to a combined standard uncertainty, with its degrees of freedom (Infinity: exactly known). */
export interface UncertaintyPart {
  u: number;
  dof: number;
}

export interface Combined {
  /** Combined standard uncertainty (k = 1). */
  u: number;
  /** Effective degrees of freedom (Welch-Satterthwaite); Infinity when every part has infinite dof. */
  dof: number;
}

/**
 * u_c = sqrt(sum u_i^2); nu_eff = u_c^4 / sum(u_i^4 / nu_i) (GUM G.2b). Parts with u = 0 do not count.
 * NaN when a part is not finite.
 */
export function combineUncertainty(parts: UncertaintyPart[]): Combined {
  let sum2 = 0;
  let denominator = 0;
  for (const p of parts) {
    if (!Number.isFinite(p.u)) return { u: NaN, dof: NaN };
    if (p.u === 0) continue;
    sum2 += p.u * p.u;
    if (Number.isFinite(p.dof)) denominator += p.u ** 4 / Math.max(p.dof, 1);
  }
  const u = Math.sqrt(sum2);
  return { u, dof: denominator > 0 ? sum2 * sum2 / denominator : Infinity };
}

/**
 * Coverage factor for a two-sided interval of probability p (default 95 %): t((1 + p)/2, dof), the
 * normal quantile when dof is infinite or above 1e6 (where the two agree to 1e-6).
 */
export function coverageFactor(dof: number, p = COVERAGE_PROBABILITY): number {
  const q = 0.5 * (1 + p);
  return dof > 1e6 ? normalQuantile(q) : studentTQuantile(q, Math.max(dof, 1));
}

/** A value with its standard uncertainty, degrees of freedom and expanded interval. */
export interface Interval {
  u: number;
  dof: number;
  k: number;
  ciLow: number;
  ciHigh: number;
}

/** value +- k u with k = coverageFactor(dof): symmetric, so the value always lies inside. */
export function expandedInterval(value: number, c: Combined, p = COVERAGE_PROBABILITY): Interval {
  const k = coverageFactor(c.dof, p);
  return { u: c.u, dof: c.dof, k, ciLow: value - k * c.u, ciHigh: value + k * c.u };
}
