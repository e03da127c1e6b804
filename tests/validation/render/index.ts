export { Rng, streamSeed } from './rng.ts';
export { correlatedField, gaussBlur, gaussKernel } from './filters.ts';
export { lineIntegralConvolution } from './texture.ts';
export * from './geometry.ts';
export * from './spectral.ts';
export * from './scene.ts';
export * from './truth.ts';
export { writeRenderingPngs } from './png.ts';
