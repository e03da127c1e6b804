/**
 * Expression of uncertainty by the GUM (JCGM 100:2008, "Evaluation of measurement data - Guide to the
 * expression of uncertainty in measurement"): standard uncertainties of independent inputs combined by
 * the law of propagation (GUM 5.1.2), effective degrees of freedom by the Welch-Satterthwaite formula
 * (GUM G.4.1), and the coverage factor k = t_p(nu_eff) of Student's t distribution (GUM G.3.2, Table
 * G.2). One home for these rules: calibration, fibre numbers and order ratios all use them.
 * docs/methods.md, "Uncertainty".
 */
import { normalQuantile, studentTQuantile } from './distributions.ts';
import { InputError } from './errors.ts';

/** One input's contribution to a combined standard uncertainty: |c_i| u(x_i) in the output's unit, and its degrees of freedom. */
export interface UncertaintyComponent {
  /** Sensitivity coefficient times standard uncertainty, |c_i| u(x_i). */
  u: number;
  /** Degrees of freedom of u(x_i) (Infinity for an input taken as exactly known, GUM G.4.3). */
  dof: number;
}

/**
 * Combined standard uncertainty of independent inputs, u_c = sqrt(sum u_i^2) (GUM eq. 10), and its
 * effective degrees of freedom nu_eff = u_c^4 / sum(u_i^4 / nu_i) (GUM eq. G.2b); Infinity when every
 * component has infinite degrees of freedom. Components with u = 0 do not count; NaN when one is not finite.
 */
export function combineUncertainties(components: UncertaintyComponent[]): { u: number; dof: number } {
  let s2 = 0, s4 = 0;
  for (const c of components) {
    if (!Number.isFinite(c.u)) return { u: NaN, dof: NaN };
    if (c.u === 0) continue;
    s2 += c.u * c.u;
    if (Number.isFinite(c.dof)) s4 += c.u ** 4 / c.dof;
  }
  return { u: Math.sqrt(s2), dof: s4 > 0 ? (s2 * s2) / s4 : Infinity };
}

/**
 * Coverage factor k_p = t_p(nu): the t with P(|T| <= t) = p for Student's t with nu (not necessarily
 * whole) degrees of freedom (GUM G.3.2 and Table G.2); nu = Infinity (or above 1e6, where the two agree
 * to 1e-6) gives the normal quantile.
 */
export function coverageFactor(p: number, nu: number): number {
  if (!(p > 0 && p < 1)) throw new InputError(`coverage probability must lie between 0 and 1, got ${p}`);
  if (!(nu > 0)) throw new InputError(`degrees of freedom must be positive, got ${nu}`);
  // P(|T| <= k) = p is the quantile at (1 + p) / 2.
  return nu > 1e6 ? normalQuantile(0.5 + p / 2) : studentTQuantile(0.5 + p / 2, nu);
}
