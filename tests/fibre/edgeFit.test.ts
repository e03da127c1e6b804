import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fitBlurredBar, fitErfEdge, normalCdf, parabolaEdgeIndex } from '../../src/fibre/index.ts';
import { pixelEdgeSpread, pixelFootprint } from '../../src/fibre/pixelEdge.ts';

/**
 * Reference values from scipy (curve_fit, dblquad) and numpy, made by the committed script
 * tests/fixtures/reference/make_edge_fit_fixture.py (run with /usr/bin/python3); the noisy samples are
 * in the fixture, so both sides fit the same numbers.
 */
const REF = JSON.parse(readFileSync(new URL('../fixtures/reference/edge-fit-scipy.json', import.meta.url), 'utf8')) as {
  parabolaSweep: { sigma: number; worstParabolaErrorPx: number }[];
  noisyEdges: { noiseSd: number; x0: number; samples: number[]; parabolaPx: number; fitX0Px: number }[];
  bars: { truth: number[]; xs: number[]; ys: number[]; centrePx: number; widthPx: number; sigmaPx: number; amplitude: number }[];
  pixelSpread: { u: number; sigma: number; a: number; b: number; value: number }[];
};

/** Point samples at x = 0..63 of lo + (hi - lo) Phi((x - x0)/sigma), the blurred step (construction). */
function edgeSamples(x0: number, sigma: number, lo: number, hi: number): number[] {
  return Array.from({ length: 64 }, (_, x) => lo + (hi - lo) * normalCdf((x - x0) / sigma));
}

/** The window the fixture script uses: round(parabola) +- halfWindow samples. */
function fitAround(v: number[], halfWindow: number, sigmaStart: number) {
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
  it('parabola bias matches numpy on the same sweep; the erf fit has none (noise-free, x0 over 1 px)', () => {
    for (const { sigma, worstParabolaErrorPx } of REF.parabolaSweep) {
      let worstParabola = 0;
      let worstErf = 0;
      for (let k = 0; k <= 40; k++) {
        const x0 = 31 + k / 40;
        const { xh, fit } = fitAround(edgeSamples(x0, sigma, 0.2, 0.8), Math.max(6 * sigma, 4), sigma * 1.3);
        worstParabola = Math.max(worstParabola, Math.abs(xh - x0));
        worstErf = Math.max(worstErf, Math.abs(fit.x0 - x0));
        expect(fit.converged).toBe(true);
      }
      // numpy, same rule (fixture): 0.0413 / 0.0327 / 0.0182 / 0.0073 px at sigma 0.7 / 1 / 1.5 / 2.5
      expect(Math.abs(worstParabola - worstParabolaErrorPx)).toBeLessThan(1e-9);
      // The model is exact for these samples, so least squares returns x0 itself (construction).
      expect(worstErf).toBeLessThan(1e-6);
    }
  });

  it('on noisy edges gives the parabola of numpy and the least-squares edge of scipy curve_fit', () => {
    const errors = new Map<number, { parabola: number[]; fit: number[] }>();
    for (const e of REF.noisyEdges) {
      const { xh, fit } = fitAround(e.samples, 9, 1.5);
      expect(Math.abs(xh - e.parabolaPx)).toBeLessThan(1e-9);
      // Both minimise the same sum of squares: the same minimum to well below the noise.
      expect(Math.abs(fit.x0 - e.fitX0Px)).toBeLessThan(1e-6);
      const row = errors.get(e.noiseSd) ?? { parabola: [], fit: [] };
      row.parabola.push(xh - e.x0);
      row.fit.push(fit.x0 - e.x0);
      errors.set(e.noiseSd, row);
    }
    const rms = (a: number[]) => Math.sqrt(a.reduce((s, v) => s + v * v, 0) / a.length);
    // The fit uses the whole edge, the parabola three gradient samples: the fit is the less noisy at
    // both noise levels (40 profiles each; the ratio is about 3 in these samples).
    for (const { parabola, fit } of errors.values()) expect(rms(fit)).toBeLessThan(0.6 * rms(parabola));
  });

  it('fits a falling edge given mirrored coordinates, and recovers sigma, lo and hi', () => {
    const v = Array.from({ length: 40 }, (_, x) => 0.9 - 0.5 * normalCdf((x - 17.3) / 2.2));
    const xs = Array.from({ length: 40 }, (_, x) => -x);
    const fit = fitErfEdge(xs, v, { x0: -17, sigma: 2, lo: 0.4, hi: 0.9 });
    expect(-fit.x0).toBeCloseTo(17.3, 8);
    expect(fit.sigma).toBeCloseTo(2.2, 8);
    expect(fit.lo).toBeCloseTo(0.4, 8);
    expect(fit.hi).toBeCloseTo(0.9, 8);
  });
});

