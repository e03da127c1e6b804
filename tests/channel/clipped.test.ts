import { describe, it, expect } from 'vitest';
import { channelProfile, CLIPPED_SHARE_LIMIT } from '../../src/channel/index.ts';
import type { OrientationField } from '../../src/orientation/types.ts';

/**
 * Bins and bands with clipped pixels (an input image at full scale) give no S: which pixels clip depends on
 * their angle, so the rest would be a biased sample (docs/methods.md, "Clipped pixels"). A horizontal
 * channel between y = 0 and y = 100 with 10 bins (10 rows each); every pixel along the axis (S = 1 by the
 * definition S = <cos 2(theta - axis)>) and readable except where the test clips some.
 */
const W = 120, H = 101;
function field(clip: (x: number, y: number) => boolean): OrientationField {
  const n = W * H, clipped = new Uint8Array(n), mask = new Uint8Array(n).fill(1);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) if (clip(x, y)) { clipped[y * W + x] = 1; mask[y * W + x] = 0; }
  return { width: W, height: H, angleRad: new Float32Array(n), confidence: new Float32Array(n).fill(1), mask, clipped, method: 'plate-pair', ambiguity: 'none', options: {}, warnings: [] };
}
const walls = { walls: [{ x1: 0, y1: 0, x2: W - 1, y2: 0 }, { x1: 0, y1: 100, x2: W - 1, y2: 100 }] as [never, never] };

describe('clipped pixels in a channel profile', () => {
  it('withholds the bins and bands with more than the limit clipped, names them, and gives the rest', () => {
    // Rows 32-35 clipped across the whole length: 4 of bin 3's 10 rows (40 %), in the core band (|s| < 0.5 is
    // rows 26-74 here, 49 rows: 4/49 = 8 %).
    const p = channelProfile(field((_, y) => y >= 32 && y <= 35), walls, { bins: 10, axisDeg: 0, weighting: 'none' });
    expect(p.bins[3].order).toBeNaN();
    expect(p.bins[3].ciLow).toBeNaN();
    expect(p.core.order).toBeNaN();
    expect(p.coreSkinRatio).toBeNaN();
    for (const k of [0, 1, 2, 4, 5, 6, 7, 8, 9]) expect(p.bins[k].order).toBeCloseTo(1, 9);
    expect(p.skin.order).toBeCloseTo(1, 9);
    expect(p.notDetermined?.clipped).toMatch(/bin 3 40 %.*core 8 %/);
    expect(p.notDetermined?.clipped).toMatch(/Lower the exposure/);
  });

  it('gives S where the clipped share is at or below the limit', () => {
    // One pixel of bin 5's 1200 (0.08 %) is under the 1 % limit.
    expect(CLIPPED_SHARE_LIMIT).toBe(0.01);
    const p = channelProfile(field((x, y) => x === 60 && y === 55), walls, { bins: 10, axisDeg: 0, weighting: 'none' });
    expect(p.bins[5].order).toBeCloseTo(1, 9);
    expect(p.notDetermined).toBeUndefined();
  });
});
