import { InputError } from '../common/index.ts';
import { AXIS_DEG_LIMIT, checkLimit, type Limit } from '../common/index.ts';
import { degToRad, radToDeg, wrapAxialDeg } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { foldMod90 } from '../orientation/index.ts';
import { correlationLengthPx } from './correlation.ts';
import { accumulateBlocks, weightingFits, WEIGHTINGS, type Weighting } from './accumulate.ts';
import { liveBlocks, totalMoments, type BlockSums } from './blocks.ts';
import { axisOrderStat, freeOrderStat, type OrderStat } from './intervals.ts';

export type { OrderStat };

export interface OrderOptions {
  /** Weight per pixel; default: coherency for texture fields, none for optical readings (defaultWeighting). */
  weighting?: Weighting;
  /** Reference axis for S_axis in degrees (CCW on screen). Omit for the free order only. */
  axisDeg?: number;
  /** Block side in px for the intervals; default six correlation lengths of the field (defaultBlockPx). */
  blockPx?: number;
  /** Extra region mask (1 = inside); default the whole field. */
  region?: Uint8Array;
}

export interface OrderSummary {
  /** S_2D = |<exp 2i theta>|, in [0, 1]. */
  order2D: OrderStat;
  /** False when S_2D's interval reaches 0: the data do not fix a director. */
  directorDetermined: boolean;
  /** Director 1/2 arg <exp 2i theta>, degrees in (-90, 90]. */
  directorDeg: number;
  /** S_axis = <cos 2(theta - axis)> when an axis was given. */
  axisOrder: OrderStat | null;
  axisDeg: number | null;
  /** Mean coherency (confidence) over the usable pixels, unweighted. */
  coherencyMean: number;
  /** Expected S_2D of the same number of independent isotropic samples, sqrt(pi / 4 nEff) (docs/methods.md §8.4). */
  isotropicBias: number;
  n: number;
  blocks: number;
  blockPx: number;
  weighting: Weighting;
}

/** Block side in correlation lengths of the orientation signal. */
export const BLOCK_CORRELATION_LENGTHS = 1.5;

/** Range of a block side given by hand; by default it is BLOCK_CORRELATION_LENGTHS correlation lengths (defaultBlockPx). */
export const BLOCK_PX_LIMIT: Limit = { what: 'block size', min: 1, max: 4096, unit: 'px' };

/**
 * Block side for the intervals: BLOCK_CORRELATION_LENGTHS correlation lengths of the orientation signal
 * (at least 4 px, at most a sixth of the shorter side). The variance counts the products of touching
 * blocks' residuals, so blocks need only be long enough that blocks two apart are nearly independent;
 * shorter blocks give more of them, and a steadier variance (src/order/intervals.ts). The cap keeps at least
 * 6 blocks across the image: with fewer, nearly every block touches every other and the variance has only one
 * or two degrees of freedom (a 320 x 200 px image with a smooth angle profile read S_2D 0.75 with an interval
 * of 0-1 and no director at a quarter of the side, 0.49-1 with its director at a sixth). A cap of an eighth
 * made blocks shorter than the correlation on 240 x 180 px two-image renderings (core coverage 89 %).
 * tests/order/coverage.test.ts holds the resulting intervals to their 95 % rate on seeded textures.
 */
export function defaultBlockPx(f: OrientationField): number {
  return blockPxFor(f.width, f.height, correlationLengthPx(f));
}

/** defaultBlockPx of a `width` x `height` field whose correlation length is `correlationPx`. */
export function blockPxFor(width: number, height: number, correlationPx: number): number {
  const cap = Math.max(4, Math.floor(Math.min(width, height) / 6));
  return Math.min(cap, Math.max(4, Math.round(BLOCK_CORRELATION_LENGTHS * correlationPx)));
}

/**
 * Default pixel weights: coherency for texture fields (a pixel with no clear direction says little); none
 * for optical readings, whose confidence is lowest for rods along the compensator axis, exactly where
 * cos 2(theta - axis) is least sensitive to an angle error, so weighting by it would bias S downwards.
 */
export function defaultWeighting(f: Pick<OrientationField, 'method'>): Weighting {
  return f.method === 'texture' ? DEFAULT_WEIGHTING.texture : DEFAULT_WEIGHTING.optical;
}

