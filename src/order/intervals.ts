/**
 * Intervals for order parameters from block sums. Each block of neighbouring pixels is one unit of a
 * cluster sample, and an order parameter is a ratio of sums over units, S = sum y_k / sum w_k. Its
 * variance by linearisation (the ratio estimator of cluster sampling; Cochran 1977, Sampling
 * Techniques, 3rd ed., section 6.11, with the finite-population factor dropped and the n / (n - 1)
 * small-sample factor kept), with residuals e_k = y_k - S w_k:
 *
 *   var(S) = n / (n - 1) * (sum_k e_k^2 + 2 sum_{k~j} e_k e_j) / (sum_k w_k)^2,
 *
 * where k~j runs over pairs of blocks that touch (at an edge or a corner) or are pieces of one block:
 * blocks several correlation lengths across are nearly, not fully, independent, and the pixels either
 * side of a shared edge are correlated (a spatial version of the heteroscedasticity-and-autocorrelation-consistent
 * variance; Conley 1999, J. Econometrics 92:1). The neighbour term never lowers the variance below the
 * independent-blocks value. The interval is S +- t(0.975, dof) sqrt(var(S)), Student's t for the few
 * blocks a narrow bin holds, drawn on the atanh scale (stabilisedInterval), so it always holds the estimate. See
 * docs/methods.md, "Intervals for order parameters".
 */
import type { BlockSums } from './blocks.ts';
import { studentTQuantile as studentQuantile } from '../common/index.ts';

/** An average with its 95 % interval and the number of pixels behind it. */
export interface OrderStat {
  order: number;
  ciLow: number;
  ciHigh: number;
  n: number;
  /** Standard error of `order` (linearised), NaN when fewer than two blocks hold pixels. */
  se: number;
  /** Blocks (pieces of the block grid) behind the interval. */
  blocks: number;
  /** Degrees of freedom of the standard error (Satterthwaite), 0 when it is not defined. */
  dof: number;
}

/** Two-sided level of every interval the tool prints. */
export const INTERVAL_LEVEL = 0.95;

/**
 * S_axis = sum w cos 2(theta - axis) / sum w over the blocks, with its interval, clipped to [-1, 1].
 * (The block sums' wc are already taken relative to the axis.)
 */
export function axisOrderStat(b: BlockSums): OrderStat {
  return ratioStat(b.wc, b.w, b, -1, 1);
}

/**
 * S_2D = |sum w exp(2 i theta)| / sum w with its interval: the linearised variance of the projection of
 * each block's sums on the estimated director (the modulus's own first-order variance). Whether the
 * data fix a director at all is Hotelling's T^2 test of the mean doubled-angle vector against 0 (with
 * the same block residuals, neighbour terms included): T^2 <= 2 (m - 1) / (m - 2) F(0.95; 2, m - 2),
 * m = degrees of freedom + 1 (Hotelling 1931; Mardia & Jupp 2000, Directional Statistics, section 6.3.1
 * for its use on axial data). Where it does not, the lower limit is 0; the upper limit still bounds S_2D.
 */
export function freeOrderStat(b: BlockSums): OrderStat & { directorDetermined: boolean } {
  let c = 0, s = 0, sw = 0;
  for (let k = 0; k < b.w.length; k++) { c += b.wc[k]; s += b.ws[k]; sw += b.w[k]; }
  const r = Math.hypot(c, s);
  const cu = r > 0 ? c / r : 1, su = r > 0 ? s / r : 0;
  const along = new Float64Array(b.w.length), across = new Float64Array(b.w.length);
  for (let k = 0; k < along.length; k++) {
    along[k] = b.wc[k] * cu + b.ws[k] * su;
    across[k] = -b.wc[k] * su + b.ws[k] * cu;
  }
  const design = blockDesign(b.w, b);
  const st = ratioStat(along, b.w, b, 0, 1, design);
  if (!Number.isFinite(st.se) || !(sw > 0)) return { ...st, directorDetermined: false };
  // The across component's estimate is 0 by construction; its spread and its covariance with the along
  // component complete the 2 x 2 covariance (same residual quadratic form and bias factor).
  const { pairs, factor } = design;
  const ea = residuals(along, b.w, b.n, st.order), ex = residuals(across, b.w, b.n, 0);
  const sx2 = quadraticForm(ex, ex, pairs) / factor / (sw * sw), cov = quadraticForm(ea, ex, pairs) / factor / (sw * sw);
  const sa = st.se;
  const det = sa * sa * sx2 - cov * cov;
  const t2 = det > 0 ? (st.order * st.order * sx2) / det : Infinity;
  const m = st.dof + 1;
  const limit = m > 2 ? (2 * (m - 1) / (m - 2)) * fQuantile2(0.5 + INTERVAL_LEVEL / 2, m - 2) : Infinity;
  const determined = t2 > limit && st.ciLow > 0;
  return { ...st, ciLow: determined ? st.ciLow : 0, directorDetermined: determined };
}

