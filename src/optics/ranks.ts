/**
 * Order statistics of float32 pixel values without copying or sorting them: a two-pass radix select on the
 * values' bit patterns (the MSD radix method of Knuth, The Art of Computer Programming vol. 3, 5.2.5, used for
 * selection). Mapped to unsigned keys (sign bit flipped for positive values, every bit for negative ones) the
 * IEEE 754 bit patterns sort as the values do, so a histogram of the upper 16 bits finds the bucket that holds
 * each wanted rank and a second histogram of the lower 16 bits inside it finds the exact value: the same value a
 * sort would put at that rank, in two passes over the pixels and 0.5 MB of counts, whatever their number. The
 * passes run in the optics kernel (src/wasm/opticsKernel.as.ts: rankHigh, rankLow, with the sort key u XOR ((u >> 31) |
 * 0x80000000): every bit flipped for a negative value, the sign bit for a positive one).
 */

import { opticsKernel, OpticsLayout, type OpticsKernelExports } from '../wasm/index.ts';

const HALF = 1 << 16;

/** The float32 value of a sort key. */
function valueOfKey(key: number): number {
  const u = key & 0x80000000 ? key & 0x7fffffff : ~key >>> 0;
  return new Float32Array(Uint32Array.of(u).buffer)[0];
}

/** Which pixels count: mask 1 and, with `minOf`, minOf[i] >= min. */
export interface RankSelection {
  mask: Uint8Array;
  minOf?: Float32Array;
  min?: number;
}

/**
 * The first pass's counts over a selection (rankCounts): the number selected and their keys' counts by the upper 16
 * bits, from which valuesOfCountedRanks finds values of any ranks. `uncount` takes a pixel out when the selection
 * loses it (its mask set to 0), so the counts stay those of the selection as it is.
 */
export interface RankCounts {
  /** The values' bit patterns (a view of them). */
  bits: Uint32Array;
  sel: RankSelection;
  count: number;
  high: Int32Array;
}

/**
 * Sum (float64, in pixel order) of the selected values and how many are at least a threshold, counted in rankCounts'
 * pass for a caller that needs them too.
 */
export interface SelectionSums { sum: number; atLeast: number; countAtLeast: number }

/** The first pass of the rank selection over the selected pixels' values (with `sums`, their sum and count at least sums.atLeast). */
export function rankCounts(values: Float32Array, sel: RankSelection, sums?: SelectionSums): RankCounts {
  const bits = new Uint32Array(values.buffer, values.byteOffset, values.length);
  const high = new Int32Array(HALF);
  const count = highCounts(bits, sel.mask, sel.minOf ?? null, sel.min ?? -Infinity, high, sums ?? null);
  return { bits, sel, count, high };
}

/** Takes pixel i, selected when the counts were made, out of them (its selection is about to be dropped). */
export function uncount(c: RankCounts, i: number): void {
  c.high[keyOf(c.bits[i]) >>> 16]--;
  c.count--;
}

/** The unsigned sort key of a float32 bit pattern (the kernel's sortKey). */
const keyOf = (u: number): number => (u ^ ((u >> 31) | 0x80000000)) >>> 0;

/**
 * Values of ranks `ranks` (0-based, ascending; each below the number selected) among the selected pixels'
 * values, as a sort of those values would give them; `ranks` may be a function of the number selected (counted
 * in the same pass). NaN values must not be selected.
 */
export function valuesOfRanks(values: Float32Array, sel: RankSelection, ranksOf: number[] | ((count: number) => number[])): number[] {
  const c = rankCounts(values, sel);
  return valuesOfCountedRanks(c, typeof ranksOf === 'function' ? ranksOf(c.count) : ranksOf);
}

/** valuesOfRanks's second pass, from the counts of the first (the selection as it is now: see uncount). */
export function valuesOfCountedRanks(c: RankCounts, ranks: number[]): number[] {
  if (ranks.length === 0) return [];
  const { bits, high, sel } = c;
  // The bucket of each rank, and the rank within it.
  const buckets = ranks.map((r) => {
    let b = 0, below = 0;
    while (below + high[b] <= r) below += high[b++];
    return { bucket: b, rank: r - below };
  });
  const wanted = [...new Set(buckets.map((b) => b.bucket))];
  // The wanted buckets' low-half counts side by side (and four int32s the kernel adds its uncounted lanes to); slot: a
  // bucket's offset among them, -1 if not wanted.
  const low = new Int32Array(wanted.length * HALF + 4);
  const slot = new Int32Array(HALF).fill(-1);
  wanted.forEach((b, k) => { slot[b] = k * HALF; });
  lowCounts(bits, sel.mask, sel.minOf ?? null, sel.min ?? -Infinity, slot, wanted, low);
  return buckets.map(({ bucket, rank }) => {
    const o = slot[bucket];
    let b = 0, below = 0;
    while (below + low[o + b] <= rank) below += low[o + b++];
    return valueOfKey(((bucket << 16) | b) >>> 0);
  });
}

/** Pixels per call of the optics kernel's counting passes. */
const RANK_BLOCK_PX = 1 << 15;

/**
 * One counting pass of the optics kernel (src/wasm/opticsKernel.as.ts: rankHigh, rankLow) over every pixel, a block at a
 * time: the values' bits, the mask and minOf copied into its memory, the counts made there (`counts` int32s, starting
 * from 0) and copied into `out`. `extra`: int32s the pass reads besides (the wanted buckets' slots), or null; `stats`:
 * 16 bytes of the pass's own sums (from 0), copied into `statsOut`.
 */
