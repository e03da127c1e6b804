import { InputError, normalQuantile, studentTQuantile } from '../common/index.ts';

/**
 * Relaxation of the order parameter over time (after flow stops, while washing or drying), fitted by
 * weighted least squares (docs/methods.md §17 "Order over time"):
 *
 *   exponential  S(t) = S_inf + (S_0 - S_inf) exp(-t / tau)
 *   stretched    S(t) = S_inf + (S_0 - S_inf) exp(-(t / tau)^beta),  0 < beta <= 1
 *                (Kohlrausch; Williams & Watts 1970, Trans. Faraday Soc. 66:80),
 *
 * each point weighted by 1 / se^2. For fixed tau (and beta) the model is linear in S_inf and S_0 - S_inf, so
 * those are solved in closed form and only tau (and beta) are searched (variable projection; Golub & Pereyra
 * 1973, SIAM J. Numer. Anal. 10:413). Intervals are profile-likelihood intervals: the values of tau (or beta)
 * whose best chi-square (the other parameters refitted) exceeds the minimum by at most chi^2_1(95 %) = 3.84;
 * when the residual scatter exceeds the points' own standard errors (chi^2_min / nu > 1, nu = n - k), the
 * threshold is scaled by that ratio and Student's t at nu replaces the normal (the Birge ratio; common practice,
 * no source). A bound the data do not reach is infinite (tau) or the model's limit (beta), and the value is then
 * not determined. Models are compared by AIC = chi^2_min + 2k (Akaike 1974, IEEE Trans. Autom. Control 19:716).
 */

export type RelaxationModel = 'exponential' | 'stretched';

export interface RelaxationPoint { tSeconds: number; order: number; se: number }

export interface RelaxationFit {
  model: RelaxationModel;
  /** NaN (null in JSON) when not determined; `curve` keeps the best fit for drawing. */
  tauSeconds: number;
  /** 95 % interval of tau; the high end is Infinity when the series ends before the order has relaxed. */
  tauCi: [number, number];
  /** 1 for the exponential. */
  beta: number;
  /** 95 % interval of beta (stretched only; its high end at most 1). */
  betaCi: [number, number] | null;
  /** Fitted order at t = 0 and long after. */
  orderZero: number;
  orderInfinity: number;
  /** Mean relaxation time (tau / beta) Gamma(1 / beta), s. */
  meanTauSeconds: number;
  chiSquare: number;
  dof: number;
  aic: number;
  /** The best-fit curve's parameters, for drawing it even where some of them are not determined. */
  curve: { tauSeconds: number; beta: number; orderZero: number; orderInfinity: number };
  /**
   * Values the data do not determine (NaN above), with why and what would: tau and beta when their interval
   * reaches a limit the data do not rule out; then the ends the curve reaches only through them (S_inf when tau
   * is open above, S_0 when it is open below) and the mean relaxation time.
   */
  notDetermined?: Partial<Record<'tauSeconds' | 'beta' | 'orderZero' | 'orderInfinity' | 'meanTauSeconds', string>>;
}

/** Least points for a fit: one more than the parameters. */
export const MIN_POINTS: Record<RelaxationModel, number> = { exponential: 4, stretched: 5 };
/** Smallest beta searched: below it the decay is spread over more decades than a series holds. */
export const BETA_MIN = 0.1;
const TAU_GRID = 240;
const LEVEL = 0.95;

interface Weighted { t: Float64Array; y: Float64Array; w: Float64Array }

/** The decay shape g(t) = exp(-(t / tau)^beta), t below 0 taken as 0. */
const decay = (tSeconds: number, tau: number, beta: number) => Math.exp(-Math.pow(Math.max(0, tSeconds) / tau, beta));

/** A fitted relaxation at time t, s: S_inf + (S_0 - S_inf) g(t) (docs/methods.md §17.2). */
export function relaxationAt(c: RelaxationFit['curve'], tSeconds: number): number {
  return c.orderInfinity + (c.orderZero - c.orderInfinity) * decay(tSeconds, c.tauSeconds, c.beta);
}

/** chi^2 of the best S_inf, S_0 - S_inf for the decay shape g(t). */
function linearPart(d: Weighted, tau: number, beta: number): { chi2: number; a: number; b: number } {
  const n = d.t.length;
  let W = 0, G = 0, Y = 0;
  const g = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    g[i] = decay(d.t[i], tau, beta);
    W += d.w[i]; G += d.w[i] * g[i]; Y += d.w[i] * d.y[i];
  }
  const gm = G / W, ym = Y / W;
  let sgg = 0, sgy = 0, syy = 0;
  for (let i = 0; i < n; i++) {
    const dg = g[i] - gm, dy = d.y[i] - ym;
    sgg += d.w[i] * dg * dg; sgy += d.w[i] * dg * dy; syy += d.w[i] * dy * dy;
  }
  if (!(sgg > 1e-300)) return { chi2: syy, a: ym, b: 0 };
  const b = sgy / sgg;
  return { chi2: Math.max(0, syy - b * sgy), a: ym - b * gm, b };
}

