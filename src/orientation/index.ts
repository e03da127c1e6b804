export type { OrientationField } from './types.ts';
export type { TensorField, StructureTensorOptions } from './structureTensor.ts';
export type { TileRect } from './structureTensor.ts';
export { structureTensor, forEachTensorTile, resolveTensorOptions, tensorHaloPx, STRUCTURE_TENSOR_DEFAULTS } from './structureTensor.ts';
export type { MaskOptions } from './fieldFromTensor.ts';
export { resolveMaskOptions, MASK_DEFAULTS } from './fieldFromTensor.ts';
export { orientationField } from './orientationField.ts';
export type { OrientationFieldOptions } from './orientationField.ts';
export { foldMod90, mod90Axis } from './fold.ts';
