export type { OrientationField } from './types.ts';
export type { TensorField, StructureTensorOptions } from './structureTensor.ts';
export { structureTensor, resolveTensorOptions, tensorHaloPx, STRUCTURE_TENSOR_DEFAULTS } from './structureTensor.ts';
export type { MaskOptions } from './fieldFromTensor.ts';
export { fieldFromTensor, MASK_DEFAULTS, quantile } from './fieldFromTensor.ts';
export { orientationField } from './orientationField.ts';
export type { OrientationFieldOptions } from './orientationField.ts';
