import { seededRandom } from './random.ts';

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

export interface BootstrapOptions {
  /** Resamples. Default 400. */
  replicates?: number;
  seed?: number;
  /** Above this many blocks, neighbouring blocks are joined into larger units. Default 1000. */
  maxBlocks?: number;
}

/**
 * Block bootstrap (Kunsch 1989; Carlstein 1986, from memory): blocks of neighbouring pixels are
 * resampled with replacement, so the interval keeps the spatial correlation that the structure
 * tensor's integration window puts between neighbours. Returns the replicate statistics.
 */
export function bootstrapReplicates(b: BlockSums, stat: (m: Moments) => number, o: BootstrapOptions = {}): Float64Array {
  const R = o.replicates ?? 400;
  const rand = seededRandom(o.seed ?? 20261202);
  const units = coarsen(b, o.maxBlocks ?? 1000);
  const m = units.w.length;
  const out = new Float64Array(R);
  if (m === 0) return out.fill(NaN);
  for (let r = 0; r < R; r++) {
    let w = 0, wc = 0, ws = 0, n = 0;
    for (let k = 0; k < m; k++) {
      const i = Math.floor(rand() * m);
      w += units.w[i]; wc += units.wc[i]; ws += units.ws[i]; n += units.n[i];
    }
    out[r] = stat({ w, wc, ws, n });
  }
  return out;
}

/**
 * Joins runs of consecutive blocks into larger units when there are more than maxBlocks. Blocks are
 * listed band by band, left to right, so a run is a horizontal strip of neighbours: a coarser block,
 * still longer than the correlation length, which keeps the bootstrap valid and its cost bounded.
 */
function coarsen(b: BlockSums, maxBlocks: number): BlockSums {
  const live: number[] = [];
  for (let i = 0; i < b.w.length; i++) if (b.n[i] > 0) live.push(i);
  const k = Math.max(1, Math.ceil(live.length / maxBlocks));
  const m = Math.ceil(live.length / k);
  const out: BlockSums = { w: new Float64Array(m), wc: new Float64Array(m), ws: new Float64Array(m), n: new Uint32Array(m) };
  for (let j = 0; j < live.length; j++) {
    const u = Math.floor(j / k), i = live[j];
    out.w[u] += b.w[i]; out.wc[u] += b.wc[i]; out.ws[u] += b.ws[i]; out.n[u] += b.n[i];
  }
  return out;
}

/** Percentile interval of finite replicates, [2.5 %, 97.5 %] by default. */
export function percentileInterval(rep: Float64Array, level = 0.95): [number, number] {
  const v = Array.from(rep).filter(Number.isFinite).sort((x, y) => x - y);
  if (v.length === 0) return [NaN, NaN];
  const lo = (1 - level) / 2;
  const at = (q: number) => {
    const p = q * (v.length - 1), i = Math.floor(p), f = p - i;
    return i + 1 < v.length ? v[i] * (1 - f) + v[i + 1] * f : v[i];
  };
  return [at(lo), at(1 - lo)];
}

/** Number of blocks that hold at least one pixel. */
export function liveBlocks(b: BlockSums): number {
  let k = 0;
  for (let i = 0; i < b.n.length; i++) if (b.n[i] > 0) k++;
  return k;
}
