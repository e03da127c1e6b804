import { InputError, checkLimit, rectMask, AXIS_DEG_LIMIT, type Limit } from '../common/index.ts';
import { toGrey, type Image } from '../image/index.ts';
import { orientationField, recycleTextureField } from '../orientation/index.ts';
import { orderParameters } from '../order/index.ts';
import { fitBestRelaxation, MIN_POINTS, type RelaxationFit, type RelaxationModel } from '../series/index.ts';
import type { OrientOptions } from './orient.ts';
import { SCHEMA_VERSION, type ResultHead } from './schema.ts';

/** One frame of a series: its image and when it was taken, seconds from the moment the flow stopped (or any zero). */
export interface SeriesFrame { image: Image; tSeconds: number }

export interface SeriesOptions extends OrientOptions {
  /** Relaxation model; 'auto' takes the better by AIC. */
  model?: RelaxationModel | 'auto';
}

export const SERIES_MODELS = ['auto', 'exponential', 'stretched'] as const;
/** Frame times, s. */
export const FRAME_TIME_LIMIT: Limit = { what: 'frame time', min: -1e9, max: 1e9, unit: 's' };

export interface SeriesPoint { source: string; tSeconds: number; order: number; ciLow: number; ciHigh: number; n: number }

export interface SeriesResult extends ResultHead {
  analysis: 'series';
  /** The axis every frame's S_axis is taken against, deg, and where it came from. */
  axisDeg: number;
  axisFrom: 'given' | 'first frame';
  points: SeriesPoint[];
  /** The relaxation fit with 95 % intervals; null when the points cannot support one (notDetermined.fit says why). */
  fit: (Omit<RelaxationFit, 'notDetermined'>) | null;
  options: Record<string, unknown>;
}

/**
 * Order over time (docs/methods.md §17): each frame's texture field (the structure tensor, as `orient`) and its
 * S_axis with its 95 % interval against one axis for the whole series (the given flow direction, else the first
 * frame's director), then a relaxation fit of S_axis against time, weighted by each point's standard error.
 * S_axis, not S_2D, is followed: S_2D cannot go below its isotropic bias, so it would not relax to 0.
 */
export async function analyseSeries(frames: Iterable<SeriesFrame> | AsyncIterable<SeriesFrame>, o: SeriesOptions = {}): Promise<SeriesResult> {
  if (o.axisDeg !== undefined) checkLimit(AXIS_DEG_LIMIT, o.axisDeg);
  const model = o.model ?? 'auto';
  if (!SERIES_MODELS.includes(model)) throw new InputError(`unknown relaxation model "${model}"`, `Use one of ${SERIES_MODELS.join(', ')}`);
  const warnings: string[] = [];
  let axisDeg = o.axisDeg;
  const points: SeriesPoint[] = [];
  const ses: number[] = [];
  // The first frame's size and pixel size head the result; its image is not kept.
  let head: Pick<Image, 'width' | 'height' | 'pixelSizeUmPerPx'> | null = null, k = 0;
  // Frames are read one at a time (a lazy iterable keeps one image in memory).
  for await (const frame of frames) {
    checkLimit(FRAME_TIME_LIMIT, frame.tSeconds);
    const img = frame.image;
    head ??= { width: img.width, height: img.height, pixelSizeUmPerPx: img.pixelSizeUmPerPx };
    k++;
    const field = await orientationField(toGrey(img), o);
    const region = o.region ? rectMask(o.region, img.width, img.height) : undefined;
    if (axisDeg === undefined) {
      const first = orderParameters(field, { weighting: o.weighting, blockPx: o.blockPx, region });
      if (!first.directorDetermined) {
        throw new InputError(`the first frame (${img.source.name}) shows no clear director to follow the order along`, 'Give the flow direction (--axis-deg)');
      }
      axisDeg = first.directorDeg;
    }
    const s = orderParameters(field, { weighting: o.weighting, blockPx: o.blockPx, axisDeg, region });
    const a = s.axisOrder!;
    if (!(a.se > 0)) warnings.push(`frame ${k} (${img.source.name}): too few usable blocks for an interval, left out of the fit`);
    points.push({ source: img.source.name, tSeconds: frame.tSeconds, order: a.order, ciLow: a.ciLow, ciHigh: a.ciHigh, n: s.n });
    ses.push(a.se);
    recycleTextureField(field);
  }
  if (!head) throw new InputError('no frames given', 'Name the frames, in order, with their times');
  const usable = points.map((p, i) => ({ tSeconds: p.tSeconds, order: p.order, se: ses[i] })).filter((p) => p.se > 0 && Number.isFinite(p.order));
  const notDetermined: Record<string, string> = {};
  let fit: RelaxationFit | null = null;
  const need = model === 'stretched' ? MIN_POINTS.stretched : MIN_POINTS.exponential;
  if (usable.length < need) {
    notDetermined.fit = `a relaxation fit needs at least ${need} frames with an interval, ${usable.length} ${usable.length === 1 ? 'has' : 'have'} one; add frames`;
  } else {
    fit = fitBestRelaxation(usable, model);
    for (const [key, why] of Object.entries(fit.notDetermined ?? {})) notDetermined[key] = why;
  }
  const first = head;
  const { notDetermined: _, ...fitValues } = fit ?? { notDetermined: undefined };
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'series', source: points.map((p) => p.source).join(', '),
    width: first.width, height: first.height, pixelSizeUmPerPx: first.pixelSizeUmPerPx ?? null,
    axisDeg: axisDeg!, axisFrom: o.axisDeg === undefined ? 'first frame' : 'given', points,
    fit: fit ? (fitValues as Omit<RelaxationFit, 'notDetermined'>) : null,
    options: { model, sigmaPx: o.sigmaPx ?? null, weighting: o.weighting ?? null, region: o.region ?? null, blockPx: o.blockPx ?? null },
    warnings,
    ...(Object.keys(notDetermined).length ? { notDetermined } : {}),
  };
}
