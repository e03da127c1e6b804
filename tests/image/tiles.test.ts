import { describe, expect, it } from 'vitest';
import { isInputError } from '../../src/common/errors.ts';
import type { Plane } from '../../src/common/plane.ts';
import { cropPlane, pasteInner, planTiles } from '../../src/image/index.ts';

/** A reproducible test plane (linear congruential sequence, Numerical Recipes constants). */
function noisePlane(width: number, height: number, seed = 7): Plane {
  const data = new Float32Array(width * height);
  let s = seed;
  for (let i = 0; i < data.length; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    data[i] = s / 2 ** 32;
  }
  return { width, height, data };
}

/**
 * A neighbourhood operation of radius r: mean over the (2r+1)^2 window with edge samples repeated
 * (clamped), summed in the same order wherever it runs, so tiled and whole runs can agree bit for bit.
 */
function boxMean(p: Plane, r: number): Plane {
  const out = new Float32Array(p.data.length);
  for (let y = 0; y < p.height; y++) {
    for (let x = 0; x < p.width; x++) {
      let sum = 0;
      for (let dy = -r; dy <= r; dy++) {
        const yy = Math.min(p.height - 1, Math.max(0, y + dy));
        for (let dx = -r; dx <= r; dx++) {
          const xx = Math.min(p.width - 1, Math.max(0, x + dx));
          sum += p.data[yy * p.width + xx];
        }
      }
      out[y * p.width + x] = sum / (2 * r + 1) ** 2;
    }
  }
  return { width: p.width, height: p.height, data: out };
}

function tiled(p: Plane, tileSize: number, overlapPx: number, op: (t: Plane) => Plane): Plane {
  const dst: Plane = { width: p.width, height: p.height, data: new Float32Array(p.data.length).fill(Number.NaN) };
  for (const tile of planTiles(p.width, p.height, tileSize, overlapPx)) pasteInner(dst, op(cropPlane(p, tile)), tile);
  return dst;
}

describe('planTiles', () => {
  it.each([[1, 1, 5, 2], [37, 23, 8, 3], [64, 64, 16, 0], [100, 7, 33, 10]])(
    'inner regions of a %ix%i plane (tile %i, overlap %i) cover every pixel exactly once', (w, h, size, overlap) => {
      const cover = new Uint8Array(w * h);
      for (const t of planTiles(w, h, size, overlap)) {
        expect(t.x).toBeGreaterThanOrEqual(0);
        expect(t.y).toBeGreaterThanOrEqual(0);
        expect(t.x + t.w).toBeLessThanOrEqual(w);
        expect(t.y + t.h).toBeLessThanOrEqual(h);
        expect(t.innerX - t.x).toBe(Math.min(overlap, t.innerX)); // full overlap unless clipped at the border
        for (let y = t.innerY; y < t.innerY + t.innerH; y++) {
          for (let x = t.innerX; x < t.innerX + t.innerW; x++) cover[y * w + x]++;
        }
      }
      expect(cover.every((c) => c === 1)).toBe(true);
    });

  it('a 100x50 plane with tile 32 and overlap 4 gives 4 x 2 tiles, the first 36 px wide, an inner one 40 px', () => {
    const tiles = planTiles(100, 50, 32, 4);
    expect(tiles).toHaveLength(8); // ceil(100/32) * ceil(50/32)
    expect(tiles[0]).toEqual({ x: 0, y: 0, w: 36, h: 36, innerX: 0, innerY: 0, innerW: 32, innerH: 32 });
    expect(tiles[1]).toEqual({ x: 28, y: 0, w: 40, h: 36, innerX: 32, innerY: 0, innerW: 32, innerH: 32 });
    expect(tiles[7]).toEqual({ x: 92, y: 28, w: 8, h: 22, innerX: 96, innerY: 32, innerW: 4, innerH: 18 });
  });

  it('refuses nonsense sizes with an InputError', () => {
    const bad: [number, number, number, number][] = [[0, 5, 4, 1], [5, 5, 0, 1], [5, 5, 4, -1], [5, 5, 2.5, 1], [Number.NaN, 5, 4, 1]];
    for (const args of bad) {
      let caught: unknown;
      try { planTiles(...args); } catch (e) { caught = e; }
      expect(isInputError(caught), `planTiles(${args.join(', ')})`).toBe(true);
    }
  });
});

describe('tiled processing equals whole-image processing', () => {
  const plane = noisePlane(61, 45);

  it('a per-pixel operation (square root) stitched from tiles equals the whole-image result exactly', () => {
    const sqrt = (p: Plane): Plane => ({ ...p, data: p.data.map(Math.sqrt) });
    expect(tiled(plane, 16, 0, sqrt).data).toEqual(sqrt(plane).data);
  });

  it.each([[1, 1], [3, 3], [3, 5], [2, 8]])(
    'a radius-%i box mean with overlap %i px stitched from 16 px tiles equals the whole-image result exactly', (r, overlap) => {
      expect(tiled(plane, 16, overlap, (t) => boxMean(t, r)).data).toEqual(boxMean(plane, r).data);
    });

  it('with too little overlap (radius 3, overlap 1) the stitched result differs: the test can fail', () => {
    const whole = boxMean(plane, 3).data;
    const stitched = tiled(plane, 16, 1, (t) => boxMean(t, 3)).data;
    expect(stitched.some((v, i) => v !== whole[i])).toBe(true);
  });

  it('cropPlane copies the tile region; pasteInner refuses a result of the wrong size', () => {
    const [t] = planTiles(plane.width, plane.height, 16, 2).slice(1, 2);
    const crop = cropPlane(plane, t);
    expect([crop.width, crop.height]).toEqual([t.w, t.h]);
    expect(crop.data[0]).toBe(plane.data[t.y * plane.width + t.x]);
    expect(crop.data[crop.data.length - 1]).toBe(plane.data[(t.y + t.h - 1) * plane.width + t.x + t.w - 1]);
    expect(() => pasteInner(plane, noisePlane(3, 3), t)).toThrow('tile result is 3x3');
  });
});
