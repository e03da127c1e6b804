/**
 * Intervals for order parameters from block sums. Each block of neighbouring pixels is one unit of a
 * cluster sample, and an order parameter is a ratio of sums over units, S = sum y_k / sum w_k. Its
 * variance by linearisation (the ratio estimator of cluster sampling; Cochran 1977, Sampling
 * Techniques, 3rd ed., section 6.11, finite-population factor dropped), with residuals e_k = y_k - S w_k:
 *
 *   var(S) = e'e / (factor (sum_k w_k)^2),
 *
 * where the factor (workingModel) undoes the bias of e'e under a working covariance of the block sums in which
 * neighbouring blocks (sharing an edge, touching at a corner, or one block apart: PAIR_CLASSES) are correlated:
 * blocks a correlation length or two across are nearly, not fully, independent. That correlation is estimated once
 * from many blocks (blockCorrelation: every bin of a profile), not from each interval's own few cross products, whose
 * noise gave a narrow bin 1-2 degrees of freedom. Where a region is the union of strata (a profile's band, each block
 * in the bin of its centre), the residuals are taken about each stratum's own ratio, e_k = y_k - S_h w_k, so that the
 * order's change across the band is not counted as noise (the variance of a stratified sample; Cochran 1977, section
 * 5A). The interval is S +- t(0.975, dof) sqrt(var(S)), Student's t at the Satterthwaite dof of e'e under the same
 * model (fewer where the correlation's own jackknife spread says so: blockDesign), drawn on the atanh scale
 * (stabilisedInterval), so it always holds the estimate. See docs/methods.md, "Intervals for order parameters".
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
 * (The block sums' wc are already taken relative to the axis.) `correlation`: the block errors' correlation
 * estimated over more blocks (blockCorrelation over a profile's bins); by default from these blocks' own wc.
 */
export function axisOrderStat(b: BlockSums, correlation?: BlockCorrelation): OrderStat {
  return ratioStat(b.wc, b.w, b, -1, 1, blockDesign(b.w, b, correlation ?? blockCorrelation([{ ys: [b.wc], b }])));
}

/**
 * S_2D = |sum w exp(2 i theta)| / sum w with its interval: the linearised variance of the projection of
 * each block's sums on the estimated director (the modulus's own first-order variance). Whether the
 * data fix a director at all is Hotelling's T^2 test of the mean doubled-angle vector against 0 (with
 * the same block residuals and bias factor): T^2 <= 2 (m - 1) / (m - 2) F(0.95; 2, m - 2),
 * m = degrees of freedom + 1 (Hotelling 1931; Mardia & Jupp 2000, Directional Statistics, section 6.3.1
 * for its use on axial data). Where it does not, the lower limit is 0; the upper limit still bounds S_2D.
 */
