/**
 * An angle series with a compensator image but without its sample-free area (docs/methods.md §6.3): the 90-deg
 * choice compares the compensator image's colours with the model's, and nothing calibrates the camera's exposure,
 * white balance or the compensator's retardance for that (§3.4), so no order number is given: "not determined", why,
 * and the remedy (the sample-free area). The same rendering with its sample-free area gives them, within 0.03 of the
 * truth. Renderings by the independent validation renderer (tests/validation/render/); the truth is the construction
 * itself (the rendered directors).
 */
import { describe, expect, it } from 'vitest';
import { analyseAngleSeries, PLATE_SAMPLE_FREE_GAP } from '../../src/analyses/optics.ts';
import { seriesIntensityImage } from '../../src/optics/fourAngle.ts';
import { screenWords } from '../../app/screenWords.ts';
import { profileTruth, renderScene, scene } from '../validation/render/index.ts';

const SERIES = [0, 22.5, 45, 67.5];
const band = { kind: 'band' as const, thicknessPx: 20, level: 0.25, edgePx: 0, edgeLevel: 0 };

/**
 * A small channel at 23 deg (core 0.8, skin 0.5, 250 nm) rendered with the camera's exposure at 0.6: the open beam
 * reads 0.6, not the 1 an uncalibrated reading takes (the renderer's default is 0.8; 1 clips).
 */
const rendering = renderScene(scene({
  name: 'bare-plate', seed: 310, width: 240, height: 180, source: 'colour', channel: { axisDeg: 23, widthPx: 100 },
  walls: [band, band], background: { kind: 'sample-free' }, order: { core: 0.8, skin: 0.5 },
  optics: { retardanceNm: 250, seriesDeg: SERIES, exposure: 0.6 },
}));
const images = rendering.series!.map((img) => seriesIntensityImage(img));
const walls = rendering.truth.walls!;
const read = (plateSampleFree?: typeof rendering.truth.backgroundRect) =>
  analyseAngleSeries(images, { anglesDeg: SERIES, plate: rendering.image, plateSampleFree: plateSampleFree ?? undefined, profile: { channel: { walls }, bins: 10, stations: 1 } });

describe('an angle series whose compensator image has no sample-free area', () => {
  it('gives the orientation map but no order number, saying why and what would determine it', async () => {
    const { result, field } = await read();
    // the map stays: the usable pixels keep their angles
    expect(field.mask.some((m) => m === 1)).toBe(true);
    // the whole image's numbers and every profile number are withheld
    for (const v of [result.order2D, result.order2DCiLow, result.order2DCiHigh, result.directorDeg]) expect(v).toBeNaN();
    const p = result.profile!;
    expect(p.bins).toHaveLength(10);
    for (const b of [...p.bins, p.core, p.skin]) {
      expect(b.order).toBeNaN();
      expect(b.ciLow).toBeNaN();
      expect(b.ciHigh).toBeNaN();
    }
    expect(p.coreSkinRatio).toBeNaN();
    // why, and the remedy: on the command line its option, on screen in words
    expect(result.notDetermined?.order).toContain(PLATE_SAMPLE_FREE_GAP);
    expect(p.notDetermined?.order).toContain(PLATE_SAMPLE_FREE_GAP);
    expect(PLATE_SAMPLE_FREE_GAP).toContain('(--plate-sample-free x,y,w,h)');
    expect(screenWords(PLATE_SAMPLE_FREE_GAP)).toContain("draw the compensator image's sample-free area on the image, or read the sample with two compensator images");
    expect(screenWords(PLATE_SAMPLE_FREE_GAP)).not.toContain('--');
  }, 30_000);

  it('gives them with its sample-free area, every bin within 0.03 of the rendered truth', async () => {
    const { result } = await read(rendering.truth.backgroundRect);
    const p = result.profile!;
    expect(p.notDetermined?.order).toBeUndefined();
    // Truth: the mean of cos 2(theta - axis) over each bin's rendered directors (the construction).
    const truth = profileTruth(rendering.truth, rendering.spec.width, { bins: 10 });
    p.bins.forEach((b, k) => expect(Math.abs(b.order - truth.bins[k].realised)).toBeLessThanOrEqual(0.03)); // NaN fails
    expect(Number.isFinite(result.order2D)).toBe(true);
  }, 30_000);
});
