import type { Plane } from '../common/index.ts';

/**
 * NaN and infinite pixels (float TIFFs can hold them) would spread through every filter. They are
 * replaced by the mean of the finite pixels before filtering; the caller masks them and everything
 * within the filters' reach afterwards (`dilate`). Returns the plane unchanged when all are finite,
 * and the largest |value| of the finite pixels (the image's intensity scale) found in the same pass.
 */
export function fillNonFinite(p: Plane): { plane: Plane; bad: Uint8Array | null; count: number; largest: number } {
  const d = p.data;
  let count = 0, largest = 0;
  for (let i = 0; i < d.length; i++) {
    const a = Math.abs(d[i]);
    // NaN fails both tests; infinity only the first.
    if (a < Infinity) { if (a > largest) largest = a; } else count++;
  }
  if (count === 0) return { plane: p, bad: null, count: 0, largest };
  let sum = 0;
  for (let i = 0; i < d.length; i++) if (Number.isFinite(d[i])) sum += d[i];
  const fill = count < d.length ? sum / (d.length - count) : 0;
  const bad = new Uint8Array(d.length), data = new Float32Array(d.length);
  for (let i = 0; i < d.length; i++) {
    if (Number.isFinite(d[i])) data[i] = d[i];
    else { data[i] = fill; bad[i] = 1; }
  }
  return { plane: { width: p.width, height: p.height, data }, bad, count, largest };
}

/** The field's warning after `count` non-finite pixels were filled and they and `lost` more within the filters' reach masked. */
export const nonFiniteWarning = (count: number, lost: number): string =>
  `${count} pixels were not finite numbers (NaN or infinity); they and ${lost} pixels within the filter reach were masked`;

/** Marks every pixel within a square of half-side r around a marked pixel (two sweeps per axis). */
export function dilate(m: Uint8Array, width: number, height: number, r: number): Uint8Array {
  const tmp = new Uint8Array(m.length), out = new Uint8Array(m.length);
  const sweep = (src: Uint8Array, dst: Uint8Array, lines: number, len: number, at: (line: number, k: number) => number) => {
    for (let a = 0; a < lines; a++) {
      let last = -Infinity;
      for (let k = 0; k < len; k++) { if (src[at(a, k)]) last = k; if (k - last <= r) dst[at(a, k)] = 1; }
      last = Infinity;
      for (let k = len - 1; k >= 0; k--) { if (src[at(a, k)]) last = k; if (last - k <= r) dst[at(a, k)] = 1; }
    }
  };
  sweep(m, tmp, height, width, (y, x) => y * width + x);
  sweep(tmp, out, width, height, (x, y) => y * width + x);
  return out;
}
