import { describe, expect, it } from 'vitest';
import { calibrateFromMicrometer } from '../../src/calibrate/index.ts';
import { axialDiffDeg } from '../../src/common/index.ts';
import { renderRuler } from './render.ts';
import { gaussianNoise } from '../fibre/render.ts';

describe('calibrateFromMicrometer on rendered rulers (period = a fact of the rendering)', () => {
  // Target of the task: calibration within 0.2 %.
  const cases: [number, number, number][] = [
    [7.7, 90, -0.4], [15.38, 17, -0.4], [30.77, 0, 0.4], [61.54, 45, -0.4], [123.1, 133, 0.35], [30.77, 73, -0.3],
  ];
  for (const [periodPx, linesDeg, contrast] of cases) {
    it(`recovers a ${periodPx} px period with ${contrast < 0 ? 'dark' : 'bright'} lines at ${linesDeg} deg within 0.2 %`, () => {
      const img = renderRuler({ width: 560, height: 420, periodPx, linesDeg, contrast, noiseSd: 0.02 });
      const c = calibrateFromMicrometer(img, { divisionUm: 10 });
      expect(Math.abs(c.periodPx / periodPx - 1)).toBeLessThan(0.002);
      expect(Math.abs(c.umPerPx / (10 / periodPx) - 1)).toBeLessThan(0.002);
      expect(c.polarity).toBe(contrast < 0 ? 'dark' : 'bright');
      expect(axialDiffDeg(c.linesDeg, linesDeg)).toBeLessThan(0.2);
      expect(c.uncertaintyUmPerPx).toBeCloseTo(c.umPerPx * c.relativeUncertainty, 12);
      // The stated uncertainty must cover the actual error at a few standard uncertainties.
      expect(Math.abs(c.periodPx - periodPx)).toBeLessThan(5 * c.periodStdErrPx + 1e-3 * periodPx);
    });
  }

  it('measures a ruler occupying a band of the field, with long ticks every 5 divisions', () => {
    const img = renderRuler({ width: 640, height: 400, periodPx: 22.3, linesDeg: 80, contrast: -0.35, lineLengthPx: 90,
      longEvery: 5, noiseSd: 0.015 });
    const c = calibrateFromMicrometer(img, { divisionUm: 10 });
    expect(Math.abs(c.periodPx / 22.3 - 1)).toBeLessThan(0.002);
    expect(c.divisions).toBeGreaterThanOrEqual(20);
    expect(c.warnings).toEqual([]);
  });

  it('warns when fewer than 20 divisions are measured (domain.md §8: measure over >= 20 divisions)', () => {
    const img = renderRuler({ width: 400, height: 300, periodPx: 50, linesDeg: 90, contrast: -0.4, noiseSd: 0.01 });
    const c = calibrateFromMicrometer(img, { divisionUm: 10 });
    expect(c.divisions).toBeLessThan(20);
    expect(c.warnings.join(' ')).toMatch(/20 or more/);
  });

  it('refuses blank, noise-only and nonsense input with an InputError', () => {
    const blank = { width: 200, height: 150, data: new Float32Array(200 * 150).fill(0.5) };
    expect(() => calibrateFromMicrometer(blank, { divisionUm: 10 })).toThrow(/uniform/);
    const n = gaussianNoise(9);
    const noise = { width: 200, height: 150, data: Float32Array.from({ length: 200 * 150 }, () => 0.5 + 0.05 * n()) };
    expect(() => calibrateFromMicrometer(noise, { divisionUm: 10 })).toThrow(/ruler|line/);
    const ruler = renderRuler({ width: 300, height: 200, periodPx: 12, linesDeg: 90, contrast: -0.4 });
    expect(() => calibrateFromMicrometer(ruler, { divisionUm: 0 })).toThrow(/division spacing/);
    expect(() => calibrateFromMicrometer(ruler, { divisionUm: NaN })).toThrow(/division spacing/);
  });
});
