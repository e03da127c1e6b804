import { InputError, AXIS_DEG_LIMIT, checkLimit, degToRad } from '../common/index.ts';
import {
  maskedWarnings, resolveMaskOptions, resolveTensorOptions, streamMaskedStrip, surveyStrip, surveyTexture,
  type MaskingSurvey, type OrientationFieldOptions, type PlaneRows, type StructureTensorOptions, type SurveyPart, type SurveyPlan,
} from '../orientation/index.ts';
import { loadTensorKernel } from '../wasm/index.ts';
import { BlockList, BlockRowSums, weightingFits, type BlockTarget, type Weighting } from './accumulate.ts';
import { concatBlocks, type BlockSums } from './blocks.ts';
import { correlationLengthOf, correlationPlan } from './correlation.ts';
import { BLOCK_PX_LIMIT, blockPxFor, checkWeighting, DEFAULT_WEIGHTING, orderSummary, type OrderOptions, type OrderSummary } from './orderParameters.ts';

/** A texture field's record without its pixels: what a result reports of the field. */
export interface FieldRecord { width: number; height: number; method: 'texture'; options: Record<string, unknown>; warnings: string[] }

/** The first pass over rows y0 <= y < y1 (surveyStrip). */
export interface SurveyJob { y0: number; y1: number; tensor: Required<StructureTensorOptions>; plan: SurveyPlan }

/**
 * The second pass over rows y0 <= y < y1, y0 a multiple of the block size B and y1 one too or the image's
 * height (sumsStrip): the survey's thresholds, the weighting, the reference axes (cos, sin of twice their
 * angles) and the region mask's rows y0 to y1 (null for none).
 */
export interface SumsJob {
  y0: number; y1: number; B: number; weighting: Weighting; axes: Array<[number, number]>;
  survey: Omit<MaskingSurvey, 'plane' | 'reach'>; region: Uint8Array | null;
}

/**
 * What a strip of the second pass found: per reference axis the sums of its blocks (`by` counted in the
 * image's rows of blocks), its groups' usable pixels and coherency sums (pairs, in order; groups adding
 * nothing left out), and how many pixels the kernel kept and the non-finite reach then masked.
 */
export interface SumsPart { lists: BlockSums[]; tallies: Float64Array; kept: number; lost: number }

/**
 * Computes strips elsewhere (another worker, holding the same image): the same parts to the bit, as every
 * worker runs the same code on the same rows. A helper that cannot answer rejects; its strip is then done here.
 */
export interface StripHelper { survey(job: SurveyJob): Promise<SurveyPart>; sums(job: SumsJob): Promise<SumsPart> }

/** How the rows are shared: the helpers, and the threads taking strips (this one and the helpers' threads). */
export interface StripSharing { helpers: StripHelper[]; threads: number }

/**
 * The second pass over one strip (SumsJob): masks each row (streamMaskedStrip) and adds it to the block sums,
 * cut into the same groups of rows as the whole image's (BlockRowSums), so the parts of any cut at block
 * rows, put together in order (mergeSums), are the whole image's sums to the bit.
 */
export async function sumsStrip(plane: PlaneRows, job: SumsJob, reach: Uint8Array | null = null): Promise<SumsPart> {
  const k = await loadTensorKernel();
  const { width } = plane, { y0, y1, B, weighting, region } = job, rows = y1 - y0;
  const layer = weighting === 'none' ? 'none' : weighting === 'coherency' ? 'coherency' : 'own';
  const sums = new BlockRowSums(k, width, rows, B, { region: region !== null, weights: layer });
  const capacity = sums.cols * Math.ceil(rows / B);
  const targets: BlockTarget[] = job.axes.map(([cr, sr]) => ({ list: new BlockList(capacity), cr, sr }));
  const tallies: number[] = [];
  let row = sums.row(0);
  const { kept, lost } = await streamMaskedStrip({ plane, reach, ...job.survey }, sums.end, (y) => (row = sums.row(y - y0)), (y, _mask, strength, confidence, cos2, sin2) => {
    row.coherency.set(confidence.subarray(0, width));
    row.c2.set(cos2.subarray(0, width));
    row.s2.set(sin2.subarray(0, width));
    if (row.region && region) row.region.set(region.subarray((y - y0) * width, (y - y0 + 1) * width));
    if (row.weights) {
      if (weighting === 'strength') row.weights.set(strength.subarray(0, width));
      else for (let x = 0; x < width; x++) row.weights[x] = confidence[x] * strength[x];
    }
    const bandDone = sums.endRow(y - y0);
    const [u, c] = sums.takeTally();
    // Adding +0 changes no sum: groups that add nothing are left out.
    if (u !== 0 || c !== 0) tallies.push(u, c);
    if (bandDone) sums.flush(targets);
  }, y0, y1);
  const lists = targets.map((t) => t.list.sums());
  for (const l of lists) for (let i = 0; i < l.by.length; i++) l.by[i] += y0 / B;
  return { lists, tallies: Float64Array.from(tallies), kept, lost };
}