export function freeOrderStat(b: BlockSums, correlation?: BlockCorrelation): OrderStat & { directorDetermined: boolean } {
  let c = 0, s = 0, sw = 0;
  for (let k = 0; k < b.w.length; k++) { c += b.wc[k]; s += b.ws[k]; sw += b.w[k]; }
  const r = Math.hypot(c, s);
  const cu = r > 0 ? c / r : 1, su = r > 0 ? s / r : 0;
  const along = new Float64Array(b.w.length), across = new Float64Array(b.w.length);
  for (let k = 0; k < along.length; k++) {
    along[k] = b.wc[k] * cu + b.ws[k] * su;
    across[k] = -b.wc[k] * su + b.ws[k] * cu;
  }
  const design = blockDesign(b.w, b, correlation ?? blockCorrelation([{ ys: [along], b }]));
  const st = ratioStat(along, b.w, b, 0, 1, design);
  if (!Number.isFinite(st.se) || !(sw > 0)) return { ...st, directorDetermined: false };
  // The across component's estimate is 0 by construction; its spread and its covariance with the along
  // component complete the 2 x 2 covariance (same residual quadratic form and bias factor).
  const { factor } = design;
  const ea = residuals(along, b.w, b.n, b.strata), ex = residuals(across, b.w, b.n, b.strata);
  const sx2 = dotOf(ex, ex) / factor / (sw * sw), cov = dotOf(ea, ex) / factor / (sw * sw);
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
export function ratioStat(y: ArrayLike<number>, w: ArrayLike<number>, b: Pick<BlockSums, 'n' | 'bx' | 'by' | 'strata'>, lo: number, hi: number, design?: BlockDesign): OrderStat {
  const n = b.n;
  let sy = 0, sw = 0, pixels = 0, units = 0;
  for (let k = 0; k < w.length; k++) {
    if (!(n[k] > 0)) continue;
    sy += y[k]; sw += w[k]; pixels += n[k]; units++;
  }
  if (!(sw > 0)) return { order: NaN, ciLow: NaN, ciHigh: NaN, n: pixels, se: NaN, blocks: units, dof: 0 };
  const est = sy / sw;
  if (units < 2) return { order: est, ciLow: NaN, ciHigh: NaN, n: pixels, se: NaN, blocks: units, dof: 0 };
  const e = residuals(y, w, n, b.strata);
  const { factor, dof } = design ?? blockDesign(w, b, blockCorrelation([{ ys: [y], b: { w, n, bx: b.bx, by: b.by, strata: b.strata } }]));
  const se = Math.sqrt(dotOf(e, e) / factor) / sw;
  const [ciLow, ciHigh] = stabilisedInterval(est, se, studentQuantile(0.5 + INTERVAL_LEVEL / 2, dof));
  // Clipped to the statistic's range, never past the estimate itself (float rounding can put an S of
  // exactly 1 a hair above 1).
  return { order: est, ciLow: Math.min(est, Math.max(lo, ciLow)), ciHigh: Math.max(est, Math.min(hi, ciHigh)), n: pixels, se, blocks: units, dof };
}

/** What the variance of every ratio over the same blocks and weights shares: the bias factor and the dof. */
interface BlockDesign { factor: number; dof: number }

/**
 * Bias factor and dof of one group's variance under the pooled correlation (workingModel); when the correlation came
 * from several groups, its own error enters the dof: var(log var S) = 2 / dof + var(log factor), the second term by
 * the jackknife over those groups (Efron & Stein 1981, Ann. Stat. 9:586), dof' = 2 / (2 / dof + var(log factor)).
 */
function blockDesign(w: ArrayLike<number>, b: Pick<BlockSums, 'n' | 'bx' | 'by' | 'strata'>, rho: BlockCorrelation): BlockDesign {
  const design = weightedDesignOf(b, w);
  const { factor, dof } = design.single ? singleModel(design.single(), rho) : workingModel(w, b.n, design.pairs, rho, b.strata, true, design.sums());
  const loo = rho.leaveOneOut;
  if (!loo || loo.length < 3) return { factor, dof };
  // Jackknife variance (G - 1) / G sum (x_(i) - mean)^2 of x = log factor.
  const sums = design.sums();
  const logs = loo.map((r) => Math.log(factorOf(sums, r)));
  const mean = logs.reduce((a, x) => a + x, 0) / logs.length;
  const varLog = ((logs.length - 1) / logs.length) * logs.reduce((a, x) => a + (x - mean) ** 2, 0);
  return { factor, dof: Math.max(1, 2 / (2 / dof + varLog)) };
}

/** sum_k x_k z_k. */
function dotOf(x: Float64Array, z: Float64Array): number {
  let s = 0;
  for (let k = 0; k < x.length; k++) s += x[k] * z[k];
  return s;
}

/** Stratum of each block (all 0 without strata) and the number of strata. */
function strataOf(m: number, strata: ArrayLike<number> | undefined): { h: Int32Array; count: number } {
  const h = new Int32Array(m);
  let count = 1;
  if (strata) for (let k = 0; k < m; k++) { h[k] = strata[k]; count = Math.max(count, strata[k] + 1); }
  return { h, count };
}

/**
 * Linearised residuals y_k - S_h w_k of the live blocks (0 elsewhere), S_h = sum y / sum w over the blocks of
 * the block's stratum (one stratum, the whole group, without `strata`).
 */
function residuals(y: ArrayLike<number>, w: ArrayLike<number>, n: ArrayLike<number>, strata?: ArrayLike<number>): Float64Array {
  const { h, count } = strataOf(w.length, strata);
  const sy = new Float64Array(count), sw = new Float64Array(count);
  for (let k = 0; k < w.length; k++) if (n[k] > 0) { sy[h[k]] += y[k]; sw[h[k]] += w[k]; }
  const e = new Float64Array(w.length);
  for (let k = 0; k < w.length; k++) if (n[k] > 0) e[k] = y[k] - (sw[h[k]] > 0 ? sy[h[k]] / sw[h[k]] : 0) * w[k];
  return e;
}

/**
 * Correlation of two blocks' errors (each block sum's error scaled by sqrt(v_k), v_k = w_k^2 / n_k) by the pair's
 * class (PAIR_CLASSES): `rho[c - 1]` for class c; 0 beyond the classes.
 */
export interface BlockCorrelation {
  rho: readonly number[];
  /** The same estimate with each group left out in turn (jackknife), when it came from three or more groups. */
  leaveOneOut?: (readonly number[])[];
}

/**
 * Classes of block pairs taken as correlated, by where the two blocks lie on the block grid: 1, sharing an edge (or
 * pieces of one block, as when a bin's edge cuts a block: they share the cut); 2, touching at a corner only; 3, one
 * block between (Chebyshev distance 2). A corner pair shares far fewer nearby pixels than an edge pair, so their
 * correlations differ: one value for both overstated the variance of wide regions, whose blocks have as many corner
 * as edge neighbours, where thin bins (from which the value is estimated) have few.
 */
export const PAIR_CLASSES = 3;
const pairClass = (dx: number, dy: number): number => {
  const ax = Math.abs(dx), ay = Math.abs(dy);
  return Math.max(ax, ay) === 2 ? 3 : ax + ay === 2 ? 2 : 1;
};

/**
 * What a group's blocks give whatever the statistic (its pairs; with its weights, the correlation's moment matrix
 * and the bias factor's parts), found once per group: a profile's bins serve their correlation and their variance,
 * and a region's S_2D and S_axis share their blocks. Keyed by the block counts' array, checked against the weights'.
 */
const designCache = new WeakMap<object, { pairs: LaggedPairs; w?: ArrayLike<number>; strata?: ArrayLike<number>; moments?: number[][]; sums?: FactorSums; single?: ClassSums }>();
function designOf(b: Pick<BlockSums, 'n' | 'bx' | 'by'>) {
  let d = designCache.get(b.n);
  if (!d) { d = { pairs: laggedPairs(b) }; designCache.set(b.n, d); }
  return d;
}
/** The group's moment matrix (groupMoments) and bias factor parts (factorSums) for weights `w`, kept for the next statistic. */
function weightedDesignOf(b: Pick<BlockSums, 'n' | 'bx' | 'by' | 'strata'>, w: ArrayLike<number>) {
  const d = designOf(b);
  if (d.w !== w || d.strata !== b.strata) { d.w = w; d.strata = b.strata; d.moments = undefined; d.sums = undefined; d.single = undefined; }
  // One stratum: everything from one pass over the pairs (classSums).
  const single = () => (d.single ??= classSums(w, b.n, d.pairs));
  return {
    pairs: d.pairs,
    single: b.strata ? undefined : single,
    moments: () => (d.moments ??= b.strata ? groupMoments(w, b.n, d.pairs, b.strata).c : singleMoments(single())),
    sums: () => (d.sums ??= b.strata ? factorSums(w, b.n, d.pairs, b.strata) : singleFactorSums(single())),
  };
}

/** Pairs of live blocks within Chebyshev distance 2 (each pair once), with their class (pairClass). */
export interface LaggedPairs { a: Int32Array; b: Int32Array; lag: Uint8Array }

export function laggedPairs(b: Pick<BlockSums, 'n' | 'bx' | 'by'>): LaggedPairs {
  const m = b.n.length;
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let k = 0; k < m; k++) {
    if (!(b.n[k] > 0)) continue;
    x0 = Math.min(x0, b.bx[k]); x1 = Math.max(x1, b.bx[k]); y0 = Math.min(y0, b.by[k]); y1 = Math.max(y1, b.by[k]);
  }
  if (!(x1 >= x0)) return { a: new Int32Array(0), b: new Int32Array(0), lag: new Uint8Array(0) };
  // The live blocks of each grid cell as a list in increasing index (head per cell, next per block), on a grid with a
  // margin of two cells so that every neighbour's cell exists.
  const gw = x1 - x0 + 5, cell = (k: number) => (b.by[k] - y0 + 2) * gw + (b.bx[k] - x0 + 2);
  const head = new Int32Array(gw * (y1 - y0 + 5)).fill(-1), next = new Int32Array(m).fill(-1);
  for (let k = m - 1; k >= 0; k--) {
    if (!(b.n[k] > 0)) continue;
    const c = cell(k);
    next[k] = head[c]; head[c] = k;
  }
  const offsets = new Int32Array(25), classes = new Uint8Array(25);
  let no = 0;
  for (let dy = -2; dy <= 2; dy++) for (let dx = -2; dx <= 2; dx++) { offsets[no] = dy * gw + dx; classes[no] = pairClass(dx, dy); no++; }
  // Each pair once (j > k), into arrays that grow as needed.
  let cap = 13 * m + 16, count = 0;
  let pa = new Int32Array(cap), pb = new Int32Array(cap), lag = new Uint8Array(cap);
  for (let k = 0; k < m; k++) {
    if (!(b.n[k] > 0)) continue;
    const c = cell(k);
    for (let o = 0; o < no; o++) for (let j = head[c + offsets[o]]; j >= 0; j = next[j]) {
      if (j <= k) continue;
      if (count === cap) {
        cap *= 2;
        const na = new Int32Array(cap), nb = new Int32Array(cap), nl = new Uint8Array(cap);
        na.set(pa); nb.set(pb); nl.set(lag); pa = na; pb = nb; lag = nl;
      }
      pa[count] = k; pb[count] = j; lag[count] = classes[o]; count++;
    }
  }
  pa = pa.slice(0, count); pb = pb.slice(0, count); lag = lag.slice(0, count);
  return { a: pa, b: pb, lag };
}

