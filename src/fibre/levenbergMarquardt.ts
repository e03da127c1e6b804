/**
 * Levenberg-Marquardt least squares with Marquardt's diagonal scaling, for the small edge models
 * here (a handful of parameters, up to a few hundred samples). Parameters listed in `positive` are kept
 * above 0. Stopping tests after MINPACK (Moré 1978, "The Levenberg-Marquardt algorithm: implementation
 * and theory", Lecture Notes in Mathematics 630): gradient, step and cost-reduction tolerances.
 */
import { invertMatrix } from './linalg.ts';

export interface LmModel {
  /** Model value at x and its gradient with respect to the parameters (written into `grad`). */
  evaluate(x: number, p: number[], grad: number[]): number;
  positive: number[];
}

export interface LmResult {
  params: number[];
  /** Residual sum of squares. */
  cost: number;
  /** (J^T J)^-1 at the solution, or null when singular. */
  inverseNormal: number[][] | null;
  converged: boolean;
}

/** Stop when every |J^T r|_a / sqrt((J^T J)_aa RSS) is below this (MINPACK's gtol test). */
const GRADIENT_TOLERANCE = 1e-9;
/** Stop when a step changes every parameter by less than this relative amount (xtol). */
const STEP_TOLERANCE = 1e-12;
/** Stop when an accepted step lowers the cost by less than this fraction (ftol). */
const COST_TOLERANCE = 1e-13;
/** Damping increases (x 10 each) tried before an iteration gives up. */
const MAX_TRIES = 12;

/**
 * Solves the n x n system in `m` (row-major, overwritten) for `b` (overwritten with the solution) by
 * Gaussian elimination with partial pivoting; false when singular.
 */
function solveInPlace(m: Float64Array, b: Float64Array, n: number): boolean {
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * n + c]) > Math.abs(m[piv * n + c])) piv = r;
    const pv = m[piv * n + c];
    if (!(Math.abs(pv) > 0)) return false;
    if (piv !== c) {
      for (let k = 0; k < n; k++) {
        const t = m[c * n + k];
        m[c * n + k] = m[piv * n + k];
        m[piv * n + k] = t;
      }
      const t = b[c];
      b[c] = b[piv];
      b[piv] = t;
    }
    for (let r = c + 1; r < n; r++) {
      const f = m[r * n + c] / pv;
      if (f === 0) continue;
      for (let k = c; k < n; k++) m[r * n + k] -= f * m[c * n + k];
      b[r] -= f * b[c];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let v = b[r];
    for (let k = r + 1; k < n; k++) v -= m[r * n + k] * b[k];
    b[r] = v / m[r * n + r];
    if (!Number.isFinite(b[r])) return false;
  }
  return true;
}

export function levenbergMarquardt(xs: ArrayLike<number>, ys: ArrayLike<number>, start: number[], model: LmModel,
  maxIterations = 200): LmResult {
  const n = xs.length;
  const np = start.length;
  const x = Float64Array.from(xs);
  const y = Float64Array.from(ys);
  let p = start.slice();
  let q = start.slice();
  const grad = new Array<number>(np).fill(0);
  const jtj = new Float64Array(np * np);
  const jtr = new Float64Array(np);
  const m = new Float64Array(np * np);
  const step = new Float64Array(np);
  const sse = (params: number[]) => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      const r = y[i] - model.evaluate(x[i], params, grad);
      s += r * r;
    }
    return s;
  };
  let cost = sse(p);
  let lambda = 1e-3;
  let converged = false;
  for (let iter = 0; iter < maxIterations; iter++) {
    jtj.fill(0);
    jtr.fill(0);
    for (let i = 0; i < n; i++) {
      const r = y[i] - model.evaluate(x[i], p, grad);
      for (let a = 0; a < np; a++) {
        const ga = grad[a];
        jtr[a] += ga * r;
        for (let b = a; b < np; b++) jtj[a * np + b] += ga * grad[b];
      }
    }
    for (let a = 0; a < np; a++) for (let b = 0; b < a; b++) jtj[a * np + b] = jtj[b * np + a];
    // Gradient test (the cosine between the residual and each Jacobian column): at the minimum to
    // machine precision no step can lower the cost, so stop before trying.
    let cosine = 0;
    for (let a = 0; a < np; a++) cosine = Math.max(cosine, Math.abs(jtr[a]) / Math.sqrt(jtj[a * np + a] * cost + 1e-300));
    if (cosine < GRADIENT_TOLERANCE || cost <= 1e-28 * n) {
      converged = true;
      break;
    }
    let improved = false;
    for (let tries = 0; tries < MAX_TRIES; tries++) {
      for (let k = 0; k < np * np; k++) m[k] = jtj[k];
      for (let a = 0; a < np; a++) m[a * np + a] = jtj[a * np + a] * (1 + lambda) + 1e-30;
      step.set(jtr);
      if (!solveInPlace(m, step, np)) {
        lambda *= 10;
        continue;
      }
      for (let k = 0; k < np; k++) q[k] = p[k] + step[k];
      for (const k of model.positive) if (q[k] <= 1e-4) q[k] = p[k] / 4;
      const c = sse(q);
      if (c <= cost) {
        let small = true;
        for (let k = 0; k < np; k++) if (Math.abs(step[k]) > STEP_TOLERANCE * (1 + Math.abs(p[k]))) small = false;
        const relDrop = cost > 0 ? (cost - c) / cost : 0;
        [p, q] = [q, p];
        cost = c;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (small || relDrop < COST_TOLERANCE) converged = true;
        break;
      }
      lambda *= 10;
    }
    if (!improved) {
      converged = true; // no step lowers the cost: at the minimum to machine precision
      break;
    }
    if (converged) break;
  }
  // (J^T J)^-1 at the solution.
  jtj.fill(0);
  for (let i = 0; i < n; i++) {
    model.evaluate(x[i], p, grad);
    for (let a = 0; a < np; a++) for (let b = a; b < np; b++) jtj[a * np + b] += grad[a] * grad[b];
  }
  const normal = Array.from({ length: np }, (_, a) => Array.from({ length: np }, (_, b) => (a <= b ? jtj[a * np + b] : jtj[b * np + a])));
  return { params: p, cost, inverseNormal: invertMatrix(normal), converged: converged && p.every(Number.isFinite) };
}
