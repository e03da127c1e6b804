import type { Plane } from '../common/plane.ts';
import { structureTensor, resolveTensorOptions, type StructureTensorOptions } from './structureTensor.ts';
import { fieldFromTensor, type MaskOptions } from './fieldFromTensor.ts';
import type { OrientationField } from './types.ts';

export type OrientationFieldOptions = StructureTensorOptions & MaskOptions;

/** Texture orientation field of a grey plane: structure tensor, then angle, coherency, energy and mask. */
export async function orientationField(plane: Plane, options: OrientationFieldOptions = {}): Promise<OrientationField> {
  const t = resolveTensorOptions(options);
  const tensor = await structureTensor(plane, t);
  let scale = 0;
  for (const v of plane.data) if (Math.abs(v) > scale) scale = Math.abs(v);
  return fieldFromTensor(tensor, options, { sigmaPx: t.sigmaPx, sigmaDerivPx: t.sigmaDerivPx, derivative: t.derivative }, scale);
}