/**
 * The moments of one group's residuals under the working covariance cov(y) = sum_L theta_L S_L, S_0 = diag(v)
 * (v_k = w_k^2 / n_k: pixels of equal variance and weight) and S_L = sqrt(v_k v_j) on the pairs of class L
 * (PAIR_CLASSES). With residuals e = M y, M = I - sum_h w_h 1_h' / W_h (per stratum h; one without `strata`),
 * E[e' B_a e] = sum_b theta_b c[a][b] with B_0 = I, B_L the pairs' adjacency, and
 * c[a][b] = tr(B_a M S_b M') = tr(B_a S_b) - 2 sum_h (B_a w_h)'(S_b 1_h) / W_h
 *           + sum_{h,g} (w_g' B_a w_h)(1_h' S_b 1_g) / (W_h W_g).
 */
function groupMoments(w: ArrayLike<number>, n: ArrayLike<number>, pairs: LaggedPairs, strata?: ArrayLike<number>) {
  const m = w.length;
  const { h: hOf, count: H } = strataOf(m, strata);
  const v = new Float64Array(m), Wh = new Float64Array(H);
  for (let k = 0; k < m; k++) if (n[k] > 0 && w[k] > 0) { v[k] = (w[k] * w[k]) / n[k]; Wh[hOf[k]] += w[k]; }
  const d = PAIR_CLASSES + 1;
  const c = Array.from({ length: d }, () => new Array<number>(d).fill(0));
  // tr(B_a S_b) is sum v for a = b = 0, 2 sum sqrt(v_k v_j) over the class-L pairs for a = b = L, else 0.
  const q = new Float64Array(pairs.a.length);
  for (let k = 0; k < m; k++) c[0][0] += v[k];
  for (let i = 0; i < pairs.a.length; i++) { q[i] = Math.sqrt(v[pairs.a[i]] * v[pairs.b[i]]); c[pairs.lag[i]][pairs.lag[i]] += 2 * q[i]; }
  // Per stratum h: B_a w_h and S_b 1_h for every class in one pass over the pairs, and their sums over each stratum g
  // (R_a[g][h] = w_g' B_a w_h, T_b[g][h] = 1_g' S_b 1_h).
  const R = Array.from({ length: d }, () => Array.from({ length: H }, () => new Float64Array(H)));
  const T = Array.from({ length: d }, () => Array.from({ length: H }, () => new Float64Array(H)));
  const Bw = Array.from({ length: d }, () => new Float64Array(m)), S1 = Array.from({ length: d }, () => new Float64Array(m));
  for (let h = 0; h < H; h++) {
    if (!(Wh[h] > 0)) continue;
    for (let L = 0; L < d; L++) { Bw[L].fill(0); S1[L].fill(0); }
    for (let k = 0; k < m; k++) if (hOf[k] === h && v[k] > 0) { Bw[0][k] = w[k]; S1[0][k] = v[k]; }
    for (let i = 0; i < pairs.a.length; i++) {
      const k = pairs.a[i], j = pairs.b[i], L = pairs.lag[i];
      const inK = hOf[k] === h && v[k] > 0, inJ = hOf[j] === h && v[j] > 0;
      if (inJ) { Bw[L][k] += w[j]; S1[L][k] += q[i]; }
      if (inK) { Bw[L][j] += w[k]; S1[L][j] += q[i]; }
    }
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      let s = 0;
      for (let k = 0; k < m; k++) s += Bw[a][k] * S1[b][k];
      c[a][b] -= (2 * s) / Wh[h];
    }
    for (let L = 0; L < d; L++) for (let k = 0; k < m; k++) {
      if (!(v[k] > 0)) continue;
      R[L][hOf[k]][h] += w[k] * Bw[L][k];
      T[L][hOf[k]][h] += S1[L][k];
    }
  }
  for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
    let s = 0;
    for (let h = 0; h < H; h++) for (let g = 0; g < H; g++) if (Wh[h] > 0 && Wh[g] > 0) s += (R[a][g][h] * T[b][h][g]) / (Wh[h] * Wh[g]);
    c[a][b] += s;
  }
  return { c };
}

