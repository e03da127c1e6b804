import type { Plane } from './plane.ts';

/**
 * Bilinear sample of a plane at (x, y) in pixel coordinates (pixel centres at integers). NaN outside the
 * hull of pixel centres or when a contributing pixel is NaN, so callers can count what they could not
 * measure; `clampedBilinear` instead holds the edge value (for searches that may step just outside).
 */
export function bilinear(p: Plane, x: number, y: number): number {
  if (!(x >= 0 && y >= 0 && x <= p.width - 1 && y <= p.height - 1)) return NaN;
  const x0 = Math.min(Math.floor(x), Math.max(0, p.width - 2));
  const y0 = Math.min(Math.floor(y), Math.max(0, p.height - 2));
  const fx = x - x0, fy = y - y0;
  const i = y0 * p.width + x0;
  const dx = p.width > 1 ? 1 : 0, dy = p.height > 1 ? p.width : 0;
  const d = p.data;
  return (d[i] * (1 - fx) + d[i + dx] * fx) * (1 - fy) + (d[i + dy] * (1 - fx) + d[i + dy + dx] * fx) * fy;
}

export function clampedBilinear(p: Plane, x: number, y: number): number {
  return bilinear(p, Math.min(p.width - 1, Math.max(0, x)), Math.min(p.height - 1, Math.max(0, y)));
}

/** Median of the values (NaN for none). */
export function median(values: ArrayLike<number>): number {
  if (values.length === 0) return NaN;
  const a = Float64Array.from(values).sort();
  const m = a.length >> 1;
  return a.length % 2 ? a[m] : 0.5 * (a[m - 1] + a[m]);
}

/**
 * The value of rank `r` (0-based, ascending) of `a`, which is reordered: Hoare's FIND (CACM 1961, algorithm 65),
 * in time proportional to the length, where a sort takes n log n (and a sort of a JavaScript array with a
 * comparator about a second per ten million values). The same value a sort would put at `r`; NaN values must
 * not be among them.
 */
export function valueOfRank(a: Float32Array | Float64Array, r: number): number {
  let lo = 0, hi = a.length - 1;
  while (lo < hi) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) { const t = a[i]; a[i] = a[j]; a[j] = t; i++; j--; }
    }
    if (r <= j) hi = j;
    else if (r >= i) lo = i;
    else return a[r];
  }
  return a[r];
}
