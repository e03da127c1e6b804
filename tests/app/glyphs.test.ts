import { describe, expect, it } from 'vitest';
import { fieldGlyphs } from '../../app/worker/pictures.ts';
import type { OrientationField } from '../../src/orientation/index.ts';

/** A field whose left half holds rods at `deg` and whose right half is masked but for one stray pixel per 10 x 10 cell. */
function halfField(deg: number): OrientationField {
  const width = 80, height = 40, n = width * height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n).fill(0.9), mask = new Uint8Array(n);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    const i = y * width + x;
    angleRad[i] = x < 40 ? (deg * Math.PI) / 180 : 0;
    mask[i] = x < 40 || (x % 10 === 3 && y % 10 === 3) ? 1 : 0;
  }
  return { width, height, angleRad, confidence, mask, method: 'plate', ambiguity: 'none', options: {}, warnings: [] };
}

describe('fieldGlyphs', () => {
  it('draws the direction of each usable cell, and no line where a cell is almost all masked', () => {
    const glyphs = fieldGlyphs(halfField(30), 8);
    // 80 px over 8 cells: 10 px cells, 4 x 4 on the usable left half, none on the masked right half.
    expect(glyphs).toHaveLength(16);
    for (const g of glyphs) {
      expect(g.x).toBeLessThan(40);
      // every pixel of a cell at 30 deg: the mean direction is 30 deg and its length 1 (construction)
      expect(g.angleDeg).toBeCloseTo(30, 4);
      expect(g.coherency).toBeCloseTo(1, 6);
    }
  });
});