/**
 * Correlation of the block errors by pair class, estimated once from many blocks (every bin of a profile, or the
 * blocks of one region) by the method of moments, instead of from each interval's own few cross products: in each
 * group (its blocks b, and one or more components ys sharing them, each with residuals e about its own ratio, or its
 * strata's), E[e' B_a e] = sum_b theta_b c[a][b] (groupMoments); the sums over all groups and components of e'e and
 * e' B_L e are solved for theta, and rho_L = theta_L / theta_0, kept in [0, 1]. With three groups or more, the
 * estimate with each group left out in turn goes along (the jackknife behind blockDesign's dof).
 * Taking the pooled correlation in place of each bin's cross products is the variance of a mean of autocorrelated
 * data from an estimated correlation function (Bayley & Hammersley 1946, J. R. Stat. Soc. Suppl. 8:184); the moment
 * equations are those of a quadratic form's expectation (Searle 1971, Linear Models, ch. 2). See docs/methods.md,
 * "Intervals for order parameters" (also for which components a profile and a region use, and why).
 */
export function blockCorrelation(groups: { ys: ArrayLike<number>[]; b: { w: ArrayLike<number> } & Pick<BlockSums, 'n' | 'bx' | 'by' | 'strata'> }[]): BlockCorrelation {
  const parts: { C: number[][]; q: number[] }[] = [];
  for (const { ys, b } of groups) {
    let sw = 0, units = 0;
    for (let k = 0; k < b.w.length; k++) if (b.n[k] > 0) { sw += b.w[k]; units++; }
    if (!(sw > 0) || units < 2) continue;
    const g = weightedDesignOf(b, b.w), c = g.moments();
    const q = new Array<number>(PAIR_CLASSES + 1).fill(0);
    for (const y of ys) {
      const e = residuals(y, b.w, b.n, b.strata);
      for (let k = 0; k < e.length; k++) q[0] += e[k] * e[k];
      for (let i = 0; i < g.pairs.a.length; i++) q[g.pairs.lag[i]] += 2 * e[g.pairs.a[i]] * e[g.pairs.b[i]];
    }
    parts.push({ C: c.map((row) => row.map((x) => ys.length * x)), q });
  }
  const d = PAIR_CLASSES + 1;
  const fit = (skip: number): number[] => {
    const C = Array.from({ length: d }, () => new Array<number>(d).fill(0)), q = new Array<number>(d).fill(0);
    parts.forEach((p, i) => { if (i === skip) return; for (let a = 0; a < d; a++) { q[a] += p.q[a]; for (let c = 0; c < d; c++) C[a][c] += p.C[a][c]; } });
    const theta = solveMoments(C, q);
    return Array.from({ length: PAIR_CLASSES }, (_, c) => (theta && theta[0] > 0 ? Math.min(1, Math.max(0, theta[c + 1] / theta[0])) : 0));
  };
  const rho = fit(-1);
  return parts.length >= 3 ? { rho, leaveOneOut: parts.map((_, i) => fit(i)) } : { rho };
}

