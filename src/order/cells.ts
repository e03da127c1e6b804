import type { OrientationField } from '../orientation/index.ts';
import { doubledAngles } from './doubledAngles.ts';

/** The order of one square cell of a field: its centre in image pixels, its free director and its S_2D. */
export interface CellOrder {
  x: number;
  y: number;
  /** Free director, half the argument of the weighted mean of exp(2i theta), degrees CCW from +x (docs/methods.md §8.1). */
  directorDeg: number;
  /** S_2D = |weighted mean of exp(2i theta)|, in [0, 1]. */
  order2D: number;
}

/**
 * The free director and S_2D of every whole `cellPx` x `cellPx` cell of a field (the direction lines drawn on it),
 * each pixel weighted by the field's per-pixel layer (coherency for a texture field, the reading's confidence for
 * an optical one): the point estimates orderParameters gives for that cell as a region with weighting 'coherency'
 * or 'confidence' (docs/methods.md §8.1, §8.3). A cell counts only when at least `minUsable` of its pixels are
 * usable: a few stray pixels in a masked area (a sample-free background, say) would otherwise draw a confident line.
 */
export function cellOrders(f: OrientationField, cellPx: number, minUsable = 0.25): CellOrder[] {
  const cell = Math.max(1, Math.round(cellPx));
  const { cos2, sin2 } = doubledAngles(f);
  const cells: CellOrder[] = [];
  for (let y0 = 0; y0 + cell <= f.height; y0 += cell) {
    for (let x0 = 0; x0 + cell <= f.width; x0 += cell) {
      let c = 0, s = 0, w = 0, usable = 0;
      for (let y = y0; y < y0 + cell; y++) for (let x = x0; x < x0 + cell; x++) {
        const i = y * f.width + x;
        if (!f.mask[i]) continue;
        usable++;
        const wi = f.confidence[i];
        c += wi * cos2[i];
        s += wi * sin2[i];
        w += wi;
      }
      if (w <= 0 || usable < minUsable * cell * cell) continue;
      cells.push({ x: x0 + cell / 2 - 0.5, y: y0 + cell / 2 - 0.5, directorDeg: (Math.atan2(s, c) / 2) * (180 / Math.PI), order2D: Math.hypot(c, s) / w });
    }
  }
  return cells;
}
