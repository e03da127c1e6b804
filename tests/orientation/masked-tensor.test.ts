import { describe, it, expect } from 'vitest';
import { analyseOrientation } from '../../src/analyses/index.ts';
import { recomputeWithCertainty, withFieldPatch } from '../../src/orientation/index.ts';
import type { Image } from '../../src/image/types.ts';

/**
 * Normalised (differential) convolution next to excluded pixels (docs/methods.md §10.6; Knutsson & Westin 1993).
 * Construction: a plane I = 0.5 + a x + b y on the left part of the frame, a dark wall (0.02) on the right. Any
 * symmetric derivative filter reads a plane's gradient exactly, as D (a, b) with D the filter's response to a ramp,
 * so far from the wall the ordinary field has strength |D (a, b)|^2 and coherency 1, its angle perpendicular to
 * (a, b). With the wall's intensities given certainty 0, every pixel up to the wall must read the same: the plane
 * fitted to the certain intensities has the plane's own slope. Without the fit (the filter run across the wall) the
 * pixels whose filter reaches the wall read the step instead.
 */
function planeBesideWall(a: number, b: number, wallX: number): Image {
  const W = 96, H = 64;
  const data = new Float32Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) data[y * W + x] = x >= wallX ? 0.02 : 0.5 + a * x + b * y;
  return { width: W, height: H, channels: 1, planes: [data], bitDepth: 32, encoding: 'linear', source: { name: 'plane-beside-wall' } };
}

describe('recomputeWithCertainty', () => {
  for (const derivative of ['gaussian', 'sobel'] as const) {
    it(`reads a plane's own gradient right up to excluded pixels (${derivative} derivative)`, async () => {
      const a = 0.004, b = 0.0025, wallX = 60;
      const img = planeBesideWall(a, b, wallX);
      const { field } = await analyseOrientation(img, { derivative, sigmaPx: 2 });
      const W = img.width, H = img.height, plane = { width: W, height: H, data: img.planes[0] };
      const certainty = new Uint8Array(W * H), pixels: number[] = [];
      for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
        if (x < wallX) certainty[y * W + x] = 1;
        if (x < wallX && x >= wallX - 20) pixels.push(y * W + x);
      }
      const patch = recomputeWithCertainty(plane, field, certainty, pixels);
      const before = { strength: Float32Array.from(field.strength!), angle: Float32Array.from(field.angleRad) };
      // Reference: the ordinary field far from the wall and from the frame's edges (x 20, y 32).
      const ref = 32 * W + 20;
      const refStrength = field.strength![ref];
      // The texture angle runs perpendicular to the gradient (a, b) (x right, y down); angles are counted with y up,
      // so the perpendicular (b, -a) in image coordinates is at atan2(a, b).
      const perpendicular = Math.atan2(a, b);
      const wrap = (d: number) => Math.abs(Math.atan2(Math.sin(2 * d), Math.cos(2 * d)) / 2);
      expect(wrap(field.angleRad[ref] - perpendicular)).toBeLessThan(1e-3);
      let worstStrength = 0, worstAngle = 0, unpatched = 0;
      withFieldPatch(field, patch, (out) => {
        for (let y = 16; y < 48; y++) for (let x = wallX - 12; x < wallX; x++) {
          const i = y * W + x;
          worstStrength = Math.max(worstStrength, Math.abs(out.strength![i] / refStrength - 1));
          worstAngle = Math.max(worstAngle, wrap(out.angleRad[i] - perpendicular));
        }
      });
      for (let y = 16; y < 48; y++) for (let x = wallX - 12; x < wallX; x++) unpatched = Math.max(unpatched, Math.abs(field.strength![y * W + x] / refStrength - 1));
      // The field is lent, not changed: every value is back after the patch's use.
      expect(field.strength!.every((v, i) => Object.is(v, before.strength[i]))).toBe(true);
      expect(field.angleRad.every((v, i) => Object.is(v, before.angle[i]))).toBe(true);
      expect(worstStrength).toBeLessThan(1e-3);
      expect(worstAngle).toBeLessThan(1e-3);
      // The ordinary field reads the step there (many times the plane's strength): the check can fail.
      expect(unpatched).toBeGreaterThan(1);
    });
  }
});