/** Solves C theta = q by Gaussian elimination with partial pivoting, leaving out lags without pairs (theta 0); null if singular. */
function solveMoments(C: number[][], q: number[]): number[] | null {
  const keep = C.map((_, i) => i).filter((i) => Math.abs(C[i][i]) > 1e-12 * Math.abs(C[0][0]));
  const M = keep.map((i) => [...keep.map((j) => C[i][j]), q[i]]), n = keep.length;
  for (let col = 0; col < n; col++) {
    let p = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(M[r][col]) > Math.abs(M[p][col])) p = r;
    [M[col], M[p]] = [M[p], M[col]];
    if (!(Math.abs(M[col][col]) > 0)) return null;
    for (let r = 0; r < n; r++) {
      if (r === col) continue;
      const f = M[r][col] / M[col][col];
      for (let k = col; k <= n; k++) M[r][k] -= f * M[col][k];
    }
  }
  const theta = new Array<number>(C.length).fill(0);
  keep.forEach((i, r) => { theta[i] = M[r][n] / M[r][r]; });
  return theta;
}

/**
 * The parts of the bias factor tr(P) / 1'S1 (workingModel) that do not depend on the correlation, by pair class L
 * (class 0: the diagonal): 1'S1 = sum_L rho_L total_L; per stratum h, 1_h'S1_h = sum_L rho_L dd_L[h] and
 * w_h'S1_h = sum_L rho_L wa_L[h]; tr(P) = tr(S) + sum_h (1_h'S1_h) (w_h'w_h) / W_h^2 - 2 (w_h'S1_h) / W_h. The
 * factor under any correlation then costs a few sums (the jackknife's many evaluations).
 */
interface FactorSums { trS: number; ww: Float64Array; inv: Float64Array; dd: Float64Array[]; wa: Float64Array[]; total: Float64Array; /** sqrt(v_k v_j) per pair. */ q: Float64Array }

function factorSums(w: ArrayLike<number>, n: ArrayLike<number>, pairs: LaggedPairs, strata?: ArrayLike<number>): FactorSums {
  const m = w.length, C = PAIR_CLASSES + 1;
  const { h, count: H } = strataOf(m, strata);
  const v = new Float64Array(m), wl = new Float64Array(m), Wh = new Float64Array(H);
  for (let k = 0; k < m; k++) if (n[k] > 0 && w[k] > 0) { wl[k] = w[k]; v[k] = (w[k] * w[k]) / n[k]; Wh[h[k]] += w[k]; }
  const dd = Array.from({ length: C }, () => new Float64Array(H)), wa = Array.from({ length: C }, () => new Float64Array(H));
  const ww = new Float64Array(H), total = new Float64Array(C);
  let trS = 0;
  for (let k = 0; k < m; k++) { const g = h[k]; trS += v[k]; dd[0][g] += v[k]; ww[g] += wl[k] * wl[k]; wa[0][g] += wl[k] * v[k]; }
  total[0] = trS;
  const q = new Float64Array(pairs.a.length);
  for (let i = 0; i < q.length; i++) {
    const k = pairs.a[i], j = pairs.b[i], L = pairs.lag[i], qi = Math.sqrt(v[k] * v[j]);
    q[i] = qi;
    total[L] += 2 * qi;
    if (h[k] === h[j]) { dd[L][h[k]] += 2 * qi; wa[L][h[k]] += qi * (wl[k] + wl[j]); }
  }
  return { trS, ww, inv: Float64Array.from(Wh, (x) => (x > 0 ? 1 / x : 0)), dd, wa, total, q };
}

