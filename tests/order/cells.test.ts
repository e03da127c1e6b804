/**
 * The cells the direction lines draw (cellOrders) are the order statistics of src/order: each cell's director
 * and S_2D equal orderParameters' point estimates for that cell as a region, with the coherency (texture) or
 * confidence (optical reading) weighting.
 */
import { describe, expect, it } from 'vitest';
import { cellOrders, orderParameters, seededRandom } from '../../src/order/index.ts';
import type { OrientationField } from '../../src/orientation/types.ts';
import { fieldOf } from '../support/fields.ts';
import { directionLines } from '../../app/worker/pictures.ts';

/** Angles scattered about a direction that drifts across the image, weights in (0, 1), some pixels masked. */
function scattered(method: OrientationField['method'], seed: number): OrientationField {
  const rand = seededRandom(seed);
  const f = fieldOf(36, 24, (x, y) => 10 + 2 * x - y + 40 * (rand() - 0.5), () => 0.05 + 0.95 * rand());
  for (let i = 0; i < f.mask.length; i++) if (rand() < 0.1) f.mask[i] = 0;
  return { ...f, method, ambiguity: 'none' };
}

/** A mask of one cell of the grid. */
function cellMask(f: OrientationField, x0: number, y0: number, cell: number): Uint8Array {
  const m = new Uint8Array(f.width * f.height);
  for (let y = y0; y < y0 + cell; y++) m.fill(1, y * f.width + x0, y * f.width + x0 + cell);
  return m;
}

describe('cellOrders', () => {
  for (const [method, weighting] of [['texture', 'coherency'], ['plate', 'confidence']] as const) {
    it(`gives orderParameters' director and S_2D of each cell (${method} field, ${weighting} weights)`, () => {
      const f = scattered(method, method === 'texture' ? 3 : 4);
      const cell = 6;
      const cells = cellOrders(f, cell, 0);
      // 36 x 24 px in 6-px cells: 6 x 4 whole cells (construction).
      expect(cells).toHaveLength(24);
      for (const c of cells) {
        const x0 = c.x + 0.5 - cell / 2, y0 = c.y + 0.5 - cell / 2;
        const s = orderParameters(f, { weighting, region: cellMask(f, x0, y0, cell), blockPx: cell });
        expect(c.order2D).toBeCloseTo(s.order2D.order, 5);
        // Directors compared as axes (mod 180 deg).
        const d = ((c.directorDeg - s.directorDeg) % 180 + 270) % 180 - 90;
        expect(Math.abs(d)).toBeLessThan(1e-3);
      }
    });
  }

  it('leaves out a cell that is almost all masked, and draws each usable cell\'s direction', () => {
    // Left half: every pixel at 30 deg; right half masked but for one stray pixel per 10 x 10 cell (construction).
    const f = fieldOf(80, 40, (x) => (x < 40 ? 30 : 0), () => 0.9);
    for (let y = 0; y < 40; y++) for (let x = 40; x < 80; x++) f.mask[y * 80 + x] = x % 10 === 3 && y % 10 === 3 ? 1 : 0;
    const lines = directionLines(f, 8);
    // 80 px over 8 cells: 10 px cells, 4 x 4 on the usable left half, none on the masked right half.
    expect(lines).toHaveLength(16);
    for (const l of lines) {
      expect(l.x).toBeLessThan(40);
      expect(l.angleDeg).toBeCloseTo(30, 4);
      expect(l.order2D).toBeCloseTo(1, 6);
    }
  });
});
