import { describe, expect, it } from 'vitest';
import { rankCounts, uncount, valuesOfCountedRanks, valuesOfRanks, valuesOfRanksOfCounted } from '../../src/optics/index.ts';
import { seededRandom } from '../../src/order/random.ts';

/** The reference: the selected values sorted ascending (Float64Array sort is numeric), read at the rank. */
function sortedSelection(values: Float32Array, mask: Uint8Array, minOf?: Float32Array, min = -Infinity): Float64Array {
  return Float64Array.from([...values].filter((_, i) => mask[i] && (!minOf || minOf[i] >= min))).sort();
}

describe('valuesOfRanks: order statistics by radix selection', () => {
  const rand = seededRandom(7);
  const kinds: Record<string, () => number> = {
    'uniform [0, 1)': () => rand(),
    'a few repeated values (a 2-nm grid)': () => 2 * Math.floor(rand() * 10),
    'both signs, wide range': () => (rand() - 0.5) * 10 ** (8 * rand() - 4),
    'zeros of both signs and small integers': () => (rand() < 0.5 ? -0 : 0) + Math.round(rand() * 3) - 1,
  };
  for (const [kind, draw] of Object.entries(kinds)) {
    it(`gives the value a sort puts at each rank (${kind})`, () => {
      for (let trial = 0; trial < 20; trial++) {
        const n = 1 + Math.floor(rand() * 4000);
        const values = Float32Array.from({ length: n }, draw);
        const mask = Uint8Array.from({ length: n }, () => (rand() < 0.8 ? 1 : 0));
        const conf = Float32Array.from({ length: n }, () => rand());
        for (const sel of [{ mask }, { mask, minOf: conf, min: 0.5 }]) {
          const ref = sortedSelection(values, mask, sel.minOf, sel.min);
          if (ref.length === 0) continue;
          const ranks = [0, Math.floor(0.1 * (ref.length - 1)), ref.length >> 1, Math.floor(0.99 * (ref.length - 1)), ref.length - 1];
          expect(valuesOfRanks(values, sel, ranks)).toEqual(ranks.map((r) => ref[r] + 0));
          // Ranks given as a function of the number selected (counted in the same pass).
          expect(valuesOfRanks(values, sel, (k) => [k >> 1])).toEqual([ref[ref.length >> 1] + 0]);
        }
      }
    });
  }

  it('gives the same values across the kernel\'s blocks, with the pass\'s sum and count, and after pixels leave the selection', () => {
    // 70001 values (more than two of the kernel's blocks of 32768, not a multiple of 4), most in a few buckets of
    // the upper 16 bits (values near 0.5 and 0.9), so the second pass finds many in the wanted buckets.
    const n = 70001;
    const values = Float32Array.from({ length: n }, () => (rand() < 0.7 ? 0.5 + 1e-3 * rand() : rand() < 0.5 ? 0.9 + 1e-4 * rand() : rand()));
    const mask = Uint8Array.from({ length: n }, () => (rand() < 0.9 ? 1 : 0));
    const sums = { sum: 0, atLeast: 0.5, countAtLeast: 0 };
    const counts = rankCounts(values, { mask }, sums);
    // The reference sum: float64, pixel by pixel in order (the definition), and the count at or above 0.5.
    let sum = 0, above = 0, count = 0;
    for (let i = 0; i < n; i++) if (mask[i]) { sum += values[i]; count++; if (values[i] >= 0.5) above++; }
    expect(counts.count).toBe(count);
    expect(sums.sum).toBe(sum);
    expect(sums.countAtLeast).toBe(above);
    const check = () => {
      const ref = sortedSelection(values, mask);
      // Three ranks (at most four buckets: the quick second pass) and seven (every pixel looked at).
      const few = [Math.floor(0.1 * (ref.length - 1)), ref.length >> 1, Math.floor(0.9 * (ref.length - 1))];
      const many = [0, 1, few[0], few[1], few[2], Math.floor(0.99 * (ref.length - 1)), ref.length - 1];
      for (const ranks of [few, many]) expect(valuesOfCountedRanks(counts, ranks)).toEqual(ranks.map((r) => ref[r] + 0));
    };
    check();
    // Pixels leave the selection (the lowest third of those near 0.5, and every tenth pixel): their counts go with them.
    for (let i = 0; i < n; i++) {
      if (mask[i] && ((values[i] >= 0.5 && values[i] < 0.5 + 3e-4) || i % 10 === 0)) { mask[i] = 0; uncount(counts, i); }
    }
    expect(counts.count).toBe(sortedSelection(values, mask).length);
    check();
  });
});

describe('valuesOfRanksOfCounted: order statistics of values given with their counts', () => {
  it('gives the value a sort of the values, each repeated its count times, puts at each rank (only those picked)', () => {
    const rand = seededRandom(11);
    for (let trial = 0; trial < 30; trial++) {
      const m = 1 + Math.floor(rand() * 3000);
      // Some values repeated among the entries, counts of 0 (an entry no pixel kept) up to a few hundred, both signs.
      const values = Float32Array.from({ length: m }, () => (rand() < 0.3 ? Math.round(rand() * 5) : (rand() - 0.3) * 800));
      const counts = Int32Array.from({ length: m }, () => (rand() < 0.1 ? 0 : Math.floor(rand() * 300)));
      const conf = Float32Array.from({ length: m }, () => rand());
      for (const picked of [() => true, (j: number) => conf[j] >= 0.5]) {
        const ref: number[] = [];
        for (let j = 0; j < m; j++) if (picked(j)) for (let c = 0; c < counts[j]; c++) ref.push(values[j]);
        if (ref.length === 0) continue;
        const sorted = Float64Array.from(ref).sort();
        const ranks = [0, Math.floor(0.1 * (ref.length - 1)), ref.length >> 1, Math.floor(0.9 * (ref.length - 1)), ref.length - 1];
        expect(valuesOfRanksOfCounted(values, counts, ranks, picked)).toEqual(ranks.map((r) => sorted[r]));
      }
    }
  });
});
