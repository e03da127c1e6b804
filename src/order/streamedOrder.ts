import { InputError, AXIS_DEG_LIMIT, checkLimit, degToRad } from '../common/index.ts';
import { resolveMaskOptions, resolveTensorOptions, streamMaskedRows, surveyTexture, type OrientationFieldOptions, type PlaneRows } from '../orientation/index.ts';
import { loadTensorKernel } from '../wasm/index.ts';
import { BlockList, BlockRowSums, weightingFits, type BlockTarget } from './accumulate.ts';
import { correlationLengthOf, correlationPlan } from './correlation.ts';
import { BLOCK_PX_LIMIT, blockPxFor, checkWeighting, DEFAULT_WEIGHTING, orderSummary, type OrderOptions, type OrderSummary } from './orderParameters.ts';

/** A texture field's record without its pixels: what a result reports of the field. */
export interface FieldRecord { width: number; height: number; method: 'texture'; options: Record<string, unknown>; warnings: string[] }

/**
 * orderParameters(orientationField(plane, options), options) without holding the field: the plane (or its rows
 * read on demand) streams
 * through the tensor kernel twice (src/orientation/streamedField.ts). The first pass keeps what the mask and the
 * block size need (the strength floor's sample, the correlation length's lines and grid); the second masks each
 * row and adds it to the block sums as it comes (BlockRowSums, cut into the same groups of rows as
 * accumulateBlocks cuts a held field). The same numbers, to the bit, as the held field's
 * (tests/order/streamed-order.test.ts), in the memory of the plane and a few rows, at the cost of a second pass
 * through the kernel.
 */
export async function streamedOrderParameters(plane: PlaneRows, options: OrientationFieldOptions & OrderOptions = {}): Promise<{ summary: OrderSummary; field: FieldRecord }> {
  const { width, height } = plane;
  // Checked in the order orientationField, then orderParameters, check them.
  resolveTensorOptions(options);
  resolveMaskOptions(options);
  const weighting = checkWeighting(options.weighting ?? DEFAULT_WEIGHTING.texture);
  weightingFits(weighting, true);
  if (options.blockPx !== undefined) checkLimit(BLOCK_PX_LIMIT, options.blockPx);
  if (options.axisDeg !== undefined) checkLimit(AXIS_DEG_LIMIT, options.axisDeg);
  const region = options.region ?? null;
  if (region && region.length !== width * height) throw new InputError('region mask size does not match the field');

  const plan = correlationPlan(width, height);
  const survey = await surveyTexture(plane, options, plan);
  const blockPx = checkLimit(BLOCK_PX_LIMIT, options.blockPx ?? blockPxFor(width, height, correlationLengthOf(width, height, survey)));

  const k = await loadTensorKernel();
  const B = Math.max(1, Math.round(blockPx));
  const layer = weighting === 'none' ? 'none' : weighting === 'coherency' ? 'coherency' : 'own';
  const sums = new BlockRowSums(k, width, height, B, { region: region !== null, weights: layer });
  const capacity = sums.cols * Math.ceil(height / B);
  const targets: BlockTarget[] = [{ list: new BlockList(capacity), cr: Math.cos(0), sr: Math.sin(0) }];
  if (options.axisDeg !== undefined) {
    const refRad = degToRad(options.axisDeg);
    targets.push({ list: new BlockList(capacity), cr: Math.cos(2 * refRad), sr: Math.sin(2 * refRad) });
  }
  let row = sums.row(0);
  const warnings = await streamMaskedRows(survey, sums.end, (y) => (row = sums.row(y)), (y, _mask, strength, confidence, cos2, sin2) => {
    row.coherency.set(confidence.subarray(0, width));
    row.c2.set(cos2.subarray(0, width));
    row.s2.set(sin2.subarray(0, width));
    if (row.region && region) row.region.set(region.subarray(y * width, (y + 1) * width));
    if (row.weights) {
      if (weighting === 'strength') row.weights.set(strength.subarray(0, width));
      else for (let x = 0; x < width; x++) row.weights[x] = confidence[x] * strength[x];
    }
    if (sums.endRow(y)) sums.flush(targets);
  });
  const [usable, confidenceSum] = sums.tally();
  const [free, ref] = targets.map((t) => t.list.sums());
  return {
    summary: orderSummary(free, ref ?? null, { usable, confidenceSum }, options.axisDeg, blockPx, weighting),
    field: { width, height, method: 'texture', options: survey.options, warnings },
  };
}