/** The bias factor tr(P) / 1'S1 under the correlation `rho` (by pair class) from its parts (factorSums). */
function factorOf(f: FactorSums, rho: readonly number[]): number {
  const r = [1, ...rho];
  let trP = f.trS, total = 0;
  for (let L = 0; L < r.length; L++) total += r[L] * f.total[L];
  for (let g = 0; g < f.ww.length; g++) {
    let dd = 0, wa = 0;
    for (let L = 0; L < r.length; L++) { dd += r[L] * f.dd[L][g]; wa += r[L] * f.wa[L][g]; }
    trP += dd * f.ww[g] * f.inv[g] * f.inv[g] - 2 * wa * f.inv[g];
  }
  return trP / total;
}

/**
 * A group of one stratum (a bin, a region) by pair class L (0: the diagonal), from one pass over its pairs, with
 * q = sqrt(v_k v_j) per pair: Bw[L] = B_L w, S1[L] = S_L 1 and Sw[L] = S_L w (vectors over the blocks; B_0 = I,
 * S_0 = diag(v)); trS[L] = 1'S_L 1 ... as tr(B_L S_L) (sum v, 2 sum q); sq[L] = tr(S_L^2) (sum v^2, 2 sum q^2);
 * wSw[L] = w'S_L w. Everything the correlation's moments, the bias factor and the dof need (singleMoments,
 * singleFactorSums, singleModel) is a few sums over these, so the pairs are read once.
 */
interface ClassSums { m: number; W: number; w: Float64Array; v: Float64Array; Bw: Float64Array[]; S1: Float64Array[]; Sw: Float64Array[]; trS: Float64Array; sq: Float64Array; wSw: Float64Array; q: Float64Array }

function classSums(w: ArrayLike<number>, n: ArrayLike<number>, pairs: LaggedPairs): ClassSums {
  const m = w.length, C = PAIR_CLASSES + 1, np = pairs.a.length;
  const wl = new Float64Array(m), v = new Float64Array(m);
  let W = 0;
  for (let k = 0; k < m; k++) if (n[k] > 0 && w[k] > 0) { wl[k] = w[k]; v[k] = (w[k] * w[k]) / n[k]; W += w[k]; }
  // Class L's vectors at [L m, (L + 1) m) of one array each.
  const bw = new Float64Array(C * m), s1 = new Float64Array(C * m), sw = new Float64Array(C * m);
  bw.set(wl); s1.set(v);
  for (let k = 0; k < m; k++) sw[k] = v[k] * wl[k];
  const trS = new Float64Array(C), sq = new Float64Array(C), wSw = new Float64Array(C), q = new Float64Array(np);
  for (let k = 0; k < m; k++) { trS[0] += v[k]; sq[0] += v[k] * v[k]; wSw[0] += v[k] * wl[k] * wl[k]; }
  const pa = pairs.a, pb = pairs.b, lag = pairs.lag;
  for (let i = 0; i < np; i++) {
    const k = pa[i], j = pb[i], L = lag[i], qi = Math.sqrt(v[k] * v[j]), wk = wl[k], wj = wl[j], ok = L * m + k, oj = L * m + j;
    q[i] = qi;
    bw[ok] += wj; bw[oj] += wk; s1[ok] += qi; s1[oj] += qi; sw[ok] += qi * wj; sw[oj] += qi * wk;
    trS[L] += 2 * qi; sq[L] += 2 * qi * qi; wSw[L] += 2 * qi * wk * wj;
  }
  const part = (x: Float64Array) => Array.from({ length: C }, (_, L) => x.subarray(L * m, (L + 1) * m));
  const Bw = part(bw), S1 = part(s1), Sw = part(sw);
  return { m, W, w: wl, v, Bw, S1, Sw, trS, sq, wSw, q };
}

const sumOf = (x: Float64Array) => { let s = 0; for (let k = 0; k < x.length; k++) s += x[k]; return s; };

/** groupMoments for one stratum: c[a][b] = tr(B_a S_b) - 2 (B_a w)'(S_b 1) / W + (w'B_a w)(1'S_b 1) / W^2. */
function singleMoments(c: ClassSums): number[][] {
  const C = PAIR_CLASSES + 1, W = c.W;
  const wBw = c.Bw.map((x) => dotOf(c.w, x)), oneS1 = c.S1.map(sumOf);
  return Array.from({ length: C }, (_, a) => Array.from({ length: C }, (_, b) => (W > 0 ? (a === b ? c.trS[a] : 0) - (2 * dotOf(c.Bw[a], c.S1[b])) / W + (wBw[a] * oneS1[b]) / (W * W) : 0)));
}

