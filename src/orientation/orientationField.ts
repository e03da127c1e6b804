import type { Plane } from '../common/index.ts';
import { resolveTensorOptions, tensorHaloPx, type StructureTensorOptions } from './structureTensor.ts';
import { sharesStrips, writeTexturePixels, type TileHelper } from './tileShare.ts';
import { dilate, fillNonFinite, nonFiniteWarning } from './nonFinite.ts';
import { emptyTextureField, finishTextureField, resolveMaskOptions, type MaskOptions } from './fieldFromTensor.ts';
import type { OrientationField } from './types.ts';

export type OrientationFieldOptions = StructureTensorOptions & MaskOptions;

/**
 * Texture orientation field of a grey plane: structure tensor, then angle, coherency, strength and mask.
 * Tiles are turned into field pixels as they come, so no full-size tensor is ever held. `helpers`
 * (other workers) may compute some of the tiles; the field is the same with or without them.
 */
export async function orientationField(input: Plane, options: OrientationFieldOptions = {}, helpers: readonly TileHelper[] = []): Promise<OrientationField> {
  const t = resolveTensorOptions(options);
  resolveMaskOptions(options);
  const f = emptyTextureField(input.width, input.height);
  // Alone, the kernel finds any value that is not finite as it reads the rows (and the largest |value|); only
  // then are they filled and the field made again. Shared, the plane is checked first.
  let filled = sharesStrips(input, helpers) ? fillNonFinite(input) : null;
  let largest = await writeTexturePixels(filled?.plane ?? input, t, f, helpers);
  if (!filled && !(largest! < Infinity)) {
    filled = fillNonFinite(input);
    await writeTexturePixels(filled.plane, t, f);
  }
  if (filled) largest = filled.largest;
  const { bad, count } = filled ?? { bad: null, count: 0 };
  const sigmaDerivPx = t.derivative === 'sobel' ? null : t.sigmaDerivPx;
  finishTextureField(f, options, { sigmaPx: t.sigmaPx, sigmaDerivPx, derivative: t.derivative }, largest!);
  if (bad) {
    // The filled pixels and everything the filters carried them to are not measurements.
    const reach = dilate(bad, f.width, f.height, tensorHaloPx(t));
    let lost = 0;
    for (let i = 0; i < reach.length; i++) if (reach[i] && f.mask[i]) { f.mask[i] = 0; lost++; }
    f.warnings.push(nonFiniteWarning(count, lost));
  }
  return f;
}
