export type { Weighting } from './accumulate.ts';
export { accumulateBlocks, WEIGHTINGS, TEXTURE_WEIGHTINGS, OPTICAL_WEIGHTINGS, formerWeighting } from './accumulate.ts';
export type { BlockSums, Moments } from './blocks.ts';
export { axisOrderOf, freeOrderOf, totalMoments, liveBlocks } from './blocks.ts';
export { axisOrderStat, freeOrderStat, ratioStat, fiellerInterval, fQuantile2, INTERVAL_LEVEL } from './intervals.ts';
export type { OrderStat, OrderOptions, OrderSummary } from './orderParameters.ts';
export { orderParameters, defaultBlockPx, defaultWeighting, DEFAULT_WEIGHTING, checkWeighting, BLOCK_CORRELATION_LENGTHS, BLOCK_PX_LIMIT } from './orderParameters.ts';
export { seededRandom, normalRandom } from './random.ts';
export { correlationLengthPx } from './correlation.ts';