function countPass(bits: Uint32Array, mask: Uint8Array, minOf: Float32Array | null, extra: Int32Array | null, out: Int32Array, statsOut: DataView | null,
  run: (k: OpticsKernelExports, at: { bits: number; mask: number; minOf: number; extra: number; counts: number; stats: number }, len: number) => number): number {
  const k = opticsKernel(), mem = new OpticsLayout(k), n = bits.length, B = Math.min(Math.max(n, 1), RANK_BLOCK_PX);
  const at = {
    bits: mem.reserve(4 * B), mask: mem.reserve(B), minOf: minOf ? mem.reserve(4 * B) : 0, extra: extra ? mem.reserve(4 * extra.length) : 0,
    counts: mem.reserve(4 * out.length), stats: statsOut ? mem.reserve(16) : 0,
  };
  mem.commit();
  if (extra) mem.i32(at.extra, extra.length).set(extra);
  mem.i32(at.counts, out.length).fill(0);
  if (statsOut) mem.u8(at.stats, 16).fill(0);
  let total = 0;
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0), i1 = i0 + len;
    new Uint32Array(k.memory.buffer, at.bits, len).set(bits.subarray(i0, i1));
    mem.u8(at.mask, len).set(mask.subarray(i0, i1));
    if (minOf) mem.f32(at.minOf, len).set(minOf.subarray(i0, i1));
    total += run(k, at, len);
  }
  out.set(mem.i32(at.counts, out.length));
  if (statsOut) new Uint8Array(statsOut.buffer, statsOut.byteOffset, 16).set(mem.u8(at.stats, 16));
  return total;
}

/**
 * Counts of the selected pixels' keys by their upper 16 bits into `high`; returns the number selected. With `sums`,
 * sets its sum and countAtLeast.
 */
function highCounts(bits: Uint32Array, mask: Uint8Array, minOf: Float32Array | null, min: number, high: Int32Array, sums: SelectionSums | null): number {
  const stats = sums ? new DataView(new ArrayBuffer(16)) : null;
  const count = countPass(bits, mask, minOf, null, high, stats, (k, at, len) => k.rankHigh(at.bits, at.mask, at.minOf, min, len, at.counts, at.stats, sums?.atLeast ?? 0));
  if (sums && stats) { sums.sum = stats.getFloat64(0, true); sums.countAtLeast = stats.getInt32(8, true); }
  return count;
}

/**
 * Counts of the selected pixels' keys in the wanted buckets by their lower 16 bits, at low[slot[bucket] + lower]; with
 * four or fewer wanted, the kernel compares four keys at a time with them first.
 */
function lowCounts(bits: Uint32Array, mask: Uint8Array, minOf: Float32Array | null, min: number, slot: Int32Array, wanted: number[], low: Int32Array): void {
  const any = wanted.length > 4, w = [0, 1, 2, 3].map((j) => (j < wanted.length ? wanted[j] : -1));
  countPass(bits, mask, minOf, slot, low, null, (k, at, len) => { k.rankLow(at.bits, at.mask, at.minOf, min, len, at.extra, at.counts, any ? 1 : 0, w[0], w[1], w[2], w[3]); return 0; });
}

/**
 * A reading's usable pixels (mask 1) by the readings they were given: the plate reading and the plate pair give every
 * pixel of one colour cell (or pair of cells) the same reading, so their order statistics follow from each reading's
 * values and how many pixels got it. `confidenceSum`: the usable pixels' confidence summed in pixel order (float64).
 */
export interface ReadingCounts {
  confidence: Float32Array;
  retardanceNm: Float32Array;
  /** Usable pixels per reading (none listed with 0). */
  pixels: Int32Array;
  confidenceSum: number;
}

/**
 * Values at ranks `ranks` (0-based, each below the sum of `counts`) of the multiset holding values[j] counts[j] times
 * (not at all where picked(j) is false), as valuesOfRanks finds them among pixel values: the same two radix passes over
 * the values' sort keys, each value counted counts[j] times.
 */
export function valuesOfRanksOfCounted(values: Float32Array, counts: Int32Array, ranks: number[], picked: (j: number) => boolean = () => true): number[] {
  const bits = new Uint32Array(values.buffer, values.byteOffset, values.length), m = values.length;
  const high = new Float64Array(HALF);
  for (let j = 0; j < m; j++) if (picked(j)) high[keyOf(bits[j]) >>> 16] += counts[j];
  const buckets = ranks.map((r) => {
    let b = 0, below = 0;
    while (below + high[b] <= r) below += high[b++];
    return { bucket: b, rank: r - below };
  });
  // The wanted buckets' low-half counts side by side; slot: a bucket's offset among them, -1 if not wanted.
  const wanted = [...new Set(buckets.map((b) => b.bucket))], slot = new Int32Array(HALF).fill(-1);
  wanted.forEach((b, k) => { slot[b] = k * HALF; });
  const low = new Float64Array(wanted.length * HALF);
  for (let j = 0; j < m; j++) {
    const key = keyOf(bits[j]), o = slot[key >>> 16];
    if (o >= 0 && picked(j)) low[o + (key & 0xffff)] += counts[j];
  }
  return buckets.map(({ bucket, rank }) => {
    const o = slot[bucket];
    let b = 0, below = 0;
    while (below + low[o + b] <= rank) below += low[o + b++];
    return valueOfKey(((bucket << 16) | b) >>> 0);
  });
}
