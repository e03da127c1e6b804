/**
 * What the angle series withholds and why (docs/methods.md §6.3, §6.5): every order number without a compensator
 * image, and S where its angle noise would read it low by more than 0.03 (angleNoiseFactor, ANGLE_NOISE_MAX_LOSS).
 */
import { describe, expect, it } from 'vitest';
import { analyseAngleSeries, NO_PLATE_GAP } from '../../src/analyses/optics.ts';
import { channelProfile, ANGLE_NOISE_MAX_LOSS } from '../../src/channel/index.ts';
import { angleNoiseFactor, fitFourAngle, renderSampleImage, type SampleRetarder } from '../../src/optics/index.ts';
import { normalRandom, seededRandom } from '../../src/order/index.ts';
import type { OrientationField } from '../../src/orientation/index.ts';
import { DEG } from '../../src/common/angles.ts';

const SERIES = [0, 22.5, 45, 67.5];

describe('angleNoiseFactor', () => {
  it('gives the mean shrinkage of cos 2(theta - axis) that noise in four images causes, from the fit\'s confidence', () => {
    // Four images I(alpha) = b + A sin^2 2(theta - alpha) + N(0, sigma^2), fitted by fitFourAngle. For small noise the
    // fitted angle's error is normal with variance sigma^2 / (8 A^2) (derived, docs/methods.md §6.5), so
    // E cos 2 epsilon = exp(-sigma^2 / (4 A^2)) (the characteristic function of the normal distribution).
    const normal = normalRandom(seededRandom(11));
    for (const ratio of [0.1, 0.3, 0.4]) {
      const A = 0.05, sigma = ratio * A, b = 0.01, draws = 20_000;
      let cosSum = 0, factorSum = 0;
      for (let r = 0; r < draws; r++) {
        const theta = (r * 0.61) % 180;
        const I = SERIES.map((a) => b + A * Math.sin(2 * (theta - a) * DEG) ** 2 + sigma * normal());
        const fit = fitFourAngle(I, SERIES);
        // The fit gives theta modulo 90 deg: the error taken within (-45, 45] deg.
        const e = ((((fit.angleDeg - theta) % 90) + 135) % 90) - 45;
        cosSum += Math.cos(2 * e * DEG);
        factorSum += angleNoiseFactor(fit.amplitude / (fit.amplitude + 3 * fit.residual), 1);
      }
      // Small noise: the simulated mean is the closed form within its sampling error (sd of cos 2 epsilon / sqrt(20000)
      // below 0.001); at larger noise the angle's error outgrows the linearised one and the shrinkage is larger.
      if (ratio <= 0.1) expect(Math.abs(cosSum / draws - Math.exp(-(ratio ** 2) / 4))).toBeLessThan(0.001);
      // The factor from each pixel's own residual (one degree of freedom) follows the simulated shrinkage (0.97 and
      // 0.94 at 0.3 and 0.4) to within 0.005 of S.
      expect(Math.abs(factorSum / draws - cosSum / draws)).toBeLessThan(0.005);
    }
  });
});

/** A uniform angle-series field at 0 deg (decided by a compensator image) whose pixels all have confidence `c`. */
function seriesField(c: number): OrientationField {
  const W = 120, H = 80, n = W * H;
  return {
    width: W, height: H, angleRad: new Float32Array(n), confidence: new Float32Array(n).fill(c), mask: new Uint8Array(n).fill(1),
    method: 'angle-series', ambiguity: 'none', options: { plate: true, angleNoiseGain: 1 }, warnings: [],
  };
}
const channel = { walls: [{ x1: 0, y1: 10, x2: 119, y2: 10 }, { x1: 0, y1: 70, x2: 119, y2: 70 }] as [{ x1: number; y1: number; x2: number; y2: number }, { x1: number; y1: number; x2: number; y2: number }] };

describe('a channel profile of an angle series with angle noise', () => {
  it('withholds S, saying why and what would determine it, where the noise takes more than 0.03 of S', () => {
    // Confidence 0.4: residual / A = 0.5, factor exp(-0.25 / 4) = 0.939 (angleNoiseFactor's formula): 6 % of S lost.
    expect(1 - angleNoiseFactor(0.4, 1)).toBeGreaterThan(ANGLE_NOISE_MAX_LOSS);
    const p = channelProfile(seriesField(0.4), channel, { bins: 4, axisDeg: 0 });
    expect(p.bins.every((b) => Number.isNaN(b.order) && Number.isNaN(b.ciLow))).toBe(true);
    expect(Number.isNaN(p.core.order)).toBe(true);
    expect(p.notDetermined?.angleNoise).toMatch(/frames|expose|retardance/);
  });

  it('gives S where the noise is small', () => {
    // Confidence 0.8: residual / A = 1/12, factor 0.998.
    const p = channelProfile(seriesField(0.8), channel, { bins: 4, axisDeg: 0 });
    expect(p.notDetermined).toBeUndefined();
    for (const b of p.bins) expect(b.order).toBeCloseTo(1, 6); // every director at the axis: S = 1 (definition)
  });
});

describe('analyseAngleSeries without a compensator image', () => {
  it('gives the orientation map but no order number, with why and the remedy', async () => {
    const W = 40, H = 24, cam = { gains: [1, 1, 1] as [number, number, number], exposure: 0.75 };
    const sample = (x: number): SampleRetarder => (x < 10 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: 5 * DEG, retardanceNm: 150 });
    const images = SERIES.map((p, k) => renderSampleImage(W, H, sample, { polariserDeg: p, analyserDeg: p + 90, compensator: null }, { noiseSd: 0.001, seed: 7 + k, camera: cam, name: `q${k}.png` }));
    const walls = channel.walls.map((s) => ({ ...s, x2: 39, y1: s.y1 === 10 ? 2 : 21, y2: s.y1 === 10 ? 2 : 21 })) as typeof channel.walls;
    const { result, field } = await analyseAngleSeries(images, { profile: { channel: { walls }, bins: 4 } });
    expect(field.mask.some((m) => m === 1)).toBe(true);
    expect(result.order2D).toBeNaN();
    expect(result.profile!.bins.every((b) => Number.isNaN(b.order))).toBe(true);
    expect(result.notDetermined?.order).toBe(NO_PLATE_GAP);
    expect(NO_PLATE_GAP).toMatch(/--plate/);
  });
});
