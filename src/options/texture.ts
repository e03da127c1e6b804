/**
 * `retarda orient` (and the texture part of `retarda profile`): the structure tensor's options and the whole-field
 * order options, with their words.
 */
import { AXIS_DEG_LIMIT, rectText } from '../common/index.ts';
import { MASK_LIMITS, TENSOR_LIMITS, type OrientationFieldOptions } from '../orientation/index.ts';
import { BLOCK_CORRELATION_LENGTHS, BLOCK_PX_LIMIT, DEFAULT_WEIGHTING, TEXTURE_WEIGHTINGS } from '../order/index.ts';
import type { OrientOptions } from '../analyses/index.ts';
import { limitArg, valueArg, type OptionSpec } from './spec.ts';

/** The texture field's default weighting (defaultWeighting in src/order). */
export const TEXTURE_DEFAULT_WEIGHTING = DEFAULT_WEIGHTING.texture;

/** Options of the structure-tensor field, shared by orient and profile. */
export const TEXTURE_OPTIONS: OptionSpec[] = [
  { name: 'sigma', kind: 'number', help: 'texture scale: integration scale of the structure tensor, px', limit: TENSOR_LIMITS.sigmaPx },
  { name: 'sigma-deriv', kind: 'number', help: 'derivative scale, px', limit: TENSOR_LIMITS.sigmaDerivPx },
  { name: 'derivative', kind: 'string', help: 'gaussian or sobel', defaultText: 'gaussian' },
  { name: 'strength-floor', formerName: 'energy-floor', kind: 'number', help: 'mask pixels whose texture strength is below this fraction of its 99th percentile', limit: MASK_LIMITS.strengthFloor },
  { name: 'coherency-min', kind: 'number', help: 'mask pixels below this coherency', limit: MASK_LIMITS.coherencyMin },
  { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, coherency, strength, mask)' },
];

/** The block side of the intervals, shared by every command that gives order parameters. */
export const BLOCK_OPTION: OptionSpec = {
  name: 'block-px', kind: 'number', help: 'block side for the 95 % intervals, px', limit: BLOCK_PX_LIMIT,
  defaultText: `${BLOCK_CORRELATION_LENGTHS} correlation lengths of the orientation signal`,
};

/** Options of `retarda orient`. */
export const ORIENT_OPTIONS: OptionSpec[] = [
  ...TEXTURE_OPTIONS,
  { name: 'axis-deg', kind: 'number', help: 'also give S_axis against this axis, degrees CCW from +x', limit: AXIS_DEG_LIMIT },
  { name: 'region', kind: 'string', help: 'only pixels in this rectangle "x,y,w,h" count' },
  { name: 'weighting', kind: 'string', help: `pixel weights: ${TEXTURE_WEIGHTINGS.join(', ')} (strength: texture strength)`, defaultText: TEXTURE_DEFAULT_WEIGHTING },
  BLOCK_OPTION,
];

/** The texture field's options as words (defaults left out: the analysis applies the same ones). */
export function textureArgs(o: OrientationFieldOptions): string[] {
  return [
    ...limitArg('sigma', TENSOR_LIMITS.sigmaPx, o.sigmaPx), ...limitArg('sigma-deriv', TENSOR_LIMITS.sigmaDerivPx, o.sigmaDerivPx),
    ...valueArg('derivative', o.derivative, 'gaussian'), ...limitArg('strength-floor', MASK_LIMITS.strengthFloor, o.strengthFloor),
    ...limitArg('coherency-min', MASK_LIMITS.coherencyMin, o.coherencyMin),
  ];
}

/** `retarda orient`'s options as words, without the image names. */
export function orientArgs(o: OrientOptions): string[] {
  return [
    ...textureArgs(o), ...valueArg('axis-deg', o.axisDeg), ...(o.region ? ['--region', rectText(o.region)] : []),
    ...valueArg('weighting', o.weighting, TEXTURE_DEFAULT_WEIGHTING), ...valueArg('block-px', o.blockPx),
  ];
}
