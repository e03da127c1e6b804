import { describe, it, expect } from 'vitest';
import { blockCorrelation, laggedPairs, workingModel, type BlockCorrelation } from '../../src/order/intervals.ts';
import { normalRandom, seededRandom } from '../../src/order/random.ts';

/**
 * The block variance's working model (src/order/intervals.ts; docs/methods.md, "Intervals for order parameters"):
 * block sums y with cov(y) = theta_0 (S_0 + rho_1 S_1 + rho_2 S_2), S_0 = diag(v), v_k = w_k^2 / n_k, S_L = sqrt(v_k v_j)
 * on the pairs of blocks at Chebyshev lag L, residuals e = M y with M = I - w 1' / sum w. References here: dense
 * matrices built in this file from those definitions (factor tr(P) / 1'S1 and Satterthwaite's tr(P)^2 / tr(P^2),
 * P = M S M'; Satterthwaite 1946, Biometrics Bulletin 2:110), Cochran's theorem, and simulation of the model itself.
 */

interface Blocks { w: Float64Array; n: Uint32Array; bx: Int32Array; by: Int32Array }

/** A thin diagonal strip of blocks, as a channel bin crosses the block grid: pieces of unequal size. */
function strip(pieces: number, seed: number, x0 = 0, y0 = 0): Blocks {
  const rand = seededRandom(seed);
  const n = Uint32Array.from({ length: pieces }, () => 1 + Math.floor(340 * rand()));
  return { n, w: Float64Array.from(n), bx: Int32Array.from({ length: pieces }, (_, k) => x0 + k), by: Int32Array.from({ length: pieces }, (_, k) => y0 + Math.floor(k / 2)) };
}

/** The model covariance S as a dense matrix, from the block positions directly. */
function denseS(b: Blocks, rho: BlockCorrelation): number[][] {
  const m = b.w.length, v = Array.from(b.w, (w, k) => (w * w) / b.n[k]);
  return Array.from({ length: m }, (_, i) => Array.from({ length: m }, (_, j) => {
    const dx = Math.abs(b.bx[i] - b.bx[j]), dy = Math.abs(b.by[i] - b.by[j]);
    // Classes: sharing an edge (or one cell), touching at a corner, one block between.
    const r = i === j ? 1 : Math.max(dx, dy) > 2 ? 0 : Math.max(dx, dy) === 2 ? rho.rho[2] : dx + dy === 2 ? rho.rho[1] : rho.rho[0];
    return r * Math.sqrt(v[i] * v[j]);
  }));
}

const mul = (A: number[][], B: number[][]) => A.map((row) => B[0].map((_, j) => row.reduce((s, a, k) => s + a * B[k][j], 0)));
const trace = (A: number[][]) => A.reduce((s, row, i) => s + row[i], 0);

function cholesky(S: number[][]): number[][] {
  const m = S.length, L = S.map(() => new Array<number>(m).fill(0));
  for (let i = 0; i < m; i++) for (let j = 0; j <= i; j++) {
    let s = S[i][j];
    for (let k = 0; k < j; k++) s -= L[i][k] * L[j][k];
    if (i === j) { if (!(s > 0)) throw new Error('not positive definite'); L[i][i] = Math.sqrt(s); } else L[i][j] = s / L[j][j];
  }
  return L;
}

describe('working model of the block variance', () => {
  it('gives the dense-matrix factor tr(P) / 1\'S1 and dof tr(P)^2 / tr(P^2) on strips of blocks', () => {
    for (const [pieces, seed, rho] of [[11, 7, { rho: [0.3, 0.18, 0.1] }], [16, 8, { rho: [0.5, 0.3, 0] }], [30, 9, { rho: [0.2, 0.12, 0.2] }]] as const) {
      const b = strip(pieces, seed);
      const S = denseS(b, rho), m = pieces, W = b.w.reduce((a, c) => a + c, 0);
      const M = Array.from({ length: m }, (_, i) => Array.from({ length: m }, (_, j) => (i === j ? 1 : 0) - b.w[i] / W));
      const Mt = M[0].map((_, j) => M.map((row) => row[j]));
      const P = mul(mul(M, S), Mt);
      const s = S.flat().reduce((a, c) => a + c, 0);
      const got = workingModel(b.w, b.n, laggedPairs(b), rho);
      expect(got.factor).toBeCloseTo(trace(P) / s, 10);
      expect(got.dof).toBeCloseTo(trace(P) ** 2 / trace(mul(P, P)), 8);
    }
  });

  it('gives the dense-matrix factor and dof with strata (residuals about each stratum\'s own ratio)', () => {
    for (const [pieces, seed, rho, H] of [[12, 17, { rho: [0.3, 0.18, 0.1] }, 3], [20, 18, { rho: [0.5, 0.3, 0.2] }, 4]] as const) {
      const b = strip(pieces, seed), m = pieces;
      const strata = Int32Array.from({ length: m }, (_, k) => Math.floor((k * H) / m));
      const S = denseS(b, rho);
      const W = Array.from({ length: H }, (_, g) => b.w.reduce((a, c, k) => a + (strata[k] === g ? c : 0), 0));
      // M = I - sum_h w_h 1_h' / W_h.
      const M = Array.from({ length: m }, (_, i) => Array.from({ length: m }, (_, j) => (i === j ? 1 : 0) - (strata[i] === strata[j] ? b.w[i] / W[strata[i]] : 0)));
      const Mt = M[0].map((_, j) => M.map((row) => row[j]));
      const P = mul(mul(M, S), Mt);
      const s = S.flat().reduce((a, c) => a + c, 0);
      const got = workingModel(b.w, b.n, laggedPairs(b), rho, strata);
      expect(got.factor).toBeCloseTo(trace(P) / s, 10);
      expect(got.dof).toBeCloseTo(trace(P) ** 2 / trace(mul(P, P)), 8);
      expect(workingModel(b.w, b.n, laggedPairs(b), rho, strata, false).factor).toBeCloseTo(trace(P) / s, 10);
    }
  });

  it('makes e\'e / factor an unbiased variance of sum y under its model (simulated)', () => {
    const b = strip(14, 21), rho = { rho: [0.35, 0.21, 0.1] };
    const S = denseS(b, rho), L = cholesky(S), m = b.w.length, W = b.w.reduce((a, c) => a + c, 0);
    const truth = S.flat().reduce((a, c) => a + c, 0);
    const { factor } = workingModel(b.w, b.n, laggedPairs(b), rho);
    const normal = normalRandom(seededRandom(5));
    let sum = 0;
    const draws = 20_000;
    for (let r = 0; r < draws; r++) {
      const z = Array.from({ length: m }, () => normal());
      const y = L.map((row) => row.reduce((a, l, k) => a + l * z[k], 0));
      const sy = y.reduce((a, c) => a + c, 0);
      sum += y.reduce((a, yk, k) => a + (yk - (b.w[k] * sy) / W) ** 2, 0) / factor;
    }
    // Mean of 20 000 draws: relative standard error about sqrt(2 / (dof draws)) < 1 %.
    expect(sum / draws / truth).toBeGreaterThan(0.97);
    expect(sum / draws / truth).toBeLessThan(1.03);
  });

  it('has m - 1 degrees of freedom and factor (m - 1) / m for m equal, uncorrelated blocks', () => {
    // Cochran's theorem: e'e / v is chi-square with m - 1 degrees of freedom, mean m - 1, while var(sum y) = m v.
    const m = 12, b = { w: new Float64Array(m).fill(100), n: new Uint32Array(m).fill(100), bx: Int32Array.from({ length: m }, (_, k) => 3 * k), by: new Int32Array(m) };
    const got = workingModel(b.w, b.n, laggedPairs(b), { rho: [0.4, 0.24, 0.2] });
    expect(got.dof).toBeCloseTo(m - 1, 9);
    expect(got.factor).toBeCloseTo((m - 1) / m, 12);
  });
});