/** factorSums for one stratum. */
function singleFactorSums(c: ClassSums): FactorSums {
  const C = PAIR_CLASSES + 1;
  return {
    trS: c.trS[0], ww: Float64Array.of(dotOf(c.w, c.w)), inv: Float64Array.of(c.W > 0 ? 1 / c.W : 0),
    dd: Array.from({ length: C }, (_, L) => Float64Array.of(c.trS[L])), wa: Array.from({ length: C }, (_, L) => Float64Array.of(dotOf(c.w, c.S1[L]))),
    total: Float64Array.from(c.trS), q: c.q,
  };
}

/**
 * workingModel for one stratum from its class sums, with no pass over the pairs: S = sum_L r_L S_L (r_0 = 1),
 * a = S 1, and the same traces (tr(P), tr(P^2) with U = [w, a], K = [[1'S1 / W^2, -1 / W], [-1 / W, 0]]).
 */
function singleModel(c: ClassSums, rho: BlockCorrelation): { factor: number; dof: number } {
  if (!(c.W > 0)) return { factor: 1, dof: 1 };
  const r = [1, ...rho.rho], W = c.W, m = c.m;
  const a = new Float64Array(m), Sw = new Float64Array(m);
  let trS = 0, trS2 = 0, wSw = 0;
  for (let L = 0; L < r.length; L++) {
    const x = c.S1[L], y = c.Sw[L], rl = r[L];
    for (let k = 0; k < m; k++) { a[k] += rl * x[k]; Sw[k] += rl * y[k]; }
    trS2 += rl * rl * c.sq[L]; wSw += rl * c.wSw[L];
  }
  trS = c.trS[0];
  const total = sumOf(a), ww = dotOf(c.w, c.w), wa = dotOf(c.w, a), aa = dotOf(a, a), aSw = dotOf(a, Sw);
  const D = total / (W * W), iW = 1 / W;
  const trP = trS + D * ww - 2 * iW * wa;
  const factor = trP / total;
  // tr(K U'SU) = D w'Sw - 2 a'Sw / W; K G with G = [[ww, wa], [wa, aa]].
  const trKUSU = D * wSw - 2 * iW * aSw;
  const kg = [[D * ww - iW * wa, D * wa - iW * aa], [-iW * ww, -iW * wa]];
  const trKG2 = kg[0][0] * kg[0][0] + 2 * kg[0][1] * kg[1][0] + kg[1][1] * kg[1][1];
  const trP2 = trS2 + 2 * trKUSU + trKG2;
  return { factor: factor > 0 ? factor : 1, dof: trP2 > 0 && trP > 0 ? Math.max(1, (trP * trP) / trP2) : 1 };
}

/**
 * Bias factor and degrees of freedom of the variance e'e of one group under the working covariance
 * S = S_0 + rho_1 S_1 + rho_2 S_2 (groupMoments) with the pooled correlation (blockCorrelation). The residuals are
 * e = M y with M = I - sum_h w_h 1_h' / W_h (w_h, 1_h: w and 1 on the blocks of stratum h, W_h = sum w over them;
 * one stratum without `strata`), so E[e'e] = theta_0 tr(P), P = M S M', while the numerator sum y has variance
 * theta_0 1'S1, and var(S) = e'e / (factor W^2) with factor = tr(P) / 1'S1 (the small-sample correction of Bell &
 * McCaffrey 2002, Survey Methodology 28:169, in its scalar form, here with correlated blocks). Degrees of freedom by
 * Satterthwaite's approximation under the same model (Satterthwaite 1946, Biometrics Bulletin 2:110):
 * dof = tr(P)^2 / tr(P^2). With a_h = S 1_h and U = [w_1 .. w_H, a_1 .. a_H], P = S + U K U' with
 * K = [[D, -diag(1 / W_h)], [-diag(1 / W_h), 0]], D_hg = 1_h' S 1_g / (W_h W_g), so tr(P) = tr(S) + tr(K U'U) and
 * tr(P^2) = tr(S^2) + 2 tr(K U'SU) + tr((K U'U)^2): a few passes over the pairs per stratum, no n x n matrix.
 * `withDof` false skips the dof (the jackknife needs only the factor). See docs/methods.md, "Intervals for order
 * parameters".
 */
