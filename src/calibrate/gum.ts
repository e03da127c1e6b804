/**
 * Expression of uncertainty by the GUM (JCGM 100:2008, "Evaluation of measurement data - Guide to the
 * expression of uncertainty in measurement"): standard uncertainties combined by the law of propagation
 * (GUM 5.1.2), effective degrees of freedom by the Welch-Satterthwaite formula (GUM G.4.1) and the
 * coverage factor k = t_p(nu_eff) of Student's t distribution (GUM G.3.2, Table G.2; k -> 2 for
 * p = 95.45 % as nu_eff grows, GUM 6.3.3). docs/methods.md, "Micrometer calibration".
 */
import { studentTwoSided } from '../common/index.ts';

export { combineUncertainties, coverageFactor, type UncertaintyComponent } from '../common/index.ts';

/**
 * A value and its uncertainty as text, rounded as the GUM recommends (7.2.6): the uncertainty to two
 * significant digits and the value to the same decimal place; `digits` is that number of decimals.
 */
export function roundWithUncertainty(value: number, u: number): { value: string; u: string; digits: number } {
  const digits = u > 0 && Number.isFinite(u) ? Math.min(20, Math.max(0, 1 - Math.floor(Math.log10(u)))) : 6;
  return { value: value.toFixed(digits), u: u.toFixed(digits), digits };
}

export { studentTwoSided };
