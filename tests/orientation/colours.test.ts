/**
 * The orientation picture's pixels made by the kernel straight from cos 2 theta and sin 2 theta
 * (orientationColours, src/orientation/derivedLayers.ts) against the report's own rule applied to the angle layer
 * (orientationRgba(anglesOf(cos2, sin2), ...), src/report/colourMap.ts, itself tested against the per-byte rule
 * in tests/report): the same bytes, for every kind of value a field can hold and any length.
 */
import { describe, expect, it } from 'vitest';
import { orientationColours } from '../../src/orientation/index.ts';
import { anglesOf } from '../../src/orientation/derivedLayers.ts';
import { loadTensorKernel } from '../../src/wasm/index.ts';
import { orientationColourTable, orientationRgba } from '../../src/report/index.ts';
import { rng } from '../support/synthetic.ts';

describe('orientationColours', () => {
  it('gives orientationRgba\'s bytes of the angle layer, edge values and band ends included', async () => {
    await loadTensorKernel();
    const random = rng(5);
    // Doubled-angle pairs: on the axes, signed zeros, both zero, tiny and large, and random directions.
    const special = [[1, 0], [-1, 0], [0, 1], [0, -1], [0, 0], [-0, 0], [0, -0], [-0, -0], [1e-30, -1e-30], [-3, 1e-8], [-1, -1e-7], [-1, 1e-7], [NaN, 1], [1, NaN]];
    for (const n of [1, 3, 4, 17, 65_536 + 5, 140_001]) {
      const cos2 = new Float32Array(n), sin2 = new Float32Array(n), coherency = new Float32Array(n), mask = new Uint8Array(n);
      const weights = [NaN, -1, 0, 1e-9, 0.4980392, 0.5, 0.99, 1, 2, Infinity];
      for (let i = 0; i < n; i++) {
        const t = 2 * Math.PI * random();
        [cos2[i], sin2[i]] = i < special.length ? special[i] : [Math.cos(t), Math.sin(t)];
        coherency[i] = i < weights.length ? weights[i] : random();
        mask[i] = i < 2 * special.length ? 1 : random() < 0.9 ? 1 : 0;
      }
      const table = orientationColourTable();
      for (const alphaMax of [255, 180]) {
        const want = orientationRgba(anglesOf(cos2, sin2), coherency, mask, alphaMax);
        const got = orientationColours(cos2, sin2, coherency, mask, table, alphaMax)!;
        expect(Buffer.from(got.buffer).equals(Buffer.from(want.buffer)), `n ${n}, alphaMax ${alphaMax}`).toBe(true);
        // Into an array that held another picture: every byte is written.
        const reused = orientationColours(cos2, sin2, coherency, mask, table, alphaMax, new Uint8ClampedArray(4 * n).fill(0xab))!;
        expect(Buffer.from(reused.buffer).equals(Buffer.from(want.buffer)), `n ${n}, alphaMax ${alphaMax}, reused`).toBe(true);
      }
    }
  });
});
