import { describe, expect, it } from 'vitest';
import area from '../validation/fibre.ts';
import { idealImage, normalCdfIndependent, trueWidthPx, type ValidationScene } from '../validation/render/fibre.ts';

describe('the independent fibre renderer keeps its truth', () => {
  it('has a normal distribution function of the tabulated values', () => {
    // scipy.stats.norm.cdf(1) = 0.8413447460685429, norm.cdf(-2.5) = 0.006209665325776132 (from memory)
    expect(Math.abs(normalCdfIndependent(1) - 0.8413447460685429)).toBeLessThan(1e-14);
    expect(Math.abs(normalCdfIndependent(-2.5) - 0.006209665325776132)).toBeLessThan(1e-15);
    expect(normalCdfIndependent(0)).toBe(0.5);
  });

  it('conserves the fibre\'s cross-section: a column crossing it loses base x |contrast| x D / |cos angle|', () => {
    // Blurring and pixel averaging preserve integrals, and a straight line at angle theta to the fibre's
    // normal crosses the strip over D / cos theta (geometry), so each column sum of (base - value) is fixed.
    for (const [angleDeg, widthPx, psf] of [[0, 7.3, 1.2], [25, 12, 2], [-40, 4, 0.8]]) {
      const scene: ValidationScene = {
        width: 60, height: 160, psfSigmaPx: psf, bits: 16, seed: 1, base: 0.5,
        fibres: [{ cxPx: 30.2, cyPx: 80.4, angleDeg, widthPx, contrast: -0.3 }],
      };
      const img = idealImage(scene);
      const expected = 0.5 * 0.3 * widthPx / Math.cos((angleDeg * Math.PI) / 180);
      for (const x of [20, 30, 40]) {
        let loss = 0;
        for (let y = 0; y < 160; y++) loss += 0.5 - img[y * 60 + x];
        expect(Math.abs(loss - expected)).toBeLessThan(1e-9);
      }
    }
  });

  it('gives the width of a taper at the axis point nearest a position', () => {
    const f = { cxPx: 50, cyPx: 50, angleDeg: 0, widthPx: 20, taperPerPx: 0.1, contrast: -0.3 };
    // Along +x the width grows by 0.1 px per px (construction); off the axis the nearest axis point counts.
    expect(trueWidthPx(f, 60, 50)).toBeCloseTo(21, 12);
    expect(trueWidthPx(f, 40, 57)).toBeCloseTo(19, 12);
  });
});

describe('validation area "fibre", quick subset (the rows npm run validate -- --quick prints)', () => {
  it('meets every goal', async () => {
    const rows = await area({ quick: true });
    expect(rows.length).toBeGreaterThanOrEqual(7);
    const missed = rows.filter((r) => !r.pass).map((r) => `${r.case}: ${r.quantity} = ${r.value} (goal ${r.goal}) ${r.note ?? ''}`);
    expect(missed).toEqual([]);
  }, 120_000);
});
