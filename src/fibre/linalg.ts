/** Small dense linear systems (normal equations of the fits here: at most a few unknowns). */

/** Solves A x = b by Gauss-Jordan elimination with partial pivoting; null when A is singular. */
export function solveLinear(m: number[][], b: number[]): number[] | null {
  const size = b.length;
  const a = m.map((row, i) => [...row, b[i]]);
  for (let c = 0; c < size; c++) {
    let piv = c;
    for (let r = c + 1; r < size; r++) if (Math.abs(a[r][c]) > Math.abs(a[piv][c])) piv = r;
    if (!(Math.abs(a[piv][c]) > 0)) return null;
    [a[c], a[piv]] = [a[piv], a[c]];
    for (let r = 0; r < size; r++) {
      if (r === c) continue;
      const f = a[r][c] / a[c][c];
      if (f === 0) continue;
      for (let k = c; k <= size; k++) a[r][k] -= f * a[c][k];
    }
  }
  const x = a.map((row, i) => row[size] / row[i]);
  return x.every(Number.isFinite) ? x : null;
}

/** Inverse of a small square matrix, column by column; null when singular. */
export function invertMatrix(m: number[][]): number[][] | null {
  const size = m.length;
  const cols: number[][] = [];
  for (let k = 0; k < size; k++) {
    const e = new Array<number>(size).fill(0);
    e[k] = 1;
    const c = solveLinear(m, e);
    if (!c) return null;
    cols.push(c);
  }
  return m.map((_, i) => cols.map((c) => c[i]));
}
