/**
 * Levenberg-Marquardt least squares with Marquardt's diagonal scaling, for the small edge models
 * here (a handful of parameters, tens of samples). Parameters listed in `positive` are kept above 0.
 */
import { invertMatrix, solveLinear } from './linalg.ts';

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

export function levenbergMarquardt(xs: ArrayLike<number>, ys: ArrayLike<number>, start: number[], model: LmModel,
  maxIterations = 200): LmResult {
  const n = xs.length;
  const np = start.length;
  let p = start.slice();
  const grad = new Array<number>(np).fill(0);
  const sse = (q: number[]) => {
    let s = 0;
    for (let i = 0; i < n; i++) s += (ys[i] - model.evaluate(xs[i], q, grad)) ** 2;
    return s;
  };
  let cost = sse(p);
  let lambda = 1e-3;
  let converged = false;
  let jtj: number[][] = [];
  for (let iter = 0; iter < maxIterations; iter++) {
    jtj = Array.from({ length: np }, () => new Array<number>(np).fill(0));
    const jtr = new Array<number>(np).fill(0);
    for (let i = 0; i < n; i++) {
      const r = ys[i] - model.evaluate(xs[i], p, grad);
      for (let a = 0; a < np; a++) {
        jtr[a] += grad[a] * r;
        for (let b = 0; b < np; b++) jtj[a][b] += grad[a] * grad[b];
      }
    }
    let improved = false;
    for (let tries = 0; tries < 30; tries++) {
      const m = jtj.map((row, a) => row.map((v, b) => (a === b ? v * (1 + lambda) + 1e-30 : v)));
      const step = solveLinear(m, jtr);
      if (!step) {
        lambda *= 10;
        continue;
      }
      const q = p.map((v, k) => v + step[k]);
      for (const k of model.positive) if (q[k] <= 1e-4) q[k] = p[k] / 4;
      const c = sse(q);
      if (c <= cost) {
        const small = step.every((s, k) => Math.abs(s) <= 1e-12 * (1 + Math.abs(p[k])));
        const relDrop = cost > 0 ? (cost - c) / cost : 0;
        const maxStep = Math.max(...step.map(Math.abs));
        p = q;
        cost = c;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (small || (relDrop < 1e-14 && maxStep < 1e-9)) converged = true;
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
  return { params: p, cost, inverseNormal: invertMatrix(jtj), converged: converged && p.every(Number.isFinite) };
}
