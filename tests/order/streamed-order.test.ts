/**
 * The streamed order numbers (src/order/streamedOrder.ts: the image passes through the tensor kernel twice and no
 * field is held) against the held field's (orientationField, then orderParameters) on the same pixels: the same
 * numbers to the bit, by construction (the same kernel and the same sums in the same order), for every option
 * that changes what is summed. The held path is itself checked against closed forms and reference libraries
 * (tests/order/order-parameters.test.ts, tests/orientation/structure-tensor.reference.test.ts).
 */
import { describe, expect, it } from 'vitest';
import { orderParameters, streamedOrderParameters, type OrderOptions } from '../../src/order/index.ts';
import { orientationField, type OrientationFieldOptions } from '../../src/orientation/index.ts';
import { addNoise, grating, swingingStripes as texture } from '../support/synthetic.ts';
import type { Plane } from '../../src/common/plane.ts';
import { InputError } from '../../src/common/errors.ts';

async function both(plane: Plane, o: OrientationFieldOptions & OrderOptions = {}) {
  const field = await orientationField(plane, o);
  const held = orderParameters(field, o);
  const streamed = await streamedOrderParameters(plane, o);
  return { held, field, streamed };
}

describe('streamedOrderParameters: the held field\'s numbers to the bit', () => {
  const plane = texture(333, 251, 7);
  const cases: [string, OrientationFieldOptions & OrderOptions][] = [
    ['defaults', {}],
    ['an axis', { axisDeg: 23 }],
    ['weighting none', { weighting: 'none' }],
    ['weighting strength', { weighting: 'strength', axisDeg: -40 }],
    ['weighting strength-coherency', { weighting: 'strength-coherency' }],
    ['a block size given', { blockPx: 13 }],
    ['Sobel derivatives and a coherency minimum', { derivative: 'sobel', coherencyMin: 0.6 }],
    ['larger scales and a high strength floor', { sigmaPx: 3.5, sigmaDerivPx: 1.5, strengthFloor: 0.3 }],
  ];
  for (const [what, o] of cases) {
    it(what, async () => {
      const { held, field, streamed } = await both(plane, o);
      expect(streamed.summary).toStrictEqual(held);
      expect(streamed.field.options).toStrictEqual(field.options);
      expect(streamed.field.warnings).toStrictEqual(field.warnings);
    });
  }

  it('a region', async () => {
    const region = new Uint8Array(plane.width * plane.height);
    for (let y = 40; y < 200; y++) region.fill(1, y * plane.width + 30, y * plane.width + 290);
    const { held, streamed } = await both(plane, { region, axisDeg: 10 });
    expect(streamed.summary).toStrictEqual(held);
  });

  it('a wide image whose rows are summed in groups cut inside the blocks (more than 2^18 / width rows)', async () => {
    // 4100 px wide: 63 rows a group, cut inside blocks of 96 and more rows.
    const wide = grating(4100, 300, 30, 9);
    const { held, streamed } = await both(addNoise(wide, 0.2, 3), { blockPx: 100 });
    expect(streamed.summary).toStrictEqual(held);
  });

  it('pixels that are not finite: filled, masked with their reach, and the same warning', async () => {
    const p = { ...plane, data: plane.data.slice() };
    p.data[50 * p.width + 60] = NaN;
    p.data[180 * p.width + 200] = Infinity;
    const { held, field, streamed } = await both(p);
    expect(streamed.summary).toStrictEqual(held);
    expect(streamed.field.warnings).toStrictEqual(field.warnings);
    expect(field.warnings.some((w) => w.includes('not finite'))).toBe(true);
  });

  it('a flat image: every pixel masked, the same warnings and undetermined numbers', async () => {
    const flat = { width: 40, height: 30, data: new Float32Array(1200).fill(0.5) };
    const { held, field, streamed } = await both(flat);
    expect(held.n).toBe(0);
    expect(streamed.summary).toStrictEqual(held);
    expect(streamed.field.warnings).toStrictEqual(field.warnings);
  });

  it('small and odd sizes', async () => {
    for (const [w, h] of [[1, 1], [3, 17], [17, 3], [31, 29]]) {
      const { held, streamed } = await both(texture(w, h, w * h));
      expect(streamed.summary, `${w}x${h}`).toStrictEqual(held);
    }
  });

  it('refuses what the held path refuses, with the same message', async () => {
    const cases: (OrientationFieldOptions & OrderOptions)[] = [{ weighting: 'confidence' }, { blockPx: 0 }, { axisDeg: 1000 }, { sigmaPx: 0 }, { region: new Uint8Array(5) }];
    for (const o of cases) {
      const held = await both(plane, o).then(() => null, (e: unknown) => e);
      const streamed = await streamedOrderParameters(plane, o).then(() => null, (e: unknown) => e);
      expect(held).toBeInstanceOf(InputError);
      expect((streamed as Error).message).toBe((held as Error).message);
    }
  });
});