/**
 * Upper quantile of Fisher's F with 2 and nu degrees of freedom, in closed form: F = (nu / 2)
 * ((1 - p)^(-2 / nu) - 1) (the F(2, nu) distribution function is 1 - (1 + 2 F / nu)^(-nu / 2)).
 * Here p is the two-sided level's upper point, so with INTERVAL_LEVEL 0.95 the test is at 97.5 %.
 */
export function fQuantile2(p: number, nu: number): number {
  return (nu / 2) * (Math.pow(1 - p, -2 / nu) - 1);
}

/**
 * The interval est +- t se drawn on the scale z = atanh(S) and mapped back: [tanh(z - h), tanh(z + h)] with
 * h = t se / (1 - S^2) (the delta method). An order parameter's spread shrinks as it nears 1 (for small
 * Gaussian director fluctuations of variance sigma^2, S = <cos 2 delta> ~ 1 - 2 sigma^2 and the variance of
 * cos 2 delta is ~ 2 (1 - S)^2), so a rendering that happens to be more ordered than its material also shows
 * less scatter, and an interval symmetric about S undercovers on its low side; on the atanh scale that
 * spread is nearly constant (the same reasoning as Fisher's z for a correlation coefficient; Fisher 1921,
 * Metron 1:3). Near S = 0 the two intervals agree; the mapped one stays inside (-1, 1). See
 * docs/methods.md, "Intervals for order parameters".
 */
export function stabilisedInterval(est: number, se: number, t: number): [number, number] {
  if (!(Math.abs(est) < 1) || !(se > 0)) return [est - t * se, est + t * se];
  const z = Math.atanh(est), h = (t * se) / (1 - est * est);
  return [Math.tanh(z - h), Math.tanh(z + h)];
}

/**
 * Ratio sum y / sum w over the blocks with its linearised variance and Student's t, the interval drawn on
 * the atanh scale (stabilisedInterval) and clipped to [lo, hi].
 */
export function ratioStat(y: ArrayLike<number>, w: ArrayLike<number>, b: Pick<BlockSums, 'n' | 'bx' | 'by'>, lo: number, hi: number, design?: BlockDesign): OrderStat {
  const n = b.n;
  let sy = 0, sw = 0, pixels = 0, units = 0;
  for (let k = 0; k < w.length; k++) {
    if (!(n[k] > 0)) continue;
    sy += y[k]; sw += w[k]; pixels += n[k]; units++;
  }
  if (!(sw > 0)) return { order: NaN, ciLow: NaN, ciHigh: NaN, n: pixels, se: NaN, blocks: units, dof: 0 };
  const est = sy / sw;
  if (units < 2) return { order: est, ciLow: NaN, ciHigh: NaN, n: pixels, se: NaN, blocks: units, dof: 0 };
  const e = residuals(y, w, n, est);
  const { pairs, factor, dof } = design ?? blockDesign(w, b);
  const se = Math.sqrt(quadraticForm(e, e, pairs) / factor) / sw;
  const [ciLow, ciHigh] = stabilisedInterval(est, se, studentQuantile(0.5 + INTERVAL_LEVEL / 2, dof));
  // Clipped to the statistic's range, never past the estimate itself (float rounding can put an S of
  // exactly 1 a hair above 1).
  return { order: est, ciLow: Math.min(est, Math.max(lo, ciLow)), ciHigh: Math.max(est, Math.min(hi, ciHigh)), n: pixels, se, blocks: units, dof };
}

/** What the variance of every ratio over the same blocks and weights shares: the neighbour pairs, bias factor and dof. */
interface BlockDesign { pairs: BlockPairs; factor: number; dof: number }

function blockDesign(w: ArrayLike<number>, b: Pick<BlockSums, 'n' | 'bx' | 'by'>): BlockDesign {
  const pairs = neighbourPairs(b);
  return { pairs, ...varianceCorrection(w, b.n, pairs) };
}

