/**
 * The streamed order numbers with the image cut into strips shared with helpers (streamedOrderParameters'
 * `sharing`; the command's worker threads are such helpers, tests/cli/orient-threads.test.ts) against the held
 * field's (orientationField, then orderParameters) on the same pixels: the same numbers to the bit, for odd
 * sizes, block sizes that do not divide the height, groups of rows cut inside the blocks, a region, an axis,
 * weightings with a layer of their own, any number of strips, and helpers that fail part way. The helpers here
 * run in this thread, on their own copies of the strips' rows only (each strip's rows and the tensor's halo;
 * reading any other row throws), as a worker would. The held path is itself checked against closed forms and
 * reference libraries (tests/order/order-parameters.test.ts, tests/orientation/structure-tensor.reference.test.ts).
 */
import { describe, expect, it } from 'vitest';
import { orderParameters, streamedOrderParameters, sumsStrip, type OrderOptions, type StripHelper } from '../../src/order/index.ts';
import { orientationField, surveyStrip, tensorHaloPx, type OrientationFieldOptions, type PlaneRows, type StructureTensorOptions } from '../../src/orientation/index.ts';
import { addNoise, grating, swingingStripes as texture } from '../support/synthetic.ts';
import type { Plane } from '../../src/common/plane.ts';

/** Rows y0 - halo to y1 + halo of `plane` copied, readable as rows of the whole image: any other row throws. */
function stripRows(plane: Plane, y0: number, y1: number, tensor: Required<StructureTensorOptions>): PlaneRows {
  const halo = tensorHaloPx(tensor), top = Math.max(0, y0 - halo), bottom = Math.min(plane.height, y1 + halo), w = plane.width;
  const data = plane.data.slice(top * w, bottom * w);
  return {
    width: w, height: plane.height,
    readRow(y, x, n, out) {
      if (y < top || y >= bottom) throw new Error(`row ${y} read outside the strip ${top}..${bottom}`);
      out.set(data.subarray((y - top) * w + x, (y - top) * w + x + n));
    },
  };
}

/** A helper computing strips of `plane` from copies of their rows; it fails on the jobs `failOn` names (in the order it is sent them). */
function helper(plane: Plane, failOn: (k: number) => boolean = () => false): StripHelper & { done: number } {
  let k = 0;
  const h = {
    done: 0,
    async survey(job: Parameters<StripHelper['survey']>[0]) {
      if (failOn(k++)) throw new Error('helper failed');
      h.done++;
      return surveyStrip(stripRows(plane, job.y0, job.y1, job.tensor), job.tensor, job.plan, job.y0, job.y1);
    },
    async sums(job: Parameters<StripHelper['sums']>[0]) {
      if (failOn(k++)) throw new Error('helper failed');
      h.done++;
      return sumsStrip(stripRows(plane, job.y0, job.y1, job.survey.tensor), job);
    },
  };
  return h;
}

async function heldAndShared(plane: Plane, o: OrientationFieldOptions & OrderOptions, helpers: StripHelper[], threads: number) {
  const field = await orientationField(plane, o);
  const held = orderParameters(field, o);
  const shared = await streamedOrderParameters(plane, o, { helpers, threads });
  return { held, field, shared };
}

describe('streamedOrderParameters shared in strips: the held field\'s numbers to the bit', () => {
  const plane = texture(333, 251, 11);
  const cases: [string, OrientationFieldOptions & OrderOptions, number][] = [
    ['defaults, cut for 2 threads', {}, 2],
    ['defaults, cut for 7 threads', {}, 7],
    ['an axis and weighting strength (a layer of its own), cut for 5 threads', { axisDeg: 23, weighting: 'strength' }, 5],
    ['weighting none, cut for 3 threads', { weighting: 'none' }, 3],
    ['a block size not dividing the height (13 px), cut for 8 threads', { blockPx: 13 }, 8],
    ['Sobel derivatives and a coherency minimum, cut for 4 threads', { derivative: 'sobel', coherencyMin: 0.6 }, 4],
    ['larger scales (a wider halo), cut for 6 threads', { sigmaPx: 3.5, sigmaDerivPx: 1.5, blockPx: 9 }, 6],
  ];
  for (const [what, o, threads] of cases) {
    it(what, async () => {
      const h = helper(plane);
      const { held, field, shared } = await heldAndShared(plane, o, [h], threads);
      expect(h.done).toBeGreaterThan(1);
      expect(shared.summary).toStrictEqual(held);
      expect(shared.field.options).toStrictEqual(field.options);
      expect(shared.field.warnings).toStrictEqual(field.warnings);
    });
  }

  it('a region with odd edges and an axis, two helpers', async () => {
    const region = new Uint8Array(plane.width * plane.height);
    for (let y = 37; y < 203; y++) region.fill(1, y * plane.width + 31, y * plane.width + 289);
    const hs = [helper(plane), helper(plane)];
    const o = { region, axisDeg: -12, blockPx: 11 };
    const { held, shared } = await heldAndShared(plane, o, hs, 9);
    expect(hs[0].done + hs[1].done).toBeGreaterThan(2);
    expect(shared.summary).toStrictEqual(held);
  });

  it('pixels that are not finite: filled here, the second pass not shared, the same numbers', async () => {
    const p = { ...plane, data: plane.data.slice() };
    p.data[50 * p.width + 60] = NaN;
    const { held, field, shared } = await heldAndShared(p, {}, [helper(p)], 4);
    expect(shared.summary).toStrictEqual(held);
    expect(shared.field.warnings).toStrictEqual(field.warnings);
  });

  it('helpers that fail part way: their strips are done here, the same numbers', async () => {
    const hs = [helper(plane, (k) => k === 1), helper(plane, (k) => k >= 3)];
    const { held, shared } = await heldAndShared(plane, { axisDeg: 40 }, hs, 8);
    expect(shared.summary).toStrictEqual(held);
  });

  it('a wide image whose groups of rows are cut inside the blocks (more than 2^18 / width rows a block)', async () => {
    // 2^18 / 2101 = 124 rows a group: blocks of 130 rows are summed in two groups, and the coherency tally
    // gains one term per group.
    const wide = addNoise(grating(2101, 397, 25, 7), 0.2, 3);
    const h = helper(wide);
    const { held, shared } = await heldAndShared(wide, { blockPx: 130 }, [h], 4);
    expect(h.done).toBeGreaterThan(1);
    expect(shared.summary).toStrictEqual(held);
  });
});
