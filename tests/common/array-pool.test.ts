import { describe, expect, it } from 'vitest';
import { giveBack, takeFloat32, takeInt32, takeUint8 } from '../../src/common/index.ts';

/**
 * The array pool (src/common/arrayPool.ts) hands an array given back to the next taker of the same kind and
 * length: zeroed unless the taker says it writes every element first. Views of part of a buffer and arrays
 * below its size threshold are never pooled (another owner may still hold their buffer).
 */
describe('array pool', () => {
  it('hands back an array given back, zeroed or as left', () => {
    const a = takeFloat32(300_000);
    a.fill(7);
    giveBack(a);
    const b = takeFloat32(300_000, false);
    expect(b).toBe(a);
    expect(b[123]).toBe(7);
    giveBack(b);
    const c = takeFloat32(300_000);
    expect(c).toBe(a);
    expect(c.every((v) => v === 0)).toBe(true);
  });

  it('keeps kinds and lengths apart', () => {
    const a = takeUint8(400_000);
    giveBack(a);
    expect(takeFloat32(100_000)).not.toBe(a);
    expect(takeUint8(400_001)).not.toBe(a);
    expect(takeUint8(400_000)).toBe(a);
    const b = takeInt32(100_000);
    giveBack(b);
    expect(takeFloat32(100_000)).not.toBe(b);
    expect(takeInt32(100_000)).toBe(b);
  });

  it('never pools views of part of a buffer, nor small arrays', () => {
    const whole = new Uint8Array(600_000), view = whole.subarray(0, 300_000);
    giveBack(view);
    expect(takeUint8(300_000)).not.toBe(view);
    const small = new Uint8Array(1000);
    giveBack(small);
    expect(takeUint8(1000)).not.toBe(small);
  });
});