/** The default weightings of texture fields and optical readings (defaultWeighting says why). */
export const DEFAULT_WEIGHTING = { texture: 'coherency', optical: 'none' } as const satisfies Record<string, Weighting>;

/**
 * A weighting name checked: known, and (with a field) one that field can give: coherency and texture strength
 * belong to texture fields, the reading's confidence to optical readings.
 */
export function checkWeighting(w: string, f?: Pick<OrientationField, 'method'>): Weighting {
  if (!(WEIGHTINGS as string[]).includes(w)) {
    throw new InputError(`weighting "${w}" is not known`, `Use one of ${WEIGHTINGS.join(', ')}`);
  }
  if (f) weightingFits(w as Weighting, f.method === 'texture');
  return w as Weighting;
}

/**
 * Order parameters of a whole field (or region): free 2D order and director, and axis-referenced
 * order if an axis is given (docs/methods.md §8.1-8.2).
 */
export function orderParameters(f: OrientationField, options: OrderOptions = {}): OrderSummary {
  const weighting = checkWeighting(options.weighting ?? defaultWeighting(f));
  const blockPx = checkLimit(BLOCK_PX_LIMIT, options.blockPx ?? defaultBlockPx(f));
  if (options.axisDeg !== undefined) checkLimit(AXIS_DEG_LIMIT, options.axisDeg);
  const n = f.width * f.height;
  if (options.region && options.region.length !== n) throw new InputError('region mask size does not match the field');
  const groups = { region: options.region ?? null };
  const tally = { usable: 0, confidenceSum: 0 };
  const [free] = accumulateBlocks(f, { groups, groupCount: 1, refRad: 0, blockPx, weighting, tally });
  // Mod-90 fields: S_axis under the assumption that orientations lie within 45 deg of the axis.
  const ref = options.axisDeg === undefined ? null
    : accumulateBlocks(foldMod90(f, options.axisDeg), { groups, groupCount: 1, refRad: degToRad(options.axisDeg), blockPx, weighting })[0];
  return orderSummary(free, ref, tally, options.axisDeg, blockPx, weighting);
}

/**
 * The summary from the block sums: `free` about the image axes, `ref` about the reference axis `axisDeg` (null
 * without one), and the usable pixels' tally.
 */
export function orderSummary(free: BlockSums, ref: BlockSums | null, tally: { usable: number; confidenceSum: number },
  axisDeg: number | undefined, blockPx: number, weighting: Weighting): OrderSummary {
  const m = totalMoments(free);
  const { directorDetermined, ...order2D } = freeOrderStat(free);
  const directorDeg = m.w > 0 ? wrapAxialDeg(radToDeg(0.5 * Math.atan2(m.ws, m.wc))) : NaN;
  const axisOrder: OrderStat | null = ref ? axisOrderStat(sameBlocks(ref, free)) : null;
  const blocks = liveBlocks(free);
  const nEff = Math.max(1, effectiveSamples(free));
  return {
    order2D, directorDetermined, directorDeg, axisOrder, axisDeg: axisDeg ?? null,
    coherencyMean: tally.usable > 0 ? tally.confidenceSum / tally.usable : NaN,
    isotropicBias: m.n > 0 ? Math.sqrt(Math.PI / (4 * nEff)) : NaN,
    n: m.n, blocks, blockPx, weighting,
  };
}

/** Kish effective sample size of the block weights (each block counted as one correlated unit). */
function effectiveSamples(b: BlockSums): number {
  let s = 0, s2 = 0;
  for (let i = 0; i < b.w.length; i++) { s += b.w[i]; s2 += b.w[i] * b.w[i]; }
  return s2 > 0 ? (s * s) / s2 : 0;
}

/**
 * `b` with the block grid and weights of `like` where they hold the same values (S_axis's blocks are S_2D's when the
 * reference changes no pixel's weight or mask), so that the interval's work on the blocks is done once for both.
 */
function sameBlocks(b: BlockSums, like: BlockSums): BlockSums {
  const m = b.n.length;
  if (like.n.length !== m) return b;
  for (let k = 0; k < m; k++) if (b.n[k] !== like.n[k] || b.bx[k] !== like.bx[k] || b.by[k] !== like.by[k] || b.w[k] !== like.w[k]) return b;
  return { ...b, n: like.n, bx: like.bx, by: like.by, w: like.w };
}
