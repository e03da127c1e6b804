export type { Weighting } from './accumulate.ts';
export { accumulateBlocks, WEIGHTINGS } from './accumulate.ts';
export type { BlockSums, Moments, BootstrapOptions } from './blocks.ts';
export { axisOrderOf, freeOrderOf, totalMoments, bootstrapReplicates, percentileInterval, liveBlocks } from './blocks.ts';
export type { OrderStat, OrderOptions, OrderSummary } from './orderParameters.ts';
export { orderParameters, statFromBlocks, defaultBlockPx, defaultWeighting, checkWeighting } from './orderParameters.ts';
export { seededRandom, normalRandom } from './random.ts';
export { correlationLengthPx } from './correlation.ts';
