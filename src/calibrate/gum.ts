/**
 * Expression of uncertainty by the GUM (JCGM 100:2008, "Evaluation of measurement data - Guide to the
 * expression of uncertainty in measurement"): standard uncertainties combined by the law of propagation
 * (GUM 5.1.2), effective degrees of freedom by the Welch-Satterthwaite formula (GUM G.4.1) and the
 * coverage factor k = t_p(nu_eff) of Student's t distribution (GUM G.3.2, Table G.2; k -> 2 for
 * p = 95.45 % as nu_eff grows, GUM 6.3.3). docs/methods.md, "Micrometer calibration".
 */
import { studentTQuantile, studentTwoSided } from '../common/distributions.ts';
import { InputError } from '../common/errors.ts';

/** One input's contribution to a combined standard uncertainty: c_i u(x_i) in the output's unit, and its degrees of freedom. */
export interface UncertaintyComponent {
  /** Sensitivity coefficient times standard uncertainty, |c_i| u(x_i). */
  u: number;
  /** Degrees of freedom of u(x_i) (Infinity for a Type B bound taken as exact, GUM G.4.3). */
  dof: number;
}

/**
 * Combined standard uncertainty of uncorrelated inputs, u_c = sqrt(sum u_i^2) (GUM eq. 10), and its
 * effective degrees of freedom nu_eff = u_c^4 / sum(u_i^4 / nu_i) (GUM eq. G.2b); Infinity when every
 * component has infinite degrees of freedom.
 */
export function combineUncertainties(components: UncertaintyComponent[]): { u: number; dof: number } {
  let s2 = 0;
  let s4 = 0;
  for (const c of components) {
    s2 += c.u * c.u;
    if (Number.isFinite(c.dof) && c.u > 0) s4 += c.u ** 4 / c.dof;
  }
  return { u: Math.sqrt(s2), dof: s4 > 0 ? s2 * s2 / s4 : Infinity };
}

/**
 * Coverage factor k_p = t_p(nu): the t with P(|T| <= t) = p for Student's t with nu (not necessarily
 * whole) degrees of freedom (GUM G.3.2 and Table G.2); nu = Infinity gives the normal quantile.
 */
export function coverageFactor(p: number, nu: number): number {
  if (!(p > 0 && p < 1)) throw new InputError(`coverage probability must lie between 0 and 1, got ${p}`);
  if (!(nu > 0)) throw new InputError(`degrees of freedom must be positive, got ${nu}`);
  // P(|T| <= k) = p is the quantile at (1 + p) / 2.
  return studentTQuantile(0.5 + p / 2, nu);
}

/**
 * A value and its uncertainty as text, rounded as the GUM recommends (7.2.6): the uncertainty to two
 * significant digits and the value to the same decimal place; `digits` is that number of decimals.
 */
export function roundWithUncertainty(value: number, u: number): { value: string; u: string; digits: number } {
  const digits = u > 0 && Number.isFinite(u) ? Math.min(20, Math.max(0, 1 - Math.floor(Math.log10(u)))) : 6;
  return { value: value.toFixed(digits), u: u.toFixed(digits), digits };
}

export { studentTwoSided };
