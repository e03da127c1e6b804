import type { Plane } from '../common/plane.ts';
import { forEachTensorTile, resolveTensorOptions, type StructureTensorOptions } from './structureTensor.ts';
import { emptyTextureField, finishTextureField, resolveMaskOptions, writeTensorPixels, type MaskOptions } from './fieldFromTensor.ts';
import type { OrientationField } from './types.ts';

export type OrientationFieldOptions = StructureTensorOptions & MaskOptions;

/**
 * Texture orientation field of a grey plane: structure tensor, then angle, coherency, energy and mask.
 * Tiles are turned into field pixels as they come, so no full-size tensor is ever held.
 */
export async function orientationField(plane: Plane, options: OrientationFieldOptions = {}): Promise<OrientationField> {
  const t = resolveTensorOptions(options);
  resolveMaskOptions(options);
  const f = emptyTextureField(plane.width, plane.height);
  await forEachTensorTile(plane, t, (tensor, inner, origin) => writeTensorPixels(f, tensor, inner, origin));
  let scale = 0;
  const d = plane.data;
  for (let i = 0; i < d.length; i++) { const a = Math.abs(d[i]); if (a > scale) scale = a; }
  return finishTextureField(f, options, { sigmaPx: t.sigmaPx, sigmaDerivPx: t.sigmaDerivPx, derivative: t.derivative }, scale);
}
