/**
 * Per-block sums of weighted doubled-angle components: the sufficient statistics of every order
 * parameter here. c and s are cos 2(theta - ref) and sin 2(theta - ref) for a chosen reference axis.
 */
export interface BlockSums {
  w: Float64Array;
  wc: Float64Array;
  ws: Float64Array;
  /** Pixels per block. */
  n: Uint32Array;
  /** Block column and row on the image's block grid: neighbouring blocks are correlated near their shared edge. */
  bx: Int32Array;
  by: Int32Array;
  /**
   * Stratum of each block where a region is the union of strata (a profile's band: the pieces of its bins, numbered
   * from 0); the variance then takes residuals about each stratum's own ratio (src/order/intervals.ts).
   */
  strata?: Int32Array;
}

export interface Moments { w: number; wc: number; ws: number; n: number }

export function totalMoments(b: BlockSums, pick?: ArrayLike<number>): Moments {
  let w = 0, wc = 0, ws = 0, n = 0;
  const m = pick ? pick.length : b.w.length;
  for (let k = 0; k < m; k++) {
    const i = pick ? pick[k] : k;
    w += b.w[i]; wc += b.wc[i]; ws += b.ws[i]; n += b.n[i];
  }
  return { w, wc, ws, n };
}

/** S_axis = sum w cos 2(theta - axis) / sum w. */
export const axisOrderOf = (m: Moments): number => (m.w > 0 ? m.wc / m.w : NaN);
/** S_2D = |sum w exp(2i theta)| / sum w. */
export const freeOrderOf = (m: Moments): number => (m.w > 0 ? Math.hypot(m.wc, m.ws) / m.w : NaN);

/** Number of blocks that hold at least one pixel. */
export function liveBlocks(b: BlockSums): number {
  let k = 0;
  for (let i = 0; i < b.n.length; i++) if (b.n[i] > 0) k++;
  return k;
}