/** The strips' parts, top to bottom, as one: the blocks in the same order, and the tally summed group by group as BlockRowSums sums it. */
export function mergeSums(parts: SumsPart[]): { lists: BlockSums[]; usable: number; confidenceSum: number; kept: number; lost: number } {
  let usable = 0, confidenceSum = 0, kept = 0, lost = 0;
  for (const p of parts) {
    for (let i = 0; i < p.tallies.length; i += 2) { usable += p.tallies[i]; confidenceSum += p.tallies[i + 1]; }
    kept += p.kept; lost += p.lost;
  }
  const lists = parts[0].lists.map((_l, t) => concatBlocks(parts.map((p) => p.lists[t])));
  return { lists, usable, confidenceSum, kept, lost };
}

/**
 * Rows 0 to `height` cut into strips for `threads` threads taking them in turn, as [y0, y1) pairs from the
 * top, each a whole multiple of `align` rows (the last may be shorter): each strip half of what is left
 * per thread, down to a tenth of the image per thread, so the first strips are large (few halos read twice)
 * and the last small (no thread waits long for another's last strip).
 */
export function stripRanges(height: number, threads: number, align: number): Array<[number, number]> {
  const units = Math.ceil(height / align), n = Math.max(1, threads), least = Math.ceil(units / (10 * n));
  const out: Array<[number, number]> = [];
  for (let u = 0; u < units;) {
    const take = Math.max(least, Math.ceil((units - u) / (2 * n)));
    out.push([u * align, Math.min(height, (u + take) * align)]);
    u += take;
  }
  return out;
}

const nextTurn = () => new Promise<void>((resolve) => {
  const immediate = (globalThis as { setImmediate?: (f: () => void) => void }).setImmediate;
  if (immediate) immediate(resolve);
  else setTimeout(resolve, 0);
});

/**
 * Runs jobs 0 to count-1, here (`here`) and on the helpers (`there`), each taking the next job as soon as it is
 * free; returns their answers in job order. A helper keeps two jobs in flight, so it never waits for this
 * thread (busy with a job of its own) to send the next. A job a helper holds is not done here again: on two
 * cores shared with other programs that doubled work cost more than waiting for the helper's answer. A helper
 * that fails is dropped and its job done here.
 */
export async function shareJobs<T>(count: number, here: (i: number) => Promise<T>, there: Array<(i: number) => Promise<T>>): Promise<T[]> {
  const answers = new Array<T>(count), queue = Array.from({ length: count }, (_v, i) => i);
  // A helper's second job waits behind its first: near the end that wait outlasts doing the job here, so the
  // spare slot only takes a job while at least one more is left for whoever is free first.
  const take = (spare: boolean) => (spare && queue.length < 2 ? undefined : queue.shift());
  const remote = async (help: (i: number) => Promise<T>, spare: boolean) => {
    for (let i = take(spare); i !== undefined; i = take(spare)) {
      try {
        answers[i] = await help(i);
      } catch {
        queue.push(i);
        return;
      }
    }
  };
  const helping = there.flatMap((h) => [remote(h, false), remote(h, true)]);
  const work = async () => {
    for (;;) {
      // Lets helper answers in, so their next jobs go out before this thread starts another.
      await nextTurn();
      const i = queue.shift();
      if (i === undefined) return;
      answers[i] = await here(i);
    }
  };
  await work();
  await Promise.all(helping);
  // Jobs a failing helper gave back.
  await work();
  return answers;
}

