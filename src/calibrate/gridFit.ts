/**
 * Straight-line fit of tick position against tick index when the ticks are measured with unequal
 * precision (docs/methods.md, "Micrometer calibration"). Each tick's position has a measurement
 * variance a_m (from the scatter of its own points) plus a variance tau^2 common to all ticks (the
 * graticule's line placement, anything the points do not show). tau^2 is the Paule-Mandel estimate
 * (Paule & Mandel 1982, J. Res. Natl. Bur. Stand. 87:377): the value at which the weighted residual
 * sum Q = sum w_m r_m^2 with w_m = 1 / (a_m + tau^2) equals its expectation n - 2 (0 when Q already
 * falls below it at tau^2 = 0). The slope's standard error is sqrt(Q / (n - 2) / S_mm), S_mm = sum
 * w_m (m - mean_w m)^2, with n - 2 degrees of freedom; with equal a_m this is ordinary least squares.
 */

export interface WeightedPoint {
  m: number;
  c: number;
  /** Measurement variance of c. */
  a: number;
}

export interface WeightedLine {
  p: number;
  c0: number;
  se: number;
  /** Weighted residual sum at the weights used. */
  q: number;
  tau2: number;
  weights: number[];
}

/** Weighted least squares c = p m + c0 with weights w. */
export function weightedLine(pts: { m: number; c: number }[], w: number[]): { p: number; c0: number; q: number; smm: number } {
  let sw = 0, sm = 0, sc = 0;
  pts.forEach((e, i) => { sw += w[i]; sm += w[i] * e.m; sc += w[i] * e.c; });
  const mb = sm / sw, cb = sc / sw;
  let smm = 0, smc = 0;
  pts.forEach((e, i) => { smm += w[i] * (e.m - mb) ** 2; smc += w[i] * (e.m - mb) * (e.c - cb); });
  const p = smc / smm;
  const c0 = cb - p * mb;
  let q = 0;
  pts.forEach((e, i) => { q += w[i] * (e.c - c0 - p * e.m) ** 2; });
  return { p, c0, q, smm };
}

/** The line with the Paule-Mandel tau^2 (see the file's description); at least 3 points. */
export function pauleMandelLine(pts: WeightedPoint[]): WeightedLine {
  const n = pts.length;
  const target = n - 2;
  const fitAt = (tau2: number) => {
    const w = pts.map((e) => 1 / Math.max(1e-300, e.a + tau2));
    return { ...weightedLine(pts, w), w };
  };
  let tau2 = 0;
  let f = fitAt(0);
  if (!(f.q <= target)) {
    // Q(tau^2) falls as tau^2 grows: bracket, then bisect.
    const ols = weightedLine(pts, pts.map(() => 1));
    let hi = Math.max(1e-30, ols.q / Math.max(1, target));
    while (fitAt(hi).q > target) hi *= 4;
    let lo = 0;
    for (let i = 0; i < 100 && hi - lo > 1e-12 * hi; i++) {
      const mid = 0.5 * (lo + hi);
      if (fitAt(mid).q > target) lo = mid;
      else hi = mid;
    }
    tau2 = hi;
    f = fitAt(tau2);
  }
  return { p: f.p, c0: f.c0, se: Math.sqrt(f.q / Math.max(1, target) / f.smm), q: f.q, tau2, weights: f.w };
}