describe('one stratum', () => {
  it('gives the same factor, dof and correlation by the one-pass path as by the strata path with every block in one stratum', () => {
    // The one-pass path (no strata) and the general one (strata given, all 0) compute the same traces differently.
    for (const [pieces, seed, rho] of [[11, 31, { rho: [0.3, 0.2, 0.1] }], [40, 32, { rho: [0.6, 0.4, 0.25] }]] as const) {
      const b = strip(pieces, seed), zeros = new Int32Array(pieces), model = { rho: [...rho.rho] };
      const one = workingModel(b.w, b.n, laggedPairs(b), model), all = workingModel(b.w, b.n, laggedPairs(b), model, zeros);
      expect(one.factor).toBeCloseTo(all.factor, 12);
      expect(one.dof).toBeCloseTo(all.dof, 9);
      const normal = normalRandom(seededRandom(seed));
      const y = Float64Array.from(b.w, (w, k) => 0.5 * w + (normal() * w) / Math.sqrt(b.n[k]));
      const c1 = blockCorrelation([{ ys: [y], b }]), c2 = blockCorrelation([{ ys: [y], b: { ...b, strata: zeros } }]);
      c1.rho.forEach((x, i) => expect(x).toBeCloseTo(c2.rho[i], 12));
    }
  });
});

describe('pooled block correlation', () => {
  it('recovers the edge, corner and two-apart correlations of simulated strips (method of moments)', () => {
    const rho = { rho: [0.3, 0.18, 0.1] }, normal = normalRandom(seededRandom(11));
    const est: BlockCorrelation[] = [];
    for (let rep = 0; rep < 40; rep++) {
      // Ten strips, side by side four rows apart, correlated within each strip only (as the model takes no pair beyond lag 2).
      const groups = Array.from({ length: 10 }, (_, g) => strip(15, 100 * rep + g, 0, 4 * g));
      const ys = groups.map((b) => {
        const L = cholesky(denseS(b, rho)), z = Array.from(b.w, () => normal());
        return Float64Array.from(L.map((row) => row.reduce((a, l, k) => a + l * z[k], 0)), (x, k) => x + 0.6 * b.w[k]);
      });
      est.push(blockCorrelation(groups.map((b, g) => ({ ys: [ys[g]], b }))));
    }
    const mean = (f: (r: BlockCorrelation) => number) => est.reduce((a, r) => a + f(r), 0) / est.length;
    // 40 repeats of 150 blocks: the mean is within a few hundredths of the construction.
    for (let c = 0; c < 3; c++) expect(Math.abs(mean((r) => r.rho[c]) - rho.rho[c]), `class ${c + 1}`).toBeLessThan(0.04);
    // Uncorrelated strips give about 0 (on average: each estimate is kept at or above 0).
    const flat = Array.from({ length: 40 }, (_, rep) => {
      const groups = Array.from({ length: 10 }, (_, g) => strip(15, 7000 + 100 * rep + g, 0, 4 * g));
      return blockCorrelation(groups.map((b) => ({ ys: [Float64Array.from(b.w, (w, k) => 0.6 * w + (normal() * w) / Math.sqrt(b.n[k]))], b }))).rho[0];
    });
    expect(flat.reduce((a, x) => a + x, 0) / flat.length).toBeLessThan(0.06);
    // With ten groups the estimate carries its leave-one-group-out values (the jackknife behind the degrees of freedom).
    expect(est[0].leaveOneOut?.length).toBe(10);
  });
});
