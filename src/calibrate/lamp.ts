/**
 * Uneven illumination across a ruler. A lamp that changes across a line multiplies the line's profile
 * by L(s) ~ L0 (1 + kappa (s - c)), which moves its symmetric-window centre by kappa x lampShift
 * (measureLine); over a vignetted field kappa changes sign from one side to the other, so the
 * uncorrected shifts would stretch or shrink the fitted period. The lines' own areas trace the lamp:
 * ln(area) is fitted by a quadratic surface in (s, t) (robustly: points more than 3 robust SDs off
 * are left out, such as tick ends crossing a strip only in part), kappa = d ln L / ds is its
 * derivative across the ticks, and each centre is corrected by -kappa x lampShift.
 * docs/methods.md, "Micrometer calibration".
 */
import { median } from '../common/index.ts';

export interface LampPoint {
  s: number;
  t: number;
  /** Window-weighted line area (any unit, proportional to the lamp). */
  area: number;
  /** Centre shift per unit d ln L / ds, px^2. */
  lampShiftPx2: number;
}

/** Solves the normal equations (A^T A) x = A^T y by Gaussian elimination with partial pivoting; null when singular. */
function leastSquares(rows: number[][], y: number[]): number[] | null {
  const k = rows[0].length;
  const m = Array.from({ length: k }, () => new Float64Array(k + 1));
  rows.forEach((r, n) => {
    for (let i = 0; i < k; i++) {
      for (let j = 0; j < k; j++) m[i][j] += r[i] * r[j];
      m[i][k] += r[i] * y[n];
    }
  });
  for (let c = 0; c < k; c++) {
    let p = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(m[r][c]) > Math.abs(m[p][c])) p = r;
    if (!(Math.abs(m[p][c]) > 1e-12 * (Math.abs(m[c][c]) + 1e-300))) return null;
    [m[c], m[p]] = [m[p], m[c]];
    for (let r = 0; r < k; r++) {
      if (r === c) continue;
      const f = m[r][c] / m[c][c];
      for (let j = c; j <= k; j++) m[r][j] -= f * m[c][j];
    }
  }
  return m.map((row, i) => row[k] / row[i]);
}

/**
 * d ln L / ds at every point (per px), from the quadratic surface fitted to ln(area); zeros when
 * fewer than 12 points have a positive area or the fit is singular.
 */
export function lampGradient(points: LampPoint[]): Float64Array {
  const out = new Float64Array(points.length);
  const ok = points.map((p, i) => ({ p, i })).filter(({ p }) => p.area > 0 && Number.isFinite(p.area));
  if (ok.length < 12) return out;
  const sc = Math.max(1, ...ok.map(({ p }) => Math.abs(p.s)));
  const tc = Math.max(1, ...ok.map(({ p }) => Math.abs(p.t)));
  const basis = (s: number, t: number) => {
    const u = s / sc, v = t / tc;
    return [1, u, v, u * u, u * v, v * v];
  };
  // Start from the points at least 0.7 x the median area (a tick crossing a strip in full), then
  // iterate on all of them.
  const typical = median(ok.map(({ p }) => p.area));
  let use = ok.filter(({ p }) => p.area >= 0.7 * typical);
  if (use.length < 12) return out;
  let coef: number[] | null = null;
  for (let round = 0; round < 4; round++) {
    coef = leastSquares(use.map(({ p }) => basis(p.s, p.t)), use.map(({ p }) => Math.log(p.area)));
    if (!coef) return out;
    const c = coef;
    const res = ok.map(({ p }) => Math.log(p.area) - basis(p.s, p.t).reduce((a, b, j) => a + b * c[j], 0));
    const sd = 1.4826 * median(res.map(Math.abs));
    const next = ok.filter((_, n) => Math.abs(res[n]) <= Math.max(3 * sd, 0.02));
    if (next.length < 12 || next.length === use.length) break;
    use = next;
  }
  if (!coef) return out;
  points.forEach((p, i) => {
    const u = p.s / sc, v = p.t / tc;
    out[i] = (coef![1] + 2 * coef![3] * u + coef![4] * v) / sc;
  });
  return out;
}