/** Minimum of f on [lo, hi] by golden-section search (f unimodal there). */
function golden(f: (x: number) => number, lo: number, hi: number, iterations = 60): { x: number; f: number } {
  const r = (Math.sqrt(5) - 1) / 2;
  let a = lo, b = hi, c = b - r * (b - a), e = a + r * (b - a), fc = f(c), fe = f(e);
  for (let k = 0; k < iterations; k++) {
    if (fc < fe) { b = e; e = c; fe = fc; c = b - r * (b - a); fc = f(c); } else { a = c; c = e; fc = fe; e = a + r * (b - a); fe = f(e); }
  }
  return fc < fe ? { x: c, f: fc } : { x: e, f: fe };
}

/** Minimum over a grid then golden refinement between the grid neighbours of the best node. */
function gridMin(f: (x: number) => number, lo: number, hi: number, nodes: number): { x: number; f: number } {
  let best = 0, bestF = Infinity;
  const xs = Array.from({ length: nodes }, (_, k) => lo + ((hi - lo) * k) / (nodes - 1));
  const fs = xs.map(f);
  fs.forEach((v, k) => { if (v < bestF) { bestF = v; best = k; } });
  const r = golden(f, xs[Math.max(0, best - 1)], xs[Math.min(nodes - 1, best + 1)]);
  return r.f <= bestF ? r : { x: xs[best], f: bestF };
}

/** The tau search range, log seconds: a twentieth of the closest spacing to a thousand times the span. */
function logTauRange(t: Float64Array): [number, number] {
  const s = Array.from(t).sort((a, b) => a - b);
  let step = Infinity;
  for (let i = 1; i < s.length; i++) if (s[i] > s[i - 1]) step = Math.min(step, s[i] - s[i - 1]);
  const span = s[s.length - 1] - Math.min(0, s[0]);
  return [Math.log(step / 20), Math.log(1000 * span)];
}

/**
 * Profile chi^2 at log tau: the linear part's chi^2, minimised over beta for the stretched model. Beta's
 * search is on a grid then golden-refined (the chi^2 is smooth in beta).
 */
function profileAtLogTau(d: Weighted, model: RelaxationModel, logTau: number): { chi2: number; beta: number } {
  const tau = Math.exp(logTau);
  if (model === 'exponential') return { chi2: linearPart(d, tau, 1).chi2, beta: 1 };
  const r = gridMin((beta) => linearPart(d, tau, beta).chi2, BETA_MIN, 1, 19);
  return { chi2: r.f, beta: r.x };
}

/** Where a profile crosses `threshold` walking from x0 towards `limit` (bisection); null if it never does. */
function crossing(f: (x: number) => number, x0: number, limit: number, threshold: number, steps = 200): number | null {
  const h = (limit - x0) / steps;
  let prev = x0;
  for (let k = 1; k <= steps; k++) {
    const x = x0 + h * k;
    if (f(x) > threshold) {
      let lo = prev, hi = x;
      for (let i = 0; i < 50; i++) { const m = (lo + hi) / 2; if (f(m) > threshold) hi = m; else lo = m; }
      return (lo + hi) / 2;
    }
    prev = x;
  }
  return null;
}

/** Lanczos approximation of Gamma(x) for x > 0 (g = 7, n = 9; Press et al., Numerical Recipes, 3rd ed., §6.1). */
export function gamma(x: number): number {
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.PI / (Math.sin(Math.PI * x) * gamma(1 - x));
  const z = x - 1;
  let s = c[0];
  for (let i = 1; i < 9; i++) s += c[i] / (z + i);
  const t = z + 7.5;
  return Math.sqrt(2 * Math.PI) * Math.pow(t, z + 0.5) * Math.exp(-t) * s;
}