/** Linearised residuals y_k - est w_k of the live blocks (0 elsewhere). */
function residuals(y: ArrayLike<number>, w: ArrayLike<number>, n: ArrayLike<number>, est: number): Float64Array {
  const e = new Float64Array(w.length);
  for (let k = 0; k < w.length; k++) if (n[k] > 0) e[k] = y[k] - est * w[k];
  return e;
}

/** Offsets (dx, dy) to the blocks after a block within Chebyshev distance `m` (each pair once). */
function neighbourOffsets(m: number): [number, number][] {
  const out: [number, number][] = [];
  for (let dy = 0; dy <= m; dy++) for (let dx = -m; dx <= m; dx++) if (dy > 0 || dx > 0) out.push([dx, dy]);
  return out;
}
const NEIGHBOURS = neighbourOffsets(1);

/** Pairs of live blocks (each pair once, as two parallel index arrays). */
export interface BlockPairs { a: Int32Array; b: Int32Array }

/**
 * Pairs of live blocks whose residuals are taken as correlated: pieces of one block, and blocks that
 * touch at an edge or a corner.
 */
export function neighbourPairs(b: Pick<BlockSums, 'n' | 'bx' | 'by'>): BlockPairs {
  const m = b.n.length;
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let k = 0; k < m; k++) {
    if (!(b.n[k] > 0)) continue;
    x0 = Math.min(x0, b.bx[k]); x1 = Math.max(x1, b.bx[k]); y0 = Math.min(y0, b.by[k]); y1 = Math.max(y1, b.by[k]);
  }
  if (!(x1 >= x0)) return { a: new Int32Array(0), b: new Int32Array(0) };
  // The live blocks of each grid cell as a list in increasing index (head per cell, next per block), on a grid
  // with a margin of one cell so that every neighbour's cell exists.
  const gw = x1 - x0 + 3, cell = (k: number) => (b.by[k] - y0 + 1) * gw + (b.bx[k] - x0 + 1);
  const head = new Int32Array(gw * (y1 - y0 + 3)).fill(-1), next = new Int32Array(m).fill(-1);
  for (let k = m - 1; k >= 0; k--) {
    if (!(b.n[k] > 0)) continue;
    const c = cell(k);
    next[k] = head[c]; head[c] = k;
  }
  const offsets = NEIGHBOURS.map(([dx, dy]) => dy * gw + dx);
  // Pieces of the same block with a later index, then the neighbours right, below-left, below and
  // below-right; counted first, then written.
  const visit = (emit: (k: number, j: number) => void) => {
    for (let k = 0; k < m; k++) {
      if (!(b.n[k] > 0)) continue;
      const c = cell(k);
      for (let j = next[k]; j >= 0; j = next[j]) emit(k, j);
      for (const o of offsets) for (let j = head[c + o]; j >= 0; j = next[j]) emit(k, j);
    }
  };
  let count = 0;
  visit(() => { count++; });
  const pa = new Int32Array(count), pb = new Int32Array(count);
  let i = 0;
  visit((k, j) => { pa[i] = k; pb[i] = j; i++; });
  return { a: pa, b: pb };
}

/**
 * e' A f with A = 1 on the diagonal and on both orders of every pair (symmetrised for e != f), never
 * below the diagonal part sum e f when e = f: the neighbour terms only ever add variance.
 */
function quadraticForm(e: Float64Array, f: Float64Array, pairs: BlockPairs): number {
  let diag = 0, cross = 0;
  for (let k = 0; k < e.length; k++) diag += e[k] * f[k];
  for (let i = 0; i < pairs.a.length; i++) {
    const k = pairs.a[i], j = pairs.b[i];
    cross += e[k] * f[j] + e[j] * f[k];
  }
  return e === f ? Math.max(diag, diag + cross) : diag + cross;
}

