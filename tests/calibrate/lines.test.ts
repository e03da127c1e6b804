import { describe, expect, it } from 'vitest';
import { calibrateFromMicrometer, lineCentre, rulerAxes, stripProfiles } from '../../src/calibrate/index.ts';
import { measureLine } from '../../src/calibrate/lineCentre.ts';
import { lampGradient } from '../../src/calibrate/lamp.ts';
import { grating } from '../support/synthetic.ts';
import { renderRulerScene } from '../validation/render/ruler.ts';

/** Samples of f at i = 0 .. n - 1. */
const sampled = (n: number, f: (x: number) => number) => Float64Array.from({ length: n }, (_, i) => f(i));

describe('lineCentre: the symmetric-window centroid', () => {
  it('finds the centre of symmetric lines of any shape at any sub-sample phase (symmetry about the centre)', () => {
    // Smooth lines resolved by the sampling (as the strips sample them: a sixth of the line width or finer):
    // a Gaussian line and a flat-bottomed blurred bar, each with neighbours 22.3 samples away, to 3e-4
    // samples; a triangle's corners are not resolved by any sampling, and it still comes within 5e-3.
    const shapes: [(u: number) => number, number][] = [
      [(u) => Math.exp(-0.5 * (u / 2.6) ** 2), 3e-4],
      [(u) => 0.5 * (Math.tanh((4 - Math.abs(u)) / 1.2) + 1), 3e-4],
      [(u) => Math.max(0, 1 - Math.abs(u) / 5), 5e-3],
    ];
    for (let c0 = 60; c0 < 61; c0 += 0.13) {
      for (const [g, tol] of shapes) {
        const q = sampled(130, (x) => 0.2 + g(x - c0) + g(x - c0 - 22.3) + g(x - c0 + 22.3));
        expect(Math.abs(lineCentre(q, c0 + 0.8, 7, 22.3 - 7) - c0)).toBeLessThan(tol);
      }
    }
  });

  it('removes a sloping background (a straight line under a symmetric line adds no shift)', () => {
    const c0 = 30.37;
    const q = sampled(70, (x) => 1 + 0.02 * x + Math.exp(-0.5 * ((x - c0) / 1.2) ** 2));
    expect(Math.abs(lineCentre(q, 30, 3, 9) - c0)).toBeLessThan(2e-3);
  });

  it('states how a lamp gradient across the line moves it: kappa x lampShift to first order', () => {
    const c0 = 50.2;
    const kappa = 0.01;
    const plain = sampled(100, (x) => Math.exp(-0.5 * ((x - c0) / 1.5) ** 2));
    const lit = sampled(100, (x) => (1 + kappa * (x - c0)) * Math.exp(-0.5 * ((x - c0) / 1.5) ** 2));
    const m0 = measureLine(plain, 50, 4);
    const m1 = measureLine(lit, 50, 4);
    expect(Math.abs((m1.centre - m0.centre) / (kappa * m0.lampShift) - 1)).toBeLessThan(0.05);
  });

  it('gives NaN, not a number, when the window leaves the data', () => {
    expect(lineCentre(sampled(20, () => 1), 1, 4)).toBeNaN();
  });
});

describe('pieces of the ruler fit', () => {
  it('lampGradient recovers d ln L / ds of a lamp L = exp(a s + b s^2 + c t) from the lines\' areas (closed form)', () => {
    const pts = [];
    for (let s = -100; s <= 100; s += 10) for (let t = -40; t <= 40; t += 8) pts.push({ s, t, area: Math.exp(0.002 * s + 1e-5 * s * s + 0.001 * t), lampShiftPx2: 2 });
    const k = lampGradient(pts);
    pts.forEach((p, i) => expect(k[i]).toBeCloseTo(0.002 + 2e-5 * p.s, 9));
  });

  it('stripProfiles samples a linear image exactly (bilinear interpolation is exact on planes)', () => {
    const w = 64, h = 48;
    const data = Float32Array.from({ length: w * h }, (_, i) => 0.01 * (i % w) + 0.02 * Math.floor(i / w));
    const theta = 0.3;
    const sp = stripProfiles({ width: w, height: h, data }, theta, 6, 0.5);
    // Strip centre t, sample s: image point (cx + s cos - t sin, cy + s sin + t cos); value 0.01 x + 0.02 y.
    const cx = (w - 1) / 2, cy = (h - 1) / 2;
    const st = sp.strips[Math.floor(sp.strips.length / 2)];
    for (let k = 0; k < st.values.length; k += 7) {
      if (!Number.isFinite(st.values[k])) continue;
      const s = sp.sStart + k * sp.step;
      const x = cx + s * Math.cos(theta) - st.t * Math.sin(theta);
      const y = cy + s * Math.sin(theta) + st.t * Math.cos(theta);
      expect(st.values[k]).toBeCloseTo(0.01 * x + 0.02 * y, 5);
    }
  });

  it('rulerAxes finds a grating\'s axes modulo 90 deg (construction of the grating)', () => {
    for (const psi of [0, 17, 45, 73, 88]) {
      // Stripes running at psi CCW on screen: their normal in image coordinates (y down) is at -(psi) + 90 deg, modulo 90.
      const g = grating(160, 120, psi, 9);
      const axis = (rulerAxes(g).axisRad * 180) / Math.PI;
      const expected = (((90 - psi) % 90) + 90) % 90;
      const diff = Math.abs(((axis - expected + 45) % 90 + 90) % 90 - 45);
      // A first guess only (the strips then fit the direction from the ticks), but free of pixel-grid tilt.
      expect(diff).toBeLessThan(0.2);
    }
  });
});

describe('rulers that must not give a number', () => {
  it('refuses when only every 5th and 10th tick is visible (their lengths alternate): the divisions cannot be counted', () => {
    // Short ticks drawn 0.01 um long: invisible; the medium (5th) and long (10th) ticks alternate.
    const img = renderRulerScene({
      width: 640, height: 400, umPerPx: 0.65, divisionUm: 10, angleDeg: 90, lineWidthUm: 1.5, shortUm: 0.01, mediumUm: 50,
      longUm: 90, baselineUm: 0, psfSigmaUm: 0.5, polarity: 'dark', contrast: 0.6, readSd: 0.005, bits: 16, seed: 2, sub: 2,
      originPx: { x: 20, y: 350 }, firstTick: 0, lastTick: 200,
    });
    expect(() => calibrateFromMicrometer(img, { divisionUm: 10 })).toThrow(/alternate in length/);
  });
});