/** Fits one model to the points (at least MIN_POINTS[model], each with a positive standard error). */
export function fitRelaxation(points: readonly RelaxationPoint[], model: RelaxationModel): RelaxationFit {
  const usable = points.filter((p) => Number.isFinite(p.tSeconds) && Number.isFinite(p.order) && p.se > 0 && Number.isFinite(p.se));
  if (usable.length < MIN_POINTS[model]) {
    throw new InputError(`a ${model} relaxation fit needs at least ${MIN_POINTS[model]} points with an order and its interval, got ${usable.length}`,
      'Add frames, or use the exponential model (it needs one point fewer)');
  }
  if (new Set(usable.map((p) => p.tSeconds)).size < 3) throw new InputError('the frames hold fewer than three distinct times', 'Give each frame its own time');
  const d: Weighted = {
    t: Float64Array.from(usable, (p) => p.tSeconds), y: Float64Array.from(usable, (p) => p.order), w: Float64Array.from(usable, (p) => 1 / (p.se * p.se)),
  };
  const k = model === 'exponential' ? 3 : 4;
  const [lo, hi] = logTauRange(d.t);
  const profile = (x: number) => profileAtLogTau(d, model, x).chi2;
  const best = gridMin(profile, lo, hi, TAU_GRID);
  const tau = Math.exp(best.x);
  const beta = profileAtLogTau(d, model, best.x).beta;
  const lin = linearPart(d, tau, beta);
  const dof = usable.length - k;
  const ratio = best.f / dof;
  const threshold = best.f + (ratio > 1 ? ratio * studentTQuantile(0.5 + LEVEL / 2, dof) ** 2 : normalQuantile(0.5 + LEVEL / 2) ** 2);
  const tauLow = crossing(profile, best.x, lo, threshold), tauHigh = crossing(profile, best.x, hi, threshold);
  const tauCi: [number, number] = [tauLow === null ? 0 : Math.exp(tauLow), tauHigh === null ? Infinity : Math.exp(tauHigh)];
  const notDetermined: RelaxationFit['notDetermined'] = {};
  if (tauHigh === null) {
    notDetermined.tauSeconds = `the order has not clearly relaxed by the last frame: tau's 95 % interval has no upper end short of ${fmtS(Math.exp(hi))}, a thousand times the series' length; record for longer after the flow stops`;
    notDetermined.orderInfinity = 'the series ends before the order settles (tau not determined), so where it ends up is not seen; record for longer after the flow stops';
  } else if (tauLow === null) {
    notDetermined.tauSeconds = `the order had relaxed before the second frame: tau's 95 % interval reaches down to ${fmtS(Math.exp(lo))}, a twentieth of the closest frame spacing; record faster frames just after the flow stops`;
    notDetermined.orderZero = 'the order had relaxed before the second frame (tau not determined), so its value when the flow stopped is not seen; record faster frames just after the flow stops';
  }
  let betaCi: [number, number] | null = null;
  if (model === 'stretched') {
    const betaProfile = (b: number) => gridMin((x) => linearPart(d, Math.exp(x), b).chi2, lo, hi, 80).f;
    const bl = crossing(betaProfile, beta, BETA_MIN, threshold, 60), bh = crossing(betaProfile, beta, 1, threshold, 60);
    betaCi = [bl ?? BETA_MIN, bh ?? 1];
    if (bl === null) notDetermined.beta = `the decay's stretch is not determined (beta could be below ${BETA_MIN}); more frames over a longer time would determine it`;
  }
  if (notDetermined.tauSeconds || notDetermined.beta) notDetermined.meanTauSeconds = `it needs tau and beta: ${notDetermined.tauSeconds ?? notDetermined.beta}`;
  const curve = { tauSeconds: tau, beta, orderZero: lin.a + lin.b, orderInfinity: lin.a };
  const shown = (key: keyof NonNullable<RelaxationFit['notDetermined']>, v: number) => (notDetermined[key] ? NaN : v);
  return {
    model, tauSeconds: shown('tauSeconds', tau), tauCi, beta: shown('beta', beta), betaCi,
    orderZero: shown('orderZero', curve.orderZero), orderInfinity: shown('orderInfinity', curve.orderInfinity),
    meanTauSeconds: shown('meanTauSeconds', (tau / beta) * gamma(1 / beta)), chiSquare: best.f, dof, aic: best.f + 2 * k, curve,
    ...(Object.keys(notDetermined).length ? { notDetermined } : {}),
  };
}

/**
 * The better model by AIC among those the points allow (the stretched one only from MIN_POINTS.stretched
 * points on), or the one asked for.
 */
export function fitBestRelaxation(points: readonly RelaxationPoint[], model: RelaxationModel | 'auto' = 'auto'): RelaxationFit {
  if (model !== 'auto') return fitRelaxation(points, model);
  const exp = fitRelaxation(points, 'exponential');
  if (points.length < MIN_POINTS.stretched) return exp;
  const str = fitRelaxation(points, 'stretched');
  return str.aic < exp.aic ? str : exp;
}

const fmtS = (s: number) => (s >= 1 ? `${s.toPrecision(3)} s` : `${(s * 1000).toPrecision(3)} ms`);
