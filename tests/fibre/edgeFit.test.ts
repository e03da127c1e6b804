import { describe, expect, it } from 'vitest';
import { fitErfBar, fitErfEdge, normalCdf, parabolaEdgeIndex } from '../../src/fibre/index.ts';
import { gaussianNoise } from './render.ts';

/** Point samples at x = 0..63 of lo + (hi - lo) Phi((x - x0)/sigma): the 1D edge of domain.md §7 / §13. */
function edgeSamples(x0: number, sigma: number, lo: number, hi: number, noiseSd = 0, seed = 1): Float64Array {
  const n = gaussianNoise(seed);
  return Float64Array.from({ length: 64 }, (_, x) => lo + (hi - lo) * normalCdf((x - x0) / sigma) + noiseSd * n());
}

function fitAround(v: Float64Array, halfWindow: number, sigmaStart: number) {
  const xh = parabolaEdgeIndex(v);
  const xs: number[] = [];
  const ys: number[] = [];
  for (let x = Math.ceil(Math.round(xh) - halfWindow); x <= Math.round(xh) + halfWindow; x++) {
    xs.push(x);
    ys.push(v[x]);
  }
  return { xh, fit: fitErfEdge(xs, ys, { x0: xh, sigma: sigmaStart, lo: v[0], hi: v[63] }) };
}

describe('edge location: 3-point parabola on |dI/dx| versus erf edge-spread fit', () => {
  it('parabola has the published worst-case bias, the erf fit none (noise-free, x0 swept over 1 px)', () => {
    // domain.md §7 [C]: parabola max error 0.041 / 0.033 / 0.018 / 0.007 px at sigma 0.7 / 1.0 / 1.5 / 2.5; erf < 1e-6 px
    const rows: [number, number][] = [[0.7, 0.041], [1.0, 0.033], [1.5, 0.018], [2.5, 0.007]];
    for (const [sigma, published] of rows) {
      let worstParabola = 0;
      let worstErf = 0;
      for (let k = 0; k <= 40; k++) {
        const x0 = 31 + k / 40;
        const v = edgeSamples(x0, sigma, 0.2, 0.8);
        const { xh, fit } = fitAround(v, Math.max(6 * sigma, 4), sigma * 1.3);
        worstParabola = Math.max(worstParabola, Math.abs(xh - x0));
        worstErf = Math.max(worstErf, Math.abs(fit.x0 - x0));
        expect(fit.converged).toBe(true);
      }
      expect(worstParabola).toBeGreaterThan(published - 0.002);
      expect(worstParabola).toBeLessThan(published + 0.002);
      expect(worstErf).toBeLessThan(1e-6);
    }
  });

  it('erf fit is about 3x less noisy than the parabola (sigma 1.5, contrast 0.6)', () => {
    // domain.md §7 [C]: SD(x) parabola 0.14 / 0.47 px, erf fit 0.042 / 0.13 px at noise SD 0.01 / 0.03, tolerance +-20 %.
    // The published erf numbers correspond to a fit window of about +-6 sigma (a +-3 sigma window gives ~0.06 / 0.19).
    const rows: [number, number, number][] = [[0.01, 0.14, 0.042], [0.03, 0.47, 0.13]];
    for (const [noiseSd, parabolaSd, erfSd] of rows) {
      const ep: number[] = [];
      const ef: number[] = [];
      for (let seed = 1; seed <= 600; seed++) {
        const x0 = 31 + ((seed * 0.618034) % 1);
        const v = edgeSamples(x0, 1.5, 0.2, 0.8, noiseSd, seed);
        const { xh, fit } = fitAround(v, 9, 1.5);
        ep.push(xh - x0);
        ef.push(fit.x0 - x0);
      }
      const sd = (a: number[]) => {
        const m = a.reduce((s, v) => s + v, 0) / a.length;
        return Math.sqrt(a.reduce((s, v) => s + (v - m) ** 2, 0) / (a.length - 1));
      };
      expect(sd(ep)).toBeGreaterThan(0.8 * parabolaSd);
      expect(sd(ep)).toBeLessThan(1.2 * parabolaSd);
      expect(sd(ef)).toBeGreaterThan(0.8 * erfSd);
      expect(sd(ef)).toBeLessThan(1.2 * erfSd);
    }
  });

  it('fits a falling edge given mirrored coordinates, and recovers sigma, lo and hi', () => {
    const v = Float64Array.from({ length: 40 }, (_, x) => 0.9 - 0.5 * normalCdf((x - 17.3) / 2.2));
    const xs = Array.from({ length: 40 }, (_, x) => -x);
    const fit = fitErfEdge(xs, Array.from(v), { x0: -17, sigma: 2, lo: 0.4, hi: 0.9 });
    expect(-fit.x0).toBeCloseTo(17.3, 8);
    expect(fit.sigma).toBeCloseTo(2.2, 8);
    expect(fit.lo).toBeCloseTo(0.4, 8);
    expect(fit.hi).toBeCloseTo(0.9, 8);
  });

  it('recovers both edges of a narrow blurred bar exactly with the joint fit (noise-free)', () => {
    // Bar from 20.37 to 28.37 (8 px) blurred by sigma 2.5: the edges overlap, the plateau never reaches the contrast.
    const xs = Array.from({ length: 50 }, (_, i) => i);
    const ys = xs.map((x) => 0.1 + 0.5 * (normalCdf((x - 20.37) / 2.5) - normalCdf((x - 28.37) / 2.5)));
    const fit = fitErfBar(xs, ys, { x1: 21, sigma1: 2, x2: 27.5, sigma2: 2, lo: 0, amplitude: 0.4 });
    expect(fit.converged).toBe(true);
    expect(Math.abs(fit.x1 - 20.37)).toBeLessThan(1e-6);
    expect(Math.abs(fit.x2 - 28.37)).toBeLessThan(1e-6);
    expect(fit.amplitude).toBeCloseTo(0.5, 6);
  });
});
