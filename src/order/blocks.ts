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
   * Stratum of each block where a region is the union of strata (a profile's band: each block in the bin of its
   * cell's centre, numbered from 0); the variance then takes residuals about each stratum's own ratio
   * (src/order/intervals.ts).
   */
  strata?: Int32Array;
}

export interface Moments { w: number; wc: number; ws: number; n: number }

/** The blocks of several lists as one, in the lists' order (strata kept when every list has them). */
export function concatBlocks(parts: BlockSums[]): BlockSums {
  const cat = <T extends Float64Array | Uint32Array | Int32Array>(pick: (b: BlockSums) => T, make: (n: number) => T): T => {
    const out = make(parts.reduce((s, b) => s + pick(b).length, 0));
    let at = 0;
    for (const b of parts) { out.set(pick(b), at); at += pick(b).length; }
    return out;
  };
  return {
    w: cat((b) => b.w, (n) => new Float64Array(n)), wc: cat((b) => b.wc, (n) => new Float64Array(n)),
    ws: cat((b) => b.ws, (n) => new Float64Array(n)), n: cat((b) => b.n, (n) => new Uint32Array(n)),
    bx: cat((b) => b.bx, (n) => new Int32Array(n)), by: cat((b) => b.by, (n) => new Int32Array(n)),
    ...(parts.length > 0 && parts.every((b) => b.strata) ? { strata: cat((b) => b.strata!, (n) => new Int32Array(n)) } : {}),
  };
}

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