/**
 * Bias factor and degrees of freedom of the neighbour-pair variance estimator V = e' A e (A = 1 on the
 * diagonal and on neighbour pairs; e = M y the residuals, M = I - w 1' / sum w). Under a working model
 * of independent blocks with var y_k = v_k (v_k = w_k^2 / n_k: pixels of equal variance and weight),
 * E[V] = tr(A P) with P = M diag(v) M', while the ratio's numerator has variance sum v. The factor
 * tr(A P) / sum v is below 1 (residuals about an estimated mean are smaller than the errors, and their
 * neighbour products are negative on average) and V / factor undoes that bias: the small-sample
 * correction of Bell & McCaffrey (2002, Survey Methodology 28:169) for a quadratic-form variance, here
 * with a scalar factor. Degrees of freedom by Satterthwaite's approximation under the same model
 * (Satterthwaite 1946, Biometrics Bulletin 2:110): nu = tr(A P)^2 / tr((A P)^2). P is diag(v) plus two
 * rank-one terms, so both traces take a few passes over the pairs. See docs/methods.md, "Intervals for
 * order parameters".
 */
export function varianceCorrection(w: ArrayLike<number>, n: ArrayLike<number>, pairs: BlockPairs): { factor: number; dof: number } {
  const m = w.length;
  const v = new Float64Array(m), wl = new Float64Array(m);
  let V = 0, W = 0;
  for (let k = 0; k < m; k++) if (n[k] > 0 && w[k] > 0) { wl[k] = w[k]; v[k] = (w[k] * w[k]) / n[k]; V += v[k]; W += w[k]; }
  if (!(V > 0) || !(W > 0)) return { factor: 1, dof: 1 };
  const mulA = (x: Float64Array) => {
    const out = Float64Array.from(x);
    for (let i = 0; i < pairs.a.length; i++) { const k = pairs.a[i], j = pairs.b[i]; out[k] += x[j]; out[j] += x[k]; }
    return out;
  };
  const dot = (x: Float64Array, z: Float64Array) => { let s = 0; for (let k = 0; k < m; k++) s += x[k] * z[k]; return s; };
  // P = diag(v) + w p' + v q' with p = -v / W + V w / W^2 and q = -w / W.
  const p = new Float64Array(m), q = new Float64Array(m);
  for (let k = 0; k < m; k++) { p[k] = -v[k] / W + (V * wl[k]) / (W * W); q[k] = -wl[k] / W; }
  const as = [mulA(wl), mulA(v)], bs = [p, q];
  // tr(A P) = sum v + sum_r b_r' (A a_r).
  const trAP = V + dot(as[0], bs[0]) + dot(as[1], bs[1]);
  // tr((A P)^2) with A P = A D + sum_r (A a_r) b_r': tr(A D A D) = sum v^2 + 2 sum_pairs v_k v_j, plus
  // 2 sum_r b_r' A (v o A a_r), plus sum_{r,s} (b_r' A a_s)(b_s' A a_r).
  let tr2 = 0;
  for (let k = 0; k < m; k++) tr2 += v[k] * v[k];
  for (let i = 0; i < pairs.a.length; i++) tr2 += 2 * v[pairs.a[i]] * v[pairs.b[i]];
  for (let r = 0; r < 2; r++) {
    const va = new Float64Array(m);
    for (let k = 0; k < m; k++) va[k] = v[k] * as[r][k];
    tr2 += 2 * dot(bs[r], mulA(va));
    for (let s = 0; s < 2; s++) tr2 += dot(bs[r], as[s]) * dot(bs[s], as[r]);
  }
  const factor = trAP / V;
  return { factor: factor > 0 ? factor : 1, dof: tr2 > 0 ? Math.max(1, (trAP * trAP) / tr2) : 1 };
}

/**
 * Interval for a ratio a / b of two independent estimates with standard errors (Fieller 1954, J. R.
 * Stat. Soc. B 16:175): the values R with (a - R b)^2 <= t^2 (se_a^2 + R^2 se_b^2). Bounded only when b
 * is clearly away from 0 (b^2 > t^2 se_b^2); otherwise null: the ratio is not determined.
 */
export function fiellerInterval(a: number, seA: number, b: number, seB: number, df: number): [number, number] | null {
  if (![a, seA, b, seB].every(Number.isFinite) || df < 1) return null;
  const t = studentQuantile(0.5 + INTERVAL_LEVEL / 2, df);
  const t2 = t * t;
  const qa = b * b - t2 * seB * seB;
  if (!(qa > 0)) return null;
  const qb = -2 * a * b, qc = a * a - t2 * seA * seA;
  const disc = qb * qb - 4 * qa * qc;
  const root = Math.sqrt(Math.max(0, disc));
  return [(-qb - root) / (2 * qa), (-qb + root) / (2 * qa)];
}
