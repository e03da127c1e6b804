/**
 * The distributions every interval rests on, in one place: the error function and the normal law, and
 * Student's t (distribution and quantiles for any, also fractional, degrees of freedom, as the GUM's
 * Welch-Satterthwaite formula gives them).
 *
 * Error function to near double precision, for edge-spread models. Math has no erf, and the usual
 * 7-digit rational approximations are too coarse for sub-1e-6 px edge fits.
 *
 * |x| < 3: erf(x) = 2/sqrt(pi) * exp(-x^2) * sum_n 2^n x^(2n+1) / (1*3*...*(2n+1)) (all terms positive,
 * so no cancellation; Abramowitz & Stegun 7.1.6). |x| >= 3: erfc by its continued fraction (A&S 7.1.14),
 * evaluated with the modified Lentz method (erfc uses it from x = 2 on, keeping its relative accuracy).
 */
const TWO_OVER_SQRT_PI = 2 / Math.sqrt(Math.PI);

export function erf(x: number): number {
  if (Number.isNaN(x)) return NaN;
  const a = Math.abs(x);
  if (a >= 3) {
    const r = 1 - erfcLarge(a);
    return x < 0 ? -r : r;
  }
  let term = a;
  let sum = a;
  for (let n = 1; n < 200; n++) {
    term *= (2 * a * a) / (2 * n + 1);
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  const r = TWO_OVER_SQRT_PI * Math.exp(-a * a) * sum;
  return x < 0 ? -r : r;
}

export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x >= 2) return erfcLarge(x);
  return 1 - erf(x);
}

/** Continued fraction erfc(x) = exp(-x^2)/sqrt(pi) * 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + ...)))). */
function erfcLarge(x: number): number {
  const tiny = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  for (let n = 1; n < 2000; n++) {
    const an = n / 2;
    d = x + an * d;
    d = Math.abs(d) < tiny ? tiny : d;
    c = x + an / c;
    c = Math.abs(c) < tiny ? tiny : c;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return Math.exp(-x * x) / Math.sqrt(Math.PI) / f;
}

/** Standard normal cumulative distribution, Phi(z) = (1 + erf(z / sqrt 2)) / 2. */
export function normalCdf(z: number): number {
  return z < -3 ? 0.5 * erfc(-z / Math.SQRT2) : 0.5 * (1 + erf(z / Math.SQRT2));
}

/** Standard normal quantile: the z with Phi(z) = p, by bisection on the accurate normalCdf. */
export function normalQuantile(p: number): number {
  let lo = -40;
  let hi = 40;
  for (let i = 0; i < 200 && hi - lo > 1e-15; i++) {
    const mid = 0.5 * (lo + hi);
    if (normalCdf(mid) < p) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** Table of Phi for the fast version: step 1/64 on [0, 8.5]; beyond, Phi is within 1e-17 of 1. */
const TABLE_STEP = 1 / 64;
const TABLE_END = 8.5;
const PHI = Float64Array.from({ length: Math.round(TABLE_END / TABLE_STEP) + 1 }, (_, k) => normalCdf(k * TABLE_STEP));
const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);
const PDF = Float64Array.from(PHI, (_, k) => INV_SQRT_2PI * Math.exp(-0.5 * (k * TABLE_STEP) ** 2));

/**
 * Phi(z) by quintic Hermite interpolation of a table of the accurate normalCdf, with the exact first and
 * second derivatives phi(z) and -z phi(z) at the nodes; the interpolation error is below
 * h^6 max|Phi^(6)| / (720 x 64) ~ 2e-15 for h = 1/64 (the usual Hermite remainder). Several times quicker
 * than normalCdf (no exp: phi is tabulated too), for the model fits that evaluate it millions of times.
 */
export function normalCdfFast(z: number): number {
  const a = Math.abs(z);
  if (!(a < TABLE_END)) return Number.isNaN(z) ? NaN : z > 0 ? 1 : 0;
  const u = a / TABLE_STEP;
  const k = Math.floor(u);
  const t = u - k;
  const x0 = k * TABLE_STEP;
  const x1 = x0 + TABLE_STEP;
  const f0 = PDF[k];
  const f1 = PDF[k + 1];
  const d0 = TABLE_STEP * f0;
  const d1 = TABLE_STEP * f1;
  const s0 = -TABLE_STEP * TABLE_STEP * x0 * f0;
  const s1 = -TABLE_STEP * TABLE_STEP * x1 * f1;
  const t2 = t * t;
  const t3 = t2 * t;
  const t4 = t3 * t;
  const t5 = t4 * t;
  const v = PHI[k] * (1 - 10 * t3 + 15 * t4 - 6 * t5) + d0 * (t - 6 * t3 + 8 * t4 - 3 * t5)
    + s0 * 0.5 * (t2 - 3 * t3 + 3 * t4 - t5) + PHI[k + 1] * (10 * t3 - 15 * t4 + 6 * t5)
    + d1 * (-4 * t3 + 7 * t4 - 3 * t5) + s1 * 0.5 * (t3 - 2 * t4 + t5);
  return z >= 0 ? v : 1 - v;
}

/** Natural log of the gamma function (Lanczos, g = 7, n = 9; about 15 digits for x > 0). */
function lnGamma(x: number): number {
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313,
    -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6,
    1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - lnGamma(1 - x);
  const z = x - 1;
  let a = c[0];
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Continued fraction of the regularised incomplete beta function (Numerical Recipes `betacf`). */
function betaCf(a: number, b: number, x: number): number {
  const tiny = 1e-300;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  d = Math.abs(d) < tiny ? tiny : d;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 500; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + aa * d;
    d = Math.abs(d) < tiny ? tiny : d;
    c = 1 + aa / c;
    c = Math.abs(c) < tiny ? tiny : c;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + aa * d;
    d = Math.abs(d) < tiny ? tiny : d;
    c = 1 + aa / c;
    c = Math.abs(c) < tiny ? tiny : c;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-15) break;
  }
  return h;
}

/** Regularised incomplete beta I_x(a, b). */
function incompleteBeta(a: number, b: number, x: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const front = Math.exp(lnGamma(a + b) - lnGamma(a) - lnGamma(b) + a * Math.log(x) + b * Math.log(1 - x));
  return x < (a + 1) / (a + b + 2) ? (front * betaCf(a, b, x)) / a : 1 - (front * betaCf(b, a, 1 - x)) / b;
}

/** Student-t cumulative distribution P(T <= t) for `df` degrees of freedom (df may be fractional). */
export function studentTCdf(t: number, df: number): number {
  const tail = 0.5 * incompleteBeta(df / 2, 0.5, df / (df + t * t));
  return t >= 0 ? 1 - tail : tail;
}

/** Student-t quantile: the t with P(T <= t) = p, by bisection on the CDF (p in (0.5, 1)). */
export function studentTQuantile(p: number, df: number): number {
  if (p < 0.5) return -studentTQuantile(1 - p, df);
  if (!Number.isFinite(df)) return normalQuantile(p);
  let lo = 0;
  let hi = 1;
  while (studentTCdf(hi, df) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (studentTCdf(mid, df) < p) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}


/** P(|T| <= t) for Student's t with nu degrees of freedom (Abramowitz & Stegun 26.7.1); the normal law for nu = Infinity. */
export function studentTwoSided(t: number, nu: number): number {
  if (!Number.isFinite(nu)) return erf(Math.abs(t) / Math.SQRT2);
  return 2 * studentTCdf(Math.abs(t), nu) - 1;
}
