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
 * independent-blocks value. The interval is S +- t(0.975, n - 1) sqrt(var(S)), Student's t for the few
 * blocks a narrow bin holds; it is centred on the estimate, so the estimate always lies inside it. See
 * docs/methods.md, "Intervals for order parameters".
 */
import type { BlockSums } from './blocks.ts';
import { studentTQuantile as studentQuantile } from '../common/distributions.ts';

/** An average with its 95 % interval and the number of pixels behind it. */
export interface OrderStat {
  order: number;
  ciLow: number;
  ciHigh: number;
  n: number;
  /** Standard error of `order` (linearised), NaN when fewer than two blocks hold pixels. */
  se: number;
  /** Blocks (independent units) behind the interval. */
  blocks: number;
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
  const st = ratioStat(along, b.w, b, 0, 1);
  if (!Number.isFinite(st.se) || !(sw > 0)) return { ...st, directorDetermined: false };
  // The across component's estimate is 0 by construction; its spread completes the 2 x 2 covariance.
  const sa = st.se, sx = ratioStat(across, b.w, b, -1, 1).se, cov = crossCovariance(along, across, b.w, b, st.order) ;
  const det = sa * sa * sx * sx - cov * cov;
  const t2 = det > 0 ? (st.order * st.order * sx * sx) / det : Infinity;
  const m = degreesOfFreedom(st.blocks) + 1;
  const limit = m > 2 ? (2 * (m - 1) / (m - 2)) * fQuantile2(0.5 + INTERVAL_LEVEL / 2, m - 2) : Infinity;
  const determined = t2 > limit && st.ciLow > 0;
  return { ...st, ciLow: determined ? st.ciLow : 0, directorDetermined: determined };
}

/** Linearised covariance of the two projected ratios (same estimator as ratioStat's variance). */
function crossCovariance(a: Float64Array, x: Float64Array, w: ArrayLike<number>, b: Pick<BlockSums, 'n' | 'bx' | 'by'>, estA: number): number {
  let sw = 0, units = 0, sxw = 0;
  for (let k = 0; k < w.length; k++) if (b.n[k] > 0) { sw += w[k]; sxw += x[k]; units++; }
  if (units < 2 || !(sw > 0)) return 0;
  const estX = sxw / sw;
  const ea = new Float64Array(w.length), ex = new Float64Array(w.length);
  let s = 0;
  for (let k = 0; k < w.length; k++) if (b.n[k] > 0) { ea[k] = a[k] - estA * w[k]; ex[k] = x[k] - estX * w[k]; s += ea[k] * ex[k]; }
  const cross = 0.5 * (neighbourCrossOf(ea, ex, b) + neighbourCrossOf(ex, ea, b));
  return ((units / (units - 1)) * (s + 2 * cross)) / (sw * sw);
}

/**
 * Upper quantile of Fisher's F with 2 and nu degrees of freedom, in closed form: F = (nu / 2)
 * ((1 - p)^(-2 / nu) - 1) (the F(2, nu) distribution function is 1 - (1 + 2 F / nu)^(-nu / 2)).
 * Here p is the two-sided level's upper point, so with INTERVAL_LEVEL 0.95 the test is at 97.5 %.
 */
export function fQuantile2(p: number, nu: number): number {
  return (nu / 2) * (Math.pow(1 - p, -2 / nu) - 1);
}

/** Ratio sum y / sum w over the blocks with its linearised variance and Student's t, clipped to [lo, hi]. */
export function ratioStat(y: ArrayLike<number>, w: ArrayLike<number>, b: Pick<BlockSums, 'n' | 'bx' | 'by'>, lo: number, hi: number): OrderStat {
  const n = b.n;
  let sy = 0, sw = 0, pixels = 0, units = 0;
  for (let k = 0; k < w.length; k++) {
    if (!(n[k] > 0)) continue;
    sy += y[k]; sw += w[k]; pixels += n[k]; units++;
  }
  if (!(sw > 0)) return { order: NaN, ciLow: NaN, ciHigh: NaN, n: pixels, se: NaN, blocks: units };
  const est = sy / sw;
  if (units < 2) return { order: est, ciLow: NaN, ciHigh: NaN, n: pixels, se: NaN, blocks: units };
  const e = new Float64Array(w.length);
  let ss = 0;
  for (let k = 0; k < w.length; k++) if (n[k] > 0) { e[k] = y[k] - est * w[k]; ss += e[k] * e[k]; }
  const cross = neighbourCross(e, b);
  const se = Math.sqrt((units / (units - 1)) * Math.max(ss, ss + 2 * cross)) / sw;
  const half = studentQuantile(0.5 + INTERVAL_LEVEL / 2, degreesOfFreedom(units)) * se;
  // Clipped to the statistic's range, never past the estimate itself (float rounding can put an S of
  // exactly 1 a hair above 1).
  return { order: est, ciLow: Math.min(est, Math.max(lo, est - half)), ciHigh: Math.max(est, Math.min(hi, est + half)), n: pixels, se, blocks: units };
}

/** Offsets (dx, dy) to the blocks after a block within Chebyshev distance `m` (each pair once). */
function neighbourOffsets(m: number): [number, number][] {
  const out: [number, number][] = [];
  for (let dy = 0; dy <= m; dy++) for (let dx = -m; dx <= m; dx++) if (dy > 0 || dx > 0) out.push([dx, dy]);
  return out;
}
const NEIGHBOURS = neighbourOffsets(1);

/**
 * Degrees of freedom for Student's t with `units` blocks: half of units - 1 (at least 1). The neighbour
 * terms make the variance estimate less steady than that of independent blocks; halving the degrees of
 * freedom is our allowance for it, set by the coverage tests (tests/order/coverage.test.ts), not taken
 * from a published rule.
 */
export function degreesOfFreedom(units: number): number {
  return Math.max(1, Math.floor((units - 1) / 2));
}

/** Sum of e_k e_j over pairs of blocks that touch (edge or corner) or are pieces of one block (each pair once). */
function neighbourCross(e: Float64Array, b: Pick<BlockSums, 'n' | 'bx' | 'by'>): number {
  return neighbourCrossOf(e, e, b);
}

/** Sum of e_k f_j over the same pairs (k before j). */
function neighbourCrossOf(e: Float64Array, f: Float64Array, b: Pick<BlockSums, 'n' | 'bx' | 'by'>): number {
  const at = new Map<number, number[]>();
  const key = (x: number, y: number) => y * 1_000_003 + x;
  for (let k = 0; k < e.length; k++) {
    if (!(b.n[k] > 0)) continue;
    const kk = key(b.bx[k], b.by[k]);
    const list = at.get(kk);
    if (list) list.push(k); else at.set(kk, [k]);
  }
  let cross = 0;
  for (let k = 0; k < e.length; k++) {
    if (!(b.n[k] > 0)) continue;
    const x = b.bx[k], y = b.by[k];
    // Pieces of the same block with a later index, then the neighbours right, below-left, below and
    // below-right (each pair once).
    for (const j of at.get(key(x, y)) ?? []) if (j > k) cross += e[k] * f[j];
    for (const [dx, dy] of NEIGHBOURS) for (const j of at.get(key(x + dx, y + dy)) ?? []) cross += e[k] * f[j];
  }
  return cross;
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
