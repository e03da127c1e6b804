import { describe, expect, it } from 'vitest';
import { rayleighResolutionUm, umPerPxFromOptics } from '../../src/calibrate/index.ts';

describe('umPerPxFromOptics: sensor pixel x binning / (objective x intermediate)', () => {
  it('reproduces the worked examples', () => {
    // Closed form: 3.45 um / (10 x 1) = 0.345 um/px (a common sensor pitch, from memory)
    expect(umPerPxFromOptics({ cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1 }))
      .toBeCloseTo(0.345, 12);
    // Closed form: 6.5 um (a common sCMOS pitch, from memory) / 20 = 0.325 um/px
    expect(umPerPxFromOptics({ cameraPixelUm: 6.5, objectiveMagnification: 20 })).toBeCloseTo(0.325, 12);
    // Closed form: 5.86 um / (20 x 0.5) = 0.586 um/px
    expect(umPerPxFromOptics({ cameraPixelUm: 5.86, objectiveMagnification: 20, intermediateMagnification: 0.5 }))
      .toBeCloseTo(0.586, 12);
    // Closed form: 2.4 um / 40 = 0.06 um/px
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
    // Rayleigh criterion r = 0.61 lambda / NA (from memory): 0.61 x 0.55 um / 0.25 = 1.342 um (closed form)
    expect(rayleighResolutionUm(550, 0.25)).toBeCloseTo(1.342, 3);
  });
  it('rejects an NA above the largest real immersion objectives', () => {
    expect(() => rayleighResolutionUm(550, 2)).toThrow(/numerical aperture/);
  });
});