/**
 * orderParameters(orientationField(plane, options), options) without holding the field: the plane (or its rows
 * read on demand) streams
 * through the tensor kernel twice (src/orientation/streamedField.ts). The first pass keeps what the mask and the
 * block size need (the strength floor's sample, the correlation length's lines and grid); the second masks each
 * row and adds it to the block sums as it comes (BlockRowSums, cut into the same groups of rows as
 * accumulateBlocks cuts a held field). The same numbers, to the bit, as the held field's
 * (tests/order/streamed-order.test.ts), in the memory of the plane and a few rows, at the cost of a second pass
 * through the kernel. With `sharing` both passes are cut into horizontal strips (the second at rows of
 * blocks) that this thread and the helpers take in turn: the same numbers to the bit, as every strip's rows
 * are the whole image's (the tensor's halo read around them), its blocks and groups of rows are the whole
 * image's, and the parts are put together in the image's order (tests/cli/orient-threads.test.ts).
 */
export async function streamedOrderParameters(plane: PlaneRows, options: OrientationFieldOptions & OrderOptions = {}, sharing?: StripSharing): Promise<{ summary: OrderSummary; field: FieldRecord }> {
  const { width, height } = plane;
  // Checked in the order orientationField, then orderParameters, check them.
  const tensor = resolveTensorOptions(options);
  resolveMaskOptions(options);
  const weighting = checkWeighting(options.weighting ?? DEFAULT_WEIGHTING.texture);
  weightingFits(weighting, true);
  if (options.blockPx !== undefined) checkLimit(BLOCK_PX_LIMIT, options.blockPx);
  if (options.axisDeg !== undefined) checkLimit(AXIS_DEG_LIMIT, options.axisDeg);
  const region = options.region ?? null;
  if (region && region.length !== width * height) throw new InputError('region mask size does not match the field');

  const plan = correlationPlan(width, height);
  const helpers = sharing?.helpers ?? [];
  const share = helpers.length > 0 ? {
    ranges: stripRanges(height, sharing!.threads, 1),
    run: (ranges: Array<[number, number]>) => shareJobs(ranges.length, (i) => surveyStrip(plane, tensor, plan, ...ranges[i]),
      helpers.map((h) => (i: number) => h.survey({ y0: ranges[i][0], y1: ranges[i][1], tensor, plan }))),
  } : undefined;
  const survey = await surveyTexture(plane, options, plan, share);
  const blockPx = checkLimit(BLOCK_PX_LIMIT, options.blockPx ?? blockPxFor(width, height, correlationLengthOf(width, height, survey)));

  const B = Math.max(1, Math.round(blockPx));
  const axes: Array<[number, number]> = [[Math.cos(0), Math.sin(0)]];
  if (options.axisDeg !== undefined) {
    const refRad = degToRad(options.axisDeg);
    axes.push([Math.cos(2 * refRad), Math.sin(2 * refRad)]);
  }
  const { strengthAbove, coherencyFrom } = survey;
  // Each strip's job holds its rows of the region mask (the whole mask when there is one strip).
  const job = (y0: number, y1: number): SumsJob => ({
    y0, y1, B, weighting, axes, survey: { tensor, strengthAbove, coherencyFrom },
    region: region && (y0 === 0 && y1 === height ? region : region.slice(y0 * width, y1 * width)),
  });
  // A plane with values that are not finite was filled, and pixels near them are masked by the survey's reach:
  // only this thread holds those.
  const ranges = helpers.length > 0 && survey.plane === plane && !survey.reach ? stripRanges(height, sharing!.threads, B) : [[0, height] as [number, number]];
  const parts = ranges.length > 1
    ? await shareJobs(ranges.length, (i) => sumsStrip(survey.plane, job(...ranges[i])), helpers.map((h) => (i: number) => h.sums(job(...ranges[i]))))
    : [await sumsStrip(survey.plane, job(0, height), survey.reach)];
  const { lists: [free, ref], usable, confidenceSum, kept, lost } = mergeSums(parts);
  return {
    summary: orderSummary(free, ref ?? null, { usable, confidenceSum }, options.axisDeg, blockPx, weighting),
    field: { width, height, method: 'texture', options: survey.options, warnings: maskedWarnings(survey, width * height - kept, lost) },
  };
}
