import { checkNumber, InputError } from '../common/index.ts';
import { srgbDecode, type Vec3 } from './colorimetry.ts';

/**
 * How the camera's linear RGB relates to the model's white-balanced linear sRGB:
 * camera = exposure * gains * model (per channel), with the green gain fixed at 1.
 */
export interface CameraCalibration {
  gains: Vec3;
  exposure: number;
}

export const NEUTRAL_CAMERA: CameraCalibration = { gains: [1, 1, 1], exposure: 1 };

/**
 * White reference from an RGB triple measured in the user's own image (a sample-free region with the
 * polarisers parallel, or the open beam). `encoding` says whether the triple is as stored ('srgb', decoded
 * here) or already linear. The reference becomes the model's open beam: gains = white / white_G and
 * exposure = white_G.
 */
export function whiteReference(rgb: Vec3, encoding: 'srgb' | 'linear' = 'srgb'): CameraCalibration {
  rgb.forEach((v, i) => checkNumber(`white reference ${'RGB'[i]}`, v, 0, 1e6));
  const lin = encoding === 'srgb' ? (rgb.map(srgbDecode) as Vec3) : rgb;
  if (lin.some((v) => v <= 1e-6)) {
    throw new InputError('the white reference has a channel at zero', 'Measure the white reference on a bright, unsaturated sample-free area');
  }
  return { gains: [lin[0] / lin[1], 1, lin[2] / lin[1]], exposure: lin[1] };
}

/** Camera linear RGB -> model linear sRGB (divide out exposure and gains). */
export function cameraToModel(cal: CameraCalibration, rgb: Vec3): Vec3 {
  return [rgb[0] / (cal.exposure * cal.gains[0]), rgb[1] / (cal.exposure * cal.gains[1]), rgb[2] / (cal.exposure * cal.gains[2])];
}

/** Model linear sRGB -> camera linear RGB. */
export function modelToCamera(cal: CameraCalibration, rgb: Vec3): Vec3 {
  return [rgb[0] * cal.exposure * cal.gains[0], rgb[1] * cal.exposure * cal.gains[1], rgb[2] * cal.exposure * cal.gains[2]];
}
