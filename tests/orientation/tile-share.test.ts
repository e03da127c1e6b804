import { describe, expect, it } from 'vitest';
import { orientationField, structureTensor, tilePixels, type TileHelper, type TileJob } from '../../src/orientation/index.ts';
import { analyseOrientation } from '../../src/analyses/index.ts';
import { makeImage } from '../../src/image/types.ts';
import { addNoise, rings } from '../support/synthetic.ts';

// Sharing tiles between workers must not change a single bit of the field: the app's numbers are
// promised equal to the command line's, which computes every tile itself and cuts the image in other
// tiles (or none). Helpers are only used from SHARE_MIN_PIXELS on, so the test images are that large.

/** A helper as a worker is: the job and the answer pass through structured cloning (what postMessage does). */
function inProcessHelper(calls: { n: number }, failAfter = Infinity): TileHelper {
  return async (job: TileJob) => {
    if (calls.n >= failAfter) throw new Error('the helper stopped');
    calls.n++;
    return structuredClone(await tilePixels(structuredClone(job)));
  };
}

const bytes = (a: ArrayBufferView) => Buffer.from(a.buffer, a.byteOffset, a.byteLength);

function expectSameField(a: Awaited<ReturnType<typeof orientationField>>, b: Awaited<ReturnType<typeof orientationField>>) {
  for (const k of ['angleRad', 'confidence', 'strength', 'cos2', 'sin2', 'mask'] as const) {
    expect(bytes(a[k]!).equals(bytes(b[k]!)), `${k} differs`).toBe(true);
  }
  expect(a.warnings).toEqual(b.warnings);
  expect(a.options).toEqual(b.options);
}

describe('orientationField with helpers sharing the tiles', () => {
  const plane = addNoise(rings(1210, 870, 600, 430, 9), 0.2, 7);
  const options = { sigmaPx: 2 };

  it('gives the same field, bit for bit, as computing every tile here, and the helpers did take tiles', async () => {
    const alone = await orientationField(plane, options);
    const calls = { n: 0 };
    const shared = await orientationField(plane, options, [inProcessHelper(calls), inProcessHelper(calls)]);
    expect(calls.n).toBeGreaterThan(1);
    expectSameField(shared, alone);
  });

  it('finishes the tiles of a helper that fails part way, with the same field', async () => {
    const alone = await orientationField(plane, options);
    const calls = { n: 0 };
    const shared = await orientationField(plane, options, [inProcessHelper(calls, 1)]);
    expect(calls.n).toBe(1);
    expectSameField(shared, alone);
  });

  it('a helper that never answers does not hold the field back: the strips it holds are done here, the same bits', async () => {
    const alone = await orientationField(plane, options);
    const silent: TileHelper = () => new Promise(() => {});
    expectSameField(await orientationField(plane, options, [silent]), alone);
  });

  it('an answer that comes after the field is finished is not written into it', async () => {
    const alone = await orientationField(plane, options);
    let late: () => void = () => {};
    const arrived = new Promise<void>((resolve) => { late = resolve; });
    // Right size, wrong pixels (all zero), answered only once the field is finished.
    const slow: TileHelper = async (job) => {
      const px = await tilePixels(job);
      await new Promise((resolve) => setTimeout(resolve, 300));
      late();
      return { ...px, strength: new Float32Array(px.strength.length), confidence: new Float32Array(px.strength.length), cos2: new Float32Array(px.strength.length), sin2: new Float32Array(px.strength.length) };
    };
    const shared = await orientationField(plane, options, [slow]);
    const kept = { angleRad: shared.angleRad.slice(), confidence: shared.confidence.slice(), strength: shared.strength!.slice(), cos2: shared.cos2!.slice(), sin2: shared.sin2!.slice(), mask: shared.mask.slice() };
    await arrived;
    await new Promise((resolve) => setTimeout(resolve, 10));
    expectSameField(shared, alone);
    expectSameField({ ...shared, ...kept }, alone);
  });

  it('a helper answering with a tile of the wrong size is not trusted', async () => {
    const alone = await orientationField(plane, options);
    const wrong: TileHelper = async (job) => { const px = await tilePixels(job); return { ...px, width: px.width - 1 }; };
    expectSameField(await orientationField(plane, options, [wrong]), alone);
  });

  it('a tensor cut in tiles equals the whole-image tensor bit for bit, which is what lets helpers cut it their own way', async () => {
    const whole = await structureTensor(plane, { sigmaPx: 2 });
    for (const tilePixels of [150 * 150, 333 * 411]) {
      const tiled = await structureTensor(plane, { sigmaPx: 2, tilePixels });
      for (const k of ['jxx', 'jxy', 'jyy'] as const) expect(bytes(tiled[k]).equals(bytes(whole[k])), `${k} at ${tilePixels}`).toBe(true);
    }
  });

  it('a small image is done here, without asking the helpers', async () => {
    const calls = { n: 0 };
    const small = addNoise(rings(160, 150, 80, 75, 7), 0.1, 1);
    expectSameField(await orientationField(small, { sigmaPx: 2 }, [inProcessHelper(calls)]), await orientationField(small, { sigmaPx: 2 }));
    expect(calls.n).toBe(0);
  });

  it('analyseOrientation gives the same result document with helpers as the command line without', async () => {
    const img = makeImage({ width: plane.width, height: plane.height, channels: 1, planes: [plane.data], bitDepth: 32, encoding: 'linear', source: { name: 'rings.tif' } });
    const calls = { n: 0 };
    const a = await analyseOrientation(img, { ...options, weighting: 'coherency', axisDeg: 30 });
    const b = await analyseOrientation(img, { ...options, weighting: 'coherency', axisDeg: 30 }, [inProcessHelper(calls)]);
    expect(calls.n).toBeGreaterThan(0);
    expect(b.result).toEqual(a.result);
  });
});
