/**
 * Order statistics of float32 pixel values without copying or sorting them: a two-pass radix select on the
 * values' bit patterns (the MSD radix method of Knuth, The Art of Computer Programming vol. 3, 5.2.5, used for
 * selection). Mapped to unsigned keys (sign bit flipped for positive values, every bit for negative ones) the
 * IEEE 754 bit patterns sort as the values do, so a histogram of the upper 16 bits finds the bucket that holds
 * each wanted rank and a second histogram of the lower 16 bits inside it finds the exact value: the same value a
 * sort would put at that rank, in two passes over the pixels and 0.5 MB of counts, whatever their number.
 */

const HALF = 1 << 16;

/**
 * Unsigned sort key of a float32 bit pattern: every bit flipped for a negative value, the sign bit for a positive
 * one; without a branch, u XOR ((u >> 31) | 0x80000000), as u >> 31 is all ones for a negative value and 0 else.
 */
const keyOf = (u: number): number => (u ^ ((u >> 31) | 0x80000000)) >>> 0;

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
 * Values of ranks `ranks` (0-based, ascending; each below the number selected) among the selected pixels'
 * values, as a sort of those values would give them; `ranks` may be a function of the number selected (counted
 * in the same pass). NaN values must not be selected.
 */
export function valuesOfRanks(values: Float32Array, sel: RankSelection, ranksOf: number[] | ((count: number) => number[])): number[] {
  const bits = new Uint32Array(values.buffer, values.byteOffset, values.length);
  const mask = sel.mask, minOf = sel.minOf ?? null, min = sel.min ?? -Infinity;
  const high = new Int32Array(HALF);
  const count = highCounts(bits, mask, minOf, min, high);
  const ranks = typeof ranksOf === 'function' ? ranksOf(count) : ranksOf;
  if (ranks.length === 0) return [];
  // The bucket of each rank, and the rank within it.
  const buckets = ranks.map((r) => {
    let b = 0, below = 0;
    while (below + high[b] <= r) below += high[b++];
    return { bucket: b, rank: r - below };
  });
  const wanted = [...new Set(buckets.map((b) => b.bucket))];
  // The wanted buckets' low-half counts side by side; slot: a bucket's offset among them, -1 if not wanted.
  const low = new Int32Array(wanted.length * HALF);
  const slot = new Int32Array(HALF).fill(-1);
  wanted.forEach((b, k) => { slot[b] = k * HALF; });
  lowCounts(bits, mask, minOf, min, slot, low);
  return buckets.map(({ bucket, rank }) => {
    const o = slot[bucket];
    let b = 0, below = 0;
    while (below + low[o + b] <= rank) below += low[o + b++];
    return valueOfKey(((bucket << 16) | b) >>> 0);
  });
}

/*
 * The two passes over the pixels are small functions of their own, so that each is optimised once and kept across
 * calls (a pass inside the caller ran from code compiled for the loop alone, dropped after it at each call).
 */

/** Counts of the selected pixels' keys by their upper 16 bits into `high`; returns the number selected. */
function highCounts(bits: Uint32Array, mask: Uint8Array, minOf: Float32Array | null, min: number, high: Int32Array): number {
  const n = bits.length;
  let count = 0;
  if (minOf) {
    for (let i = 0; i < n; i++) {
      if (!mask[i] || !(minOf[i] >= min)) continue;
      high[keyOf(bits[i]) >>> 16]++;
      count++;
    }
  } else {
    for (let i = 0; i < n; i++) {
      if (!mask[i]) continue;
      high[keyOf(bits[i]) >>> 16]++;
      count++;
    }
  }
  return count;
}

/** Counts of the selected pixels' keys in the wanted buckets by their lower 16 bits, at low[slot[bucket] + lower]. */
function lowCounts(bits: Uint32Array, mask: Uint8Array, minOf: Float32Array | null, min: number, slot: Int32Array, low: Int32Array): void {
  const n = bits.length;
  if (minOf) {
    for (let i = 0; i < n; i++) {
      if (!mask[i] || !(minOf[i] >= min)) continue;
      const key = keyOf(bits[i]), o = slot[key >>> 16];
      if (o >= 0) low[o + (key & 0xffff)]++;
    }
  } else {
    for (let i = 0; i < n; i++) {
      if (!mask[i]) continue;
      const key = keyOf(bits[i]), o = slot[key >>> 16];
      if (o >= 0) low[o + (key & 0xffff)]++;
    }
  }
}
