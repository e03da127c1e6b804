/**
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
