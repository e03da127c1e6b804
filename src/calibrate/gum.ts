/**
 * Expression of uncertainty by the GUM (JCGM 100:2008, "Evaluation of measurement data - Guide to the
 * expression of uncertainty in measurement"): standard uncertainties combined by the law of propagation
 * (GUM 5.1.2), effective degrees of freedom by the Welch-Satterthwaite formula (GUM G.4.1) and the
 * coverage factor k = t_p(nu_eff) of Student's t distribution (GUM G.3.2, Table G.2; k -> 2 for
 * p = 95.45 % as nu_eff grows, GUM 6.3.3). docs/methods.md, "Micrometer calibration".
 */
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

/** ln Gamma(x), x > 0, by the Lanczos approximation (g = 7, 9 terms; relative error below 1e-13). */
function lnGamma(x: number): number {
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - lnGamma(1 - x);
  const z = x - 1;
  let a = c[0];
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * Regularised incomplete beta I_x(a, b) by its continued fraction (modified Lentz), using the symmetry
 * I_x(a, b) = 1 - I_{1-x}(b, a) where the fraction converges slowly (Abramowitz & Stegun 26.5.8).
 */
function incompleteBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const front = Math.exp(lnGamma(a + b) - lnGamma(a) - lnGamma(b) + a * Math.log(x) + b * Math.log(1 - x));
  if (x > (a + 1) / (a + b + 2)) return 1 - incompleteBeta(1 - x, b, a);
  const tiny = 1e-300;
  let f = 1;
  let c = 1;
  let d = 0;
  for (let i = 0; i <= 400; i++) {
    const m = i >> 1;
    let num: number;
    if (i === 0) num = 1;
    else if (i % 2 === 0) num = (m * (b - m) * x) / ((a + 2 * m - 1) * (a + 2 * m));
    else num = -((a + m) * (a + b + m) * x) / ((a + 2 * m) * (a + 2 * m + 1));
    d = 1 + num * d;
    if (Math.abs(d) < tiny) d = tiny;
    d = 1 / d;
    c = 1 + num / c;
    if (Math.abs(c) < tiny) c = tiny;
    const cd = c * d;
    f *= cd;
    if (Math.abs(1 - cd) < 1e-15) break;
  }
  return (front * (f - 1)) / a;
}

/** P(|T| <= t) for Student's t with nu degrees of freedom: 1 - I_{nu/(nu+t^2)}(nu/2, 1/2) (A&S 26.7.1); the normal law for nu = Infinity. */
export function studentTwoSided(t: number, nu: number): number {
  if (!Number.isFinite(nu)) return erf(Math.abs(t) / Math.SQRT2);
  return 1 - incompleteBeta(nu / (nu + t * t), nu / 2, 0.5);
}

/** erf(x) = P(1/2, x^2), the regularised lower incomplete gamma by its series (A&S 6.5.29), x >= 0. */
function erf(x: number): number {
  if (x > 6) return 1;
  const z = x * x;
  let term = 1 / 0.5;
  let sum = term;
  for (let n = 1; n < 500; n++) {
    term *= z / (0.5 + n);
    sum += term;
    if (term < sum * 1e-16) break;
  }
  return sum * Math.exp(-z + 0.5 * Math.log(z) - lnGamma(0.5));
}

/**
 * Coverage factor k_p = t_p(nu): the t with P(|T| <= t) = p for Student's t with nu (not necessarily
 * whole) degrees of freedom (GUM G.3.2 and Table G.2); nu = Infinity gives the normal quantile.
 */
export function coverageFactor(p: number, nu: number): number {
  if (!(p > 0 && p < 1)) throw new InputError(`coverage probability must lie between 0 and 1, got ${p}`);
  if (!(nu > 0)) throw new InputError(`degrees of freedom must be positive, got ${nu}`);
  let lo = 0;
  let hi = 1;
  while (studentTwoSided(hi, nu) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (studentTwoSided(mid, nu) < p) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * A value and its uncertainty as text, rounded as the GUM recommends (7.2.6): the uncertainty to two
 * significant digits and the value to the same decimal place; `digits` is that number of decimals.
 */
export function roundWithUncertainty(value: number, u: number): { value: string; u: string; digits: number } {
  const digits = u > 0 && Number.isFinite(u) ? Math.min(20, Math.max(0, 1 - Math.floor(Math.log10(u)))) : 6;
  return { value: value.toFixed(digits), u: u.toFixed(digits), digits };
}
