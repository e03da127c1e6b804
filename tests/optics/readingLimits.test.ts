/**
 * The optical readings refuse an image larger than they read within the program's memory limit (1 GB for any file of 100 MB or less) with one
 * plain InputError naming the image's size and the limit, before they take any memory for the reading: the images
 * here are headers only (no pixel planes), so a reading that went on would fail on the missing planes instead.
 */
import { describe, expect, it } from 'vitest';
import { analyseAngleSeries, analysePlate, analysePlatePair } from '../../src/analyses/index.ts';
import { ANGLE_SERIES_WITH_PLATE_MAX_PIXELS, checkReadingSize, OPTICS_MAX_PIXELS } from '../../src/analyses/optics.ts';
import { InputError } from '../../src/common/errors.ts';
import type { Image } from '../../src/image/index.ts';

/** An RGB image header of w x h pixels without pixel planes. */
const header = (w: number, h: number, name = 'big.png'): Image => ({ width: w, height: h, channels: 3, planes: [], bitDepth: 8, encoding: 'srgb', source: { name } });

/** A header just over the reading's limit: one row more than the largest square-ish image within it. */
function overLimit(max: number): Image {
  const w = 4000, h = Math.floor(max / w) + 1;
  return header(w, h);
}

const refusal = async (run: () => Promise<unknown>, max: number) => {
  const e = await run().then(() => null, (x: unknown) => x);
  expect(e).toBeInstanceOf(InputError);
  const msg = (e as Error).message;
  expect(msg).toContain('big.png');
  expect(msg).toMatch(/4000 x \d+ pixels \(\d+\.\d MP\)/);
  expect(msg).toContain(`(${(max / 1e6).toFixed(1)} MP per image)`);
  expect(msg).toContain('1 GB');
  expect(msg.split('\n')).toHaveLength(1);
};

describe('optical readings refuse images beyond their memory limit', () => {
  it('plate: one image over the limit', async () => {
    await refusal(() => analysePlate(overLimit(OPTICS_MAX_PIXELS.plate)), OPTICS_MAX_PIXELS.plate);
  });
  it('plate pair: either image over the limit', async () => {
    const max = OPTICS_MAX_PIXELS['plate-pair'], big = overLimit(max);
    await refusal(() => analysePlatePair(big, big), max);
  });
  it('angle series: images over the limit', async () => {
    const max = OPTICS_MAX_PIXELS['angle-series'], big = overLimit(max);
    await refusal(() => analyseAngleSeries([big, big, big, big]), max);
  });
  it('an image of exactly the limit passes the check', () => {
    for (const kind of ['plate', 'plate-pair', 'angle-series'] as const) {
      const max = OPTICS_MAX_PIXELS[kind];
      expect(() => checkReadingSize(kind, header(max / 1000, 1000))).not.toThrow();
      expect(() => checkReadingSize(kind, header(max / 1000 + 1, 1000))).toThrow(InputError);
    }
  });
  it('the limits keep a 12 MP camera image readable (4032 x 3024, common practice, no source), and an 8 MP one by the angle series with a compensator image', () => {
    for (const kind of ['plate', 'plate-pair', 'angle-series'] as const) expect(() => checkReadingSize(kind, header(4032, 3024))).not.toThrow();
    expect(() => checkReadingSize('angle-series', header(3264, 2448), true)).not.toThrow();
    expect(() => checkReadingSize('angle-series', header(4032, 3024), true)).toThrow(InputError);
  });
  it('angle series with a compensator image: images over its lower limit are refused, naming it', async () => {
    const max = ANGLE_SERIES_WITH_PLATE_MAX_PIXELS, big = overLimit(max);
    await refusal(() => analyseAngleSeries([big, big, big, big], { plate: big }), max);
  });
});
