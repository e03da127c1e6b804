import { describe, it, expect } from 'vitest';
import { orderParameters, type OrderStat } from '../../src/order/index.ts';
import type { OrientationField } from '../../src/orientation/types.ts';
import { rng, correlatedNormalField } from '../support/synthetic.ts';

/**
 * Coverage of the 95 % intervals of whole-field order parameters (definition of a confidence interval:
 * over independent repetitions the interval holds the true value in 95 % of them; docs/methods.md,
 * "Interval coverage").
 *
 * Each repetition is a new orientation field theta = axis + delta, with delta a Gaussian random field of
 * standard deviation sigma (white noise smoothed by a Gaussian of `corrPx`, rescaled to unit variance),
 * so neighbouring pixels are correlated as in a real texture. The truth is known by construction: for a
 * Gaussian delta, E cos 2 delta = exp(-2 sigma^2) and E sin 2 delta = 0 (characteristic function of the
 * normal distribution), so S_axis = S_2D = exp(-2 sigma^2) for the process, whatever the seed.
 *
 * With 1000 repetitions the observed coverage of a 95 % interval has a standard deviation of 0.69 %
 * (binomial); the accepted band 93-97 % is three of those either side. An interval 20 % narrower (about
 * 89 % coverage) or 20 % wider (about 98.5 %) falls outside it, and the test checks that it does.
 */
const SIZE = 120, REPS = 1000;

function field(seed: number, axisDeg: number, sigmaRad: number, corrPx: number): OrientationField {
  const d = correlatedNormalField(seed, SIZE, SIZE, corrPx);
  const a = (axisDeg * Math.PI) / 180;
  const angleRad = Float32Array.from(d, (v) => {
    let t = a + sigmaRad * v;
    t = Math.atan2(Math.sin(2 * t), Math.cos(2 * t)) / 2; // fold into (-pi/2, pi/2]
    return t <= -Math.PI / 2 ? t + Math.PI : t;
  });
  const n = SIZE * SIZE;
  return { width: SIZE, height: SIZE, angleRad, confidence: new Float32Array(n).fill(1), mask: new Uint8Array(n).fill(1), method: 'texture', ambiguity: 'none', options: {}, warnings: [] };
}

/** Share of intervals, scaled about their estimate by `scale`, that hold `truth`. */
function coverage(stats: OrderStat[], truth: number, scale = 1): number {
  let hit = 0;
  for (const s of stats) {
    const lo = s.order - scale * (s.order - s.ciLow), hi = s.order + scale * (s.ciHigh - s.order);
    if (lo <= truth && truth <= hi) hit++;
  }
  return hit / stats.length;
}

describe('95 % intervals of whole-field order parameters', () => {
  for (const { sigmaDeg, corrPx } of [{ sigmaDeg: 20, corrPx: 2 }, { sigmaDeg: 35, corrPx: 3 }]) {
    const sigma = (sigmaDeg * Math.PI) / 180;
    const truth = Math.exp(-2 * sigma * sigma);
    it(`cover S_axis and S_2D = exp(-2 sigma^2) = ${truth.toFixed(3)} in 93-97 % of ${REPS} fields (sigma ${sigmaDeg} deg, correlation ${corrPx} px)`, () => {
      const axis: OrderStat[] = [], free: OrderStat[] = [];
      for (let r = 0; r < REPS; r++) {
        const s = orderParameters(field(1000 * corrPx + r, 30, sigma, corrPx), { axisDeg: 30, weighting: 'none' });
        axis.push(s.axisOrder!); free.push(s.order2D);
        // A point estimate always lies inside its own interval.
        expect(s.axisOrder!.ciLow <= s.axisOrder!.order && s.axisOrder!.order <= s.axisOrder!.ciHigh).toBe(true);
        expect(s.order2D.ciLow <= s.order2D.order && s.order2D.order <= s.order2D.ciHigh).toBe(true);
      }
      for (const [name, st] of [['S_axis', axis], ['S_2D', free]] as const) {
        const c = coverage(st, truth);
        expect(c, `${name} coverage`).toBeGreaterThanOrEqual(0.93);
        expect(c, `${name} coverage`).toBeLessThanOrEqual(0.97);
        // The band is tight enough to catch a wrong width either way.
        expect(coverage(st, truth, 0.8), `${name} coverage 20 % narrower`).toBeLessThan(0.93);
        expect(coverage(st, truth, 1.2), `${name} coverage 20 % wider`).toBeGreaterThan(0.97);
      }
    });
  }

  it('give S_2D of an isotropic field an interval reaching down to 0 and no director', () => {
    // Isotropic by construction (theta uniform and independent per pixel): the process's S_2D is 0.
    let covered = 0, undetermined = 0;
    for (let r = 0; r < 200; r++) {
      const rand = rng(5000 + r);
      const n = SIZE * SIZE;
      const f: OrientationField = {
        width: SIZE, height: SIZE, angleRad: Float32Array.from({ length: n }, () => (rand() - 0.5) * Math.PI),
        confidence: new Float32Array(n).fill(1), mask: new Uint8Array(n).fill(1), method: 'texture', ambiguity: 'none', options: {}, warnings: [],
      };
      const s = orderParameters(f, { weighting: 'none', blockPx: 6 });
      if (s.order2D.ciLow <= 0) covered++;
      if (!s.directorDetermined) undetermined++;
      expect(s.order2D.ciLow <= s.order2D.order && s.order2D.order <= s.order2D.ciHigh).toBe(true);
    }
    expect(covered / 200).toBeGreaterThanOrEqual(0.9);
    expect(undetermined).toBe(covered);
  });
});