describe('blurred bar: the whole profile b0 + b1 x + A [Phi((x - x1)/s) - Phi((x - x2)/s)] fitted jointly', () => {
  it('recovers a narrow bar exactly when the edges overlap (noise-free, point samples)', () => {
    // Bar from 20.37 to 28.37 (8 px) blurred by sigma 2.5 on a sloping background: the plateau never
    // reaches the full contrast (2 Phi(1.6) - 1 = 0.89 at the centre). Truth by construction.
    const xs = Array.from({ length: 100 }, (_, i) => i * 0.5);
    const ys = xs.map((x) => 0.1 + 0.002 * x + 0.5 * (normalCdf((x - 20.37) / 2.5) - normalCdf((x - 28.37) / 2.5)));
    const fit = fitBlurredBar(xs, ys, { centre: 24, width: 6.5, sigma: 2, amplitude: 0.4, background: 0 });
    expect(fit.converged).toBe(true);
    expect(Math.abs(fit.centre - 24.37)).toBeLessThan(1e-6);
    expect(Math.abs(fit.width - 8)).toBeLessThan(1e-6);
    expect(Math.abs(fit.sigma - 2.5)).toBeLessThan(1e-6);
    expect(fit.amplitude).toBeCloseTo(0.5, 6);
    expect(fit.slope).toBeCloseTo(0.002, 8);
  });

  it('finds the same least-squares bar as scipy curve_fit on noisy profiles', () => {
    for (const b of REF.bars) {
      const fit = fitBlurredBar(b.xs, b.ys, {
        centre: 30, width: 1.2 * b.truth[1], sigma: 0.8 * b.truth[2], amplitude: 0.3, background: 0,
      });
      expect(fit.converged).toBe(true);
      expect(Math.abs(fit.width - b.widthPx)).toBeLessThan(1e-5);
      expect(Math.abs(fit.centre - b.centrePx)).toBeLessThan(1e-5);
      expect(Math.abs(fit.sigma - b.sigmaPx)).toBeLessThan(1e-5);
      expect(Math.abs(fit.amplitude - b.amplitude)).toBeLessThan(1e-5);
    }
  });

  it('with sigma held fixed, fits the other five parameters (noise-free: exact)', () => {
    const xs = Array.from({ length: 80 }, (_, i) => i * 0.5);
    const ys = xs.map((x) => -0.02 + 0.3 * (normalCdf((x - 16.1) / 1.4) - normalCdf((x - 21.3) / 1.4)));
    const fit = fitBlurredBar(xs, ys, { centre: 19, width: 4, sigma: 1.4, amplitude: 0.25, background: 0 }, 1.4);
    expect(Math.abs(fit.width - 5.2)).toBeLessThan(1e-6);
    expect(fit.sigma).toBe(1.4);
    expect(fit.parameters).toBe(5);
  });
});

describe('edge seen through a square pixel (pixelEdgeSpread)', () => {
  it('equals the pixel-footprint mean of Phi computed by scipy.integrate.dblquad', () => {
    for (const r of REF.pixelSpread) {
      const out = pixelEdgeSpread(r.u, r.sigma, { a: r.a, b: r.b }, { value: 0, dU: 0, dSigma: 0 });
      expect(Math.abs(out.value - r.value)).toBeLessThan(1e-12);
    }
  });

  it('has the derivatives of its value (central differences) at any angle', () => {
    const out = { value: 0, dU: 0, dSigma: 0 };
    const at = (u: number, s: number, fp: { a: number; b: number }) => pixelEdgeSpread(u, s, fp, { value: 0, dU: 0, dSigma: 0 }).value;
    for (const deg of [0, 7, 30, 45]) {
      const fp = pixelFootprint(Math.cos((deg * Math.PI) / 180), Math.sin((deg * Math.PI) / 180));
      for (const [u, s] of [[-1.1, 0.9], [0.3, 1.6], [2.2, 1.1]]) {
        pixelEdgeSpread(u, s, fp, out);
        const h = 1e-5;
        expect(Math.abs(out.dU - (at(u + h, s, fp) - at(u - h, s, fp)) / (2 * h))).toBeLessThan(1e-8);
        expect(Math.abs(out.dSigma - (at(u, s + h, fp) - at(u, s - h, fp)) / (2 * h))).toBeLessThan(1e-8);
      }
    }
  });

  it('tends to the point-sampled edge as the footprint shrinks, and its variance adds 1/12 px^2', () => {
    // Variances add under convolution; the square's footprint has variance (a^2 + b^2)/12 = 1/12 at any angle,
    // so at large sigma the edge looks like a point-sampled one of sigma' = sqrt(sigma^2 + 1/12).
    const sigma = 4;
    const out = { value: 0, dU: 0, dSigma: 0 };
    for (const u of [-3, -1, 0.5, 2]) {
      pixelEdgeSpread(u, sigma, pixelFootprint(Math.cos(0.5), Math.sin(0.5)), out);
      expect(Math.abs(out.value - normalCdf(u / Math.sqrt(sigma * sigma + 1 / 12)))).toBeLessThan(2e-5);
    }
  });
});