export function workingModel(w: ArrayLike<number>, n: ArrayLike<number>, pairs: LaggedPairs, rho: BlockCorrelation,
  strata?: ArrayLike<number>, withDof = true, given?: FactorSums): { factor: number; dof: number } {
  if (!strata) return singleModel(classSums(w, n, pairs), rho);
  const m = w.length, r = [1, ...rho.rho], np = pairs.a.length;
  const { h, count: H } = strataOf(m, strata);
  const v = new Float64Array(m), wl = new Float64Array(m), Wh = new Float64Array(H);
  for (let k = 0; k < m; k++) if (n[k] > 0 && w[k] > 0) { wl[k] = w[k]; v[k] = (w[k] * w[k]) / n[k]; Wh[h[k]] += w[k]; }
  let W = 0;
  for (let g = 0; g < H; g++) W += Wh[g];
  if (!(W > 0)) return { factor: 1, dof: 1 };
  const inv = (g: number) => (Wh[g] > 0 ? 1 / Wh[g] : 0);
  const sums = given ?? factorSums(w, n, pairs, strata);
  const { ww } = sums;
  const factor = factorOf(sums, rho.rho);
  const trP = factor * sums.total.reduce((t, x, L) => t + r[L] * x, 0);
  if (!withDof) return { factor: factor > 0 ? factor : 1, dof: 1 };
  // One pass over the pairs: their working covariance s = r_L sqrt(v_k v_j); a_h = S 1_h by stratum (flat, H x m);
  // w_p'S w_q; tr(S^2).
  const sPair = new Float64Array(np), a = new Float64Array(H * m), wSw = new Float64Array(H * H);
  let trS2 = 0;
  for (let k = 0; k < m; k++) { const g = h[k]; a[g * m + k] += v[k]; wSw[g * H + g] += v[k] * wl[k] * wl[k]; trS2 += v[k] * v[k]; }
  for (let i = 0; i < np; i++) {
    const k = pairs.a[i], j = pairs.b[i], hk = h[k], hj = h[j], s = r[pairs.lag[i]] * sums.q[i];
    sPair[i] = s;
    a[hj * m + k] += s; a[hk * m + j] += s;
    const sw = s * wl[k] * wl[j];
    wSw[hk * H + hj] += sw; wSw[hj * H + hk] += sw;
    trS2 += 2 * s * s;
  }
  // a_h'S w_h (the cross blocks' diagonals of U'SU): (S w_h)[k] holds v_k w_k for k in h and s_kj w_j for j in h.
  const aSw = new Float64Array(H);
  for (let k = 0; k < m; k++) { const g = h[k]; aSw[g] += a[g * m + k] * v[k] * wl[k]; }
  for (let i = 0; i < np; i++) {
    const k = pairs.a[i], j = pairs.b[i], s = sPair[i], hk = h[k], hj = h[j];
    aSw[hj] += a[hj * m + k] * s * wl[j]; aSw[hk] += a[hk * m + j] * s * wl[k];
  }
  // G = U'U, U = [w_1 .. w_H, a_1 .. a_H]: w_p'w_q = delta_pq ww_p, w_p'a_q, a_p'a_q, one pass over the blocks.
  const d = 2 * H, G = Array.from({ length: d }, () => new Float64Array(d));
  const D = Array.from({ length: H }, () => new Float64Array(H));
  for (let k = 0; k < m; k++) {
    const p = h[k];
    for (let q = 0; q < H; q++) {
      const aq = a[q * m + k];
      if (aq === 0) continue;
      D[p][q] += aq;
      G[p][H + q] += wl[k] * aq;
      for (let t = q; t < H; t++) G[H + q][H + t] += aq * a[t * m + k];
    }
  }
  for (let p = 0; p < H; p++) {
    G[p][p] = ww[p];
    for (let q = 0; q < H; q++) { D[p][q] *= inv(p) * inv(q); G[H + q][p] = G[p][H + q]; }
    for (let q = p + 1; q < H; q++) G[H + q][H + p] = G[H + p][H + q];
  }
  // K = [[D, -diag(1 / W_h)], [-diag(1 / W_h), 0]]; tr(K U'SU) from w_p'S w_q (the D block) and a_h'S w_h.
  const K = Array.from({ length: d }, () => new Float64Array(d));
  for (let p = 0; p < H; p++) { for (let q = 0; q < H; q++) K[p][q] = D[p][q]; K[p][H + p] = -inv(p); K[H + p][p] = -inv(p); }
  let trKUSU = 0;
  for (let p = 0; p < H; p++) { for (let q = 0; q < H; q++) trKUSU += D[p][q] * wSw[q * H + p]; trKUSU -= 2 * inv(p) * aSw[p]; }
  // tr((K G)^2).
  const KG = K.map((row) => { const out = new Float64Array(d); for (let t = 0; t < d; t++) if (row[t] !== 0) for (let q = 0; q < d; q++) out[q] += row[t] * G[t][q]; return out; });
  let trKG2 = 0;
  for (let p = 0; p < d; p++) for (let q = 0; q < d; q++) trKG2 += KG[p][q] * KG[q][p];
  const trP2 = trS2 + 2 * trKUSU + trKG2;
  return { factor: factor > 0 ? factor : 1, dof: trP2 > 0 && trP > 0 ? Math.max(1, (trP * trP) / trP2) : 1 };
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
