import { describe, expect, it } from 'vitest';
import { rayleighResolutionUm, umPerPxFromOptics } from '../../src/calibrate/index.ts';

describe('umPerPxFromOptics: sensor pixel x binning / (objective x intermediate)', () => {
  it('reproduces the worked examples', () => {
    // domain.md §8 [M sensor numbers; D arithmetic]: 3.45 um at 10x and 1x = 0.345 um/px
    expect(umPerPxFromOptics({ cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1 }))
      .toBeCloseTo(0.345, 12);
    // domain.md §8: 6.5 um (sCMOS) at 20x = 0.325 um/px
    expect(umPerPxFromOptics({ cameraPixelUm: 6.5, objectiveMagnification: 20 })).toBeCloseTo(0.325, 12);
    // domain.md §8: 5.86 um at 20x and 0.5x = 0.586 um/px
    expect(umPerPxFromOptics({ cameraPixelUm: 5.86, objectiveMagnification: 20, intermediateMagnification: 0.5 }))
      .toBeCloseTo(0.586, 12);
    // domain.md §8: 2.4 um at 40x = 0.06 um/px
    expect(umPerPxFromOptics({ cameraPixelUm: 2.4, objectiveMagnification: 40 })).toBeCloseTo(0.06, 12);
  });

  it('doubles with 2x2 binning (binned pixels are twice as wide: definition of binning)', () => {
    expect(umPerPxFromOptics({ cameraPixelUm: 6.5, objectiveMagnification: 20, binning: 2 })).toBeCloseTo(0.65, 12);
  });

  it('rejects nonsense with an InputError', () => {
    expect(() => umPerPxFromOptics({ cameraPixelUm: 0, objectiveMagnification: 10 })).toThrow(/camera pixel/);
    expect(() => umPerPxFromOptics({ cameraPixelUm: 3.45, objectiveMagnification: -10 })).toThrow(/objective/);
    expect(() => umPerPxFromOptics({ cameraPixelUm: NaN, objectiveMagnification: 10 })).toThrow(/camera pixel/);
    expect(() => umPerPxFromOptics({ cameraPixelUm: 3.45, objectiveMagnification: 10, binning: 1.5 })).toThrow(/binning/);
  });
});

describe('rayleighResolutionUm = 0.61 lambda / NA', () => {
  it('gives 1.342 um at 0.55 um and NA 0.25', () => {
    // domain.md §8 [D/M]: Rayleigh r = 0.61 lambda/NA (0.55 um, NA 0.25 -> 1.342 um)
    expect(rayleighResolutionUm(550, 0.25)).toBeCloseTo(1.342, 3);
  });
  it('rejects an NA above the largest real immersion objectives', () => {
    expect(() => rayleighResolutionUm(550, 2)).toThrow(/numerical aperture/);
  });
});
