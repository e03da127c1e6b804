import { describe, expect, it } from 'vitest';
import { valuesOfRanks } from '../../src/optics/index.ts';
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
});
